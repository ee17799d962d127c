/**
 * flagHeightJumps of src/session/process-session.ts in its former form (every
 * fix's neighbours insertion-sorted for their median), kept verbatim as the reference for the
 * bit-for-bit test of the current form (test/session/height-jumps.test.ts).
 */
import type { FixSeries } from '../../src/input/fix-series.js';
import { HEIGHT_JUMP_RATE_MPS, HEIGHT_JUMP_SLACK_M } from '../../src/session/valid-fixes.js';

/**
 * Impossible jumps in height: a fix whose height differs from the median of its valid neighbours
 * (up to five on each side) by more than the slack plus the fastest climb over the time to the
 * farthest of them is invalid; the median of neighbours is robust to a burst of bad heights.
 */
export function refFlagHeightJumps(s: FixSeries, valid: Uint8Array, why: string[]): void {
  const h = s.heightM;
  if (!h) return;
  const W = 5;
  // the neighbours' heights, insertion-sorted in place (at most 2W values: no allocation per fix)
  const nb = new Float64Array(2 * W);
  for (let i = 0; i < s.n; i++) {
    if (!valid[i] || !Number.isFinite(h[i]!)) continue;
    let m = 0;
    let span = 0;
    for (let d = 1; d <= 3 * W && m < 2 * W; d++)
      for (let side = 0; side < 2; side++) {
        const j = side === 0 ? i - d : i + d;
        if (j < 0 || j >= s.n || !valid[j] || !Number.isFinite(h[j]!) || m >= 2 * W) continue;
        const v = h[j]!;
        let q = m++;
        while (q > 0 && nb[q - 1]! > v) {
          nb[q] = nb[q - 1]!;
          q--;
        }
        nb[q] = v;
        span = Math.max(span, Math.abs(s.tSec[j]! - s.tSec[i]!));
      }
    if (m < 4) continue;
    const med = nb[m >> 1]!;
    const jump = Math.abs(h[i]! - med);
    if (jump > HEIGHT_JUMP_SLACK_M + HEIGHT_JUMP_RATE_MPS * span) {
      valid[i] = 0;
      why[i] = `impossible height jump: ${jump.toFixed(0)} m from its neighbours within ${span.toFixed(1)} s`;
    }
  }
}
