/**
 * The per-session local metric frame: a transverse Mercator projection (proj4) centred on the
 * session, scale 1 on the central meridian, false origin at the session centre. Easting/northing in
 * metres; the vertical stays the WGS84 ellipsoidal height. Within the tens of kilometres of a
 * session the scale error is below 1e-5 (common practice), far below fix noise, and the frame is
 * conformal, so velocities and error ellipses keep their shape and azimuth (to the grid convergence,
 * which is zero on the central meridian and below a few tenths of a degree within a session).
 * Source for the projection: Snyder, "Map Projections: A Working Manual", USGS PP 1395 (1987), §8.
 */
import proj4 from 'proj4';
import { selectKth } from '../estimation/select.js';

export interface LocalFrame {
  readonly lat0Deg: number;
  readonly lon0Deg: number;
  readonly definition: string;
  /** Geodetic (degrees) → local east/north (m), written into out[0], out[1]. */
  forward(lonDeg: number, latDeg: number, out: Float64Array | number[]): void;
  /** Local east/north (m) → lon/lat (degrees), written into out[0], out[1]. */
  inverse(eM: number, nM: number, out: Float64Array | number[]): void;
}

/** Proj string for a transverse Mercator on WGS84 centred at (lat0, lon0). */
export function localTmDefinition(lat0Deg: number, lon0Deg: number): string {
  return `+proj=tmerc +lat_0=${lat0Deg} +lon_0=${lon0Deg} +k=1 +x_0=0 +y_0=0 +ellps=WGS84 +units=m +no_defs`;
}

/** proj4's degree ↔ radian factors (lib/constants/values.js), so the direct calls below round alike. */
const D2R = 0.01745329251994329577;
const R2D = 57.29577951308232088;

export function makeLocalFrame(lat0Deg: number, lon0Deg: number): LocalFrame {
  const definition = localTmDefinition(lat0Deg, lon0Deg);
  // the projection's own forward/inverse in radians: proj4('WGS84', definition) does exactly this
  // arithmetic (degrees × D2R, same datum so no datum shift, units m so no scaling) but clones and
  // checks every point, about half of its time per point; test/geodesy compares the two bit for bit
  const proj = new proj4.Proj(definition) as unknown as { forward(p: { x: number; y: number }): { x: number; y: number }; inverse(p: { x: number; y: number }): { x: number; y: number } };
  const pt = { x: 0, y: 0 };
  return {
    lat0Deg,
    lon0Deg,
    definition,
    forward(lonDeg, latDeg, out) {
      pt.x = lonDeg * D2R;
      pt.y = latDeg * D2R;
      const r = proj.forward(pt);
      out[0] = r.x;
      out[1] = r.y;
    },
    inverse(eM, nM, out) {
      pt.x = eM;
      pt.y = nM;
      const r = proj.inverse(pt);
      out[0] = r.x * R2D;
      out[1] = r.y * R2D;
    },
  };
}

/** Wrap a longitude difference into (−180, 180]. */
export function wrapLonDeg(d: number): number {
  let x = ((d + 180) % 360 + 360) % 360 - 180;
  if (x === -180) x = 180;
  return x;
}

/**
 * Centre of a set of fixes: median latitude and the median of longitudes unwrapped around the
 * first valid one (so sessions across the antimeridian get a sensible centre).
 * `scratch`: two arrays of at least latDeg.length to select in (overwritten), instead of two new ones.
 */
export function sessionCentre(latDeg: Float64Array, lonDeg: Float64Array, valid?: Uint8Array, scratch?: [Float64Array, Float64Array]): [number, number] {
  // the values in typed arrays filled in order (what lists of them held)
  const lats = scratch && scratch[0].length >= latDeg.length ? scratch[0] : new Float64Array(latDeg.length);
  const lons = scratch && scratch[1].length >= latDeg.length ? scratch[1] : new Float64Array(latDeg.length);
  let c = 0;
  let ref = NaN;
  for (let i = 0; i < latDeg.length; i++) {
    if (valid && !valid[i]) continue;
    if (Number.isNaN(ref)) ref = lonDeg[i]!;
    lats[c] = latDeg[i]!;
    lons[c++] = ref + wrapLonDeg(lonDeg[i]! - ref);
  }
  if (c === 0) return [0, 0];
  const med = (v: Float64Array) => {
    // the middle order statistics of the sorted values, selected without sorting (the same values)
    const a = v.subarray(0, c);
    const m = a.length >> 1;
    const hi = selectKth(a, m);
    return a.length % 2 ? hi : 0.5 * (selectKth(a, m - 1) + hi);
  };
  return [med(lats), wrapLonDeg(med(lons))];
}
