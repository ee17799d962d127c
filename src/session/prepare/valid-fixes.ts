/**
 * Validity of each fix before anything else reads it: finite and in range, not the (0°, 0°) "null
 * island" placeholder, not marked "no fix" by the log's fix-quality column, and no impossible jump
 * in height. Invalid fixes are listed in the outlier report with the reason, never filtered.
 */
import type { FixSeries } from '../../input/fix-series.js';

/** Validity of each fix before filtering: finite, in range, not the (0, 0) "null island" placeholder. */
export function validFixes(s: FixSeries): { valid: Uint8Array; why: string[] } {
  const valid = new Uint8Array(s.n);
  const why: string[] = new Array(s.n).fill('');
  for (let i = 0; i < s.n; i++) {
    const lat = s.latDeg[i]!, lon = s.lonDeg[i]!;
    if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) why[i] = 'position out of range';
    else if (Math.abs(lat) < 1e-7 && Math.abs(lon) < 1e-7) why[i] = 'position at 0°, 0° (no fix)';
    else if (s.quality.fixQuality && s.quality.fixQuality[i] === 0) why[i] = 'fix quality 0 (no fix)';
    else valid[i] = 1;
  }
  flagHeightJumps(s, valid, why);
  return { valid, why };
}

/** Largest vertical speed (m/s) any platform of the profiles reaches, and a slack for fix noise (m). */
export const HEIGHT_JUMP_RATE_MPS = 30;
export const HEIGHT_JUMP_SLACK_M = 150;

/**
 * Impossible jumps in height: a fix whose height differs from the median of its valid neighbours
 * (up to five on each side) by more than the slack plus the fastest climb over the time to the
 * farthest of them is invalid; the median of neighbours is robust to a burst of bad heights.
 * The median lies between the neighbours' smallest and largest heights, so a fix within the limit
 * of both is not a jump and needs no median (rounding is monotonic, so this holds for the computed
 * differences too); only the others sort their neighbours, as before (the same values, the same order).
 */
export function flagHeightJumps(s: FixSeries, valid: Uint8Array, why: string[]): void {
  const h = s.heightM;
  if (!h) return;
  const W = 5;
  const n = s.n, tSec = s.tSec;
  // the neighbours' heights in the order they are found (at most 2W values: no allocation per fix)
  const nb = new Float64Array(2 * W);
  for (let i = 0; i < n; i++) {
    const hi = h[i]!;
    if (!valid[i] || !Number.isFinite(hi)) continue;
    const ti = tSec[i]!;
    let m = 0;
    let span = 0;
    let lo = Infinity, up = -Infinity;
    for (let d = 1; d <= 3 * W && m < 2 * W; d++)
      for (let side = 0; side < 2; side++) {
        const j = side === 0 ? i - d : i + d;
        if (j < 0 || j >= n || !valid[j] || !Number.isFinite(h[j]!) || m >= 2 * W) continue;
        const v = h[j]!;
        nb[m++] = v;
        if (v < lo) lo = v;
        if (v > up) up = v;
        span = Math.max(span, Math.abs(tSec[j]! - ti));
      }
    if (m < 4) continue;
    const limit = HEIGHT_JUMP_SLACK_M + HEIGHT_JUMP_RATE_MPS * span;
    // |h − median| ≤ max(|h − lowest|, |h − highest|): within the limit, no jump
    if (Math.abs(hi - lo) <= limit && Math.abs(hi - up) <= limit) continue;
    // insertion sort in the order found (what inserting each value as it was found gave)
    for (let a = 1; a < m; a++) {
      const v = nb[a]!;
      let q = a;
      while (q > 0 && nb[q - 1]! > v) {
        nb[q] = nb[q - 1]!;
        q--;
      }
      nb[q] = v;
    }
    const med = nb[m >> 1]!;
    const jump = Math.abs(hi - med);
    if (jump > limit) {
      valid[i] = 0;
      why[i] = `impossible height jump: ${jump.toFixed(0)} m from its neighbours within ${span.toFixed(1)} s`;
    }
  }
}
