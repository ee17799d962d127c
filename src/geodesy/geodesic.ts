/**
 * Geodesic length of a track on the WGS84 ellipsoid (geographiclib; Karney, "Algorithms for
 * geodesics", J. Geodesy 87:43–55, 2013). Consecutive epochs of a track are metres apart; such short
 * steps use Gauss's mid-latitude formula instead of a geographiclib call per step (a fifth of a
 * second per 200k steps): s² = (M Δφ)² + (N cos φₘ Δλ)² with the meridian and prime-vertical radii
 * M = a(1 − e²)/W³, N = a/W, W = √(1 − e² sin² φₘ) at the mean latitude φₘ; its neglected terms are
 * of third order in Δφ, Δλ (Bomford, "Geodesy", 4th ed. 1980, §2.14; Rapp, "Geometric Geodesy",
 * Part I, 1991, §6.2). Measured against geographiclib over seeded lines at latitudes up to 85°:
 * within 3e-9 m up to 10 m (the size of geographiclib's own rounding on metre-long lines) and 2e-8 m
 * up to 50 m (test/geodesy/geodesic.test.ts). Longer steps, steps near a pole or across the antimeridian go to geographiclib.
 */
import geodesicPkg from 'geographiclib-geodesic';
import { DEG, WGS84_A_M, WGS84_E2 } from './wgs84.js';

const { Geodesic } = geodesicPkg as unknown as { Geodesic: { WGS84: { Inverse(lat1: number, lon1: number, lat2: number, lon2: number, mask?: number): { s12?: number } } ; DISTANCE: number } };
const geod = Geodesic.WGS84;

/** Distance (m) along the geodesic between two points. */
export function geodesicDistanceM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  return geod.Inverse(lat1, lon1, lat2, lon2, Geodesic.DISTANCE).s12 ?? 0;
}

/** Longest step (m) and largest |Δλ| (degrees) and |φ| (degrees) of the mid-latitude formula. */
export const SHORT_STEP_MAX_M = 50;
const SHORT_STEP_MAX_DLON_DEG = 0.01;
const SHORT_STEP_MAX_LAT_DEG = 89;

/**
 * Distance (m) of a short step by Gauss's mid-latitude formula (see the file header), or NaN when the
 * step is not short (longer than SHORT_STEP_MAX_M, near a pole, across the antimeridian, non-finite).
 */
export function shortStepM(lat1: number, lon1: number, lat2: number, lon2: number): number {
  const dLonDeg = lon2 - lon1;
  if (!(Math.abs(dLonDeg) < SHORT_STEP_MAX_DLON_DEG && Math.abs(lat1) < SHORT_STEP_MAX_LAT_DEG && Math.abs(lat2) < SHORT_STEP_MAX_LAT_DEG)) return NaN;
  const phiM = 0.5 * (lat1 + lat2) * DEG;
  const sinM = Math.sin(phiM);
  // W² = 1 − e² sin² φₘ; N = a/W; M = a(1 − e²)/W³
  const w2 = 1 - WGS84_E2 * sinM * sinM;
  const w = Math.sqrt(w2);
  const N = WGS84_A_M / w;
  const M = (WGS84_A_M * (1 - WGS84_E2)) / (w2 * w);
  // s² = (M Δφ)² + (N cos φₘ Δλ)²
  const dn = M * (lat2 - lat1) * DEG;
  const de = N * Math.cos(phiM) * dLonDeg * DEG;
  const s = Math.sqrt(dn * dn + de * de);
  return s < SHORT_STEP_MAX_M ? s : NaN;
}

/** Sum of geodesic distances between consecutive points (indices from..to−1). */
export function geodesicLengthM(latDeg: ArrayLike<number>, lonDeg: ArrayLike<number>, from = 0, to = latDeg.length): number {
  let s = 0;
  for (let i = from + 1; i < to; i++) {
    const short = shortStepM(latDeg[i - 1]!, lonDeg[i - 1]!, latDeg[i]!, lonDeg[i]!);
    s += short === short ? short : geodesicDistanceM(latDeg[i - 1]!, lonDeg[i - 1]!, latDeg[i]!, lonDeg[i]!);
  }
  return s;
}
