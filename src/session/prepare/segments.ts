/**
 * Splitting a session into segments at long gaps, and the epoch grid of a segment: the fix epochs
 * plus bridged epochs at the nominal fix interval inside shorter gaps.
 */
import { selectKth } from '../../estimation/select.js';

/** Median of the positive differences of consecutive times, or 1 s when there are none. */
export function nominalIntervalSec(tSec: Float64Array, use?: Uint8Array): number {
  const all = new Float64Array(tSec.length);
  let m = 0;
  let prev = NaN;
  for (let i = 0; i < tSec.length; i++) {
    if (use && !use[i]) continue;
    if (Number.isFinite(prev) && tSec[i]! > prev) all[m++] = tSec[i]! - prev;
    prev = tSec[i]!;
  }
  if (m === 0) return 1;
  // the median order statistic, selected without sorting (the value of the sorted array)
  return selectKth(all.subarray(0, m), m >> 1);
}

/** [first, last] indices (inclusive) of consecutive fixes with no gap longer than maxGapSec between offered fixes. */
export function splitSegments(tSec: Float64Array, offered: Uint8Array, maxGapSec: number): Array<[number, number]> {
  const segs: Array<[number, number]> = [];
  let start = -1;
  let lastOffered = -1;
  for (let i = 0; i < tSec.length; i++) {
    if (!offered[i]) continue;
    if (start < 0) start = i;
    else if (tSec[i]! - tSec[lastOffered]! > maxGapSec) {
      segs.push([start, lastOffered]);
      start = i;
    }
    lastOffered = i;
  }
  if (start >= 0) segs.push([start, lastOffered]);
  return segs;
}

/**
 * Epoch grid of fixes i0..i1: returns for each epoch its time and the fix index (−1 for bridged).
 * A gap longer than bridgeFactor·interval gets epochs at t + k·interval while they stay more than
 * half an interval before the next fix.
 */
export function epochGrid(tSec: Float64Array, i0: number, i1: number, intervalSec: number, bridgeFactor: number): { tSec: Float64Array; fix: Int32Array } {
  // two passes over the same loop (count, then fill) into typed arrays: no growing number arrays
  let N = 0;
  const fill = (times: Float64Array | null, fix: Int32Array | null) => {
    let k = 0;
    for (let i = i0; i <= i1; i++) {
      if (i > i0) {
        const t0 = tSec[i - 1]!;
        const t1 = tSec[i]!;
        if (t1 - t0 > bridgeFactor * intervalSec) {
          for (let t = t0 + intervalSec; t < t1 - 0.5 * intervalSec; t += intervalSec) {
            if (times) {
              times[k] = t;
              fix![k] = -1;
            }
            k++;
          }
        }
      }
      if (times) {
        times[k] = tSec[i]!;
        fix![k] = i;
      }
      k++;
    }
    return k;
  };
  N = fill(null, null);
  const times = new Float64Array(N);
  const fix = new Int32Array(N);
  fill(times, fix);
  return { tSec: times, fix };
}
