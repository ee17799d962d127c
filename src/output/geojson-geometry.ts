/**
 * The geometry rules of RFC 7946 (Butler et al., 2016) both GeoJSON writers share: rounding of
 * coordinates, lines cut at the antimeridian (§3.1.9) and the longitude extent of the bbox (§5.2).
 */
import { POW10 } from './byte-chunks.js';

export type Position = number[];

/** Decimals of heights (m) and of metric properties: 1 mm. */
export const METRE_DECIMALS = 3;

export function round(v: number, d: number): number {
  const f = POW10[d]!;
  return Math.round(v * f) / f;
}

/** A rounded number, or null for a missing value (JSON has no NaN). */
export function val(v: number, d: number): number | null {
  return Number.isFinite(v) ? round(v, d) : null;
}

/** A position GeoJSON can hold: latitude within ±90°, longitude within ±180°. */
export function mappable(lonDeg: number, latDeg: number): boolean {
  return Math.abs(latDeg) <= 90 && Math.abs(lonDeg) <= 180;
}

/**
 * Split a line of positions where consecutive longitudes jump by more than 180°, inserting the
 * interpolated crossing point at ±180 on both sides (RFC 7946 §3.1.9). `decimals` rounds the
 * interpolated latitude and height like the other positions.
 */
export function cutAtAntimeridian(line: Position[], decimals = 12): Position[][] {
  const parts: Position[][] = [];
  let cur: Position[] = [];
  for (let i = 0; i < line.length; i++) {
    const p = line[i]!;
    if (cur.length > 0) {
      const q = cur[cur.length - 1]!;
      const d = p[0]! - q[0]!;
      if (Math.abs(d) > 180) {
        // crossing: east→west when d < −180 (e.g. 179 → −179)
        const edge = d < 0 ? 180 : -180;
        const pLonUnwrapped = p[0]! + (d < 0 ? 360 : -360);
        const f = (edge - q[0]!) / (pLonUnwrapped - q[0]!);
        const lat = round(q[1]! + f * (p[1]! - q[1]!), decimals);
        const mid: Position = [edge, lat];
        if (q.length > 2 && p.length > 2) mid.push(round(q[2]! + f * (p[2]! - q[2]!), METRE_DECIMALS));
        if (q[0] !== edge) cur.push(mid);
        if (cur.length >= 2) parts.push(cur);
        const other = mid.slice();
        other[0] = -edge;
        cur = p[0] === -edge ? [] : [other];
      }
    }
    cur.push(p);
  }
  if (cur.length) parts.push(cur);
  return parts.filter((pt) => pt.length >= 2);
}

/**
 * West and east of the smallest longitude interval holding all the given longitudes: the
 * complement of the largest gap between them on the circle. West > east when the interval crosses
 * the antimeridian (RFC 7946 §5.2).
 */
export function longitudeExtent(lons: ArrayLike<number>): [number, number] | null {
  const all = new Float64Array(lons.length);
  let n = 0;
  // smallest and largest as the sort orders them (−0 before +0)
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < lons.length; i++) {
    const v = lons[i]!;
    if (Number.isFinite(v)) {
      all[n++] = v;
      if (v < lo || (v === lo && Object.is(v, -0))) lo = v;
      if (v > hi || (v === hi && Object.is(hi, -0))) hi = v;
    }
  }
  if (n === 0) return null;
  // values spanning under 170° (every track that is not near-global): the gap across the
  // antimeridian, (lo + 360) − hi > 190, exceeds every gap between sorted neighbours (each at most
  // hi − lo, floating-point subtraction being monotone), so the loop below would keep it: no sort
  if (hi - lo < 170) return [lo, hi];
  const a = all.subarray(0, n).sort();
  // the gap across the antimeridian, from the easternmost round to the westernmost
  let gap = a[0]! + 360 - a[a.length - 1]!;
  let west = a[0]!, east = a[a.length - 1]!;
  for (let i = 1; i < a.length; i++) {
    const g = a[i]! - a[i - 1]!;
    if (g > gap) {
      gap = g;
      west = a[i]!;
      east = a[i - 1]!;
    }
  }
  return [west, east];
}
