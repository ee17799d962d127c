/**
 * Geodesic length of a track on the WGS84 ellipsoid (geographiclib; Karney, "Algorithms for
 * geodesics", J. Geodesy 87:43–55, 2013).
 */
import geodesicPkg from 'geographiclib-geodesic';

const { Geodesic } = geodesicPkg as unknown as { Geodesic: { WGS84: { Inverse(lat1: number, lon1: number, lat2: number, lon2: number, mask?: number): { s12?: number } } ; DISTANCE: number } };
const geod = Geodesic.WGS84;

/** Distance (m) along the geodesic between two points. */
export function geodesicDistanceM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  return geod.Inverse(lat1, lon1, lat2, lon2, Geodesic.DISTANCE).s12 ?? 0;
}

/** Sum of geodesic distances between consecutive points (indices from..to−1). */
export function geodesicLengthM(latDeg: ArrayLike<number>, lonDeg: ArrayLike<number>, from = 0, to = latDeg.length): number {
  let s = 0;
  for (let i = from + 1; i < to; i++) s += geodesicDistanceM(latDeg[i - 1]!, lonDeg[i - 1]!, latDeg[i]!, lonDeg[i]!);
  return s;
}
