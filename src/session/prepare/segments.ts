/**
 * Splitting a session into segments at long gaps and at impossible jumps that persist, and the
 * epoch grid of a segment: the fix epochs plus bridged epochs at the nominal fix interval inside
 * shorter gaps.
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

/** Faster than anything the users carry (m/s): a jump between consecutive fixes beyond this is not motion. */
export const JUMP_SPEED_MPS = 150;
/** Shortest jump (m) that can split a segment: far beyond any fix error of a working receiver. */
export const JUMP_MIN_M = 500;
/** Offered fixes on each side of a jump that must agree with their own side. */
export const JUMP_SIDE_FIXES = 5;

/** A split at a jump: the first fix after it, the jump's horizontal length (m) and its time step (s). */
export interface JumpSplit {
  fix: number;
  distanceM: number;
  dtSec: number;
}

/**
 * Split segments where consecutive offered fixes jump farther than max(JUMP_MIN_M, JUMP_SPEED_MPS ·
 * Δt) and both sides hold together: of the JUMP_SIDE_FIXES offered fixes before the jump all but
 * one lie within a quarter of it of the last fix before, and of as many after it all but one
 * within a quarter of the first fix after. Such a jump is no motion and no multipath burst (a burst comes back): the
 * log was joined from two places, or the receiver started far off and re-acquired. Smoothed
 * across, the track would slide through places never visited and the fixes of one side would be
 * flagged; split, each side is a segment of its own. A jump whose other side does not hold
 * together is left to the outlier tests.
 */
export function splitAtJumps(segs: Array<[number, number]>, tSec: Float64Array, e: Float64Array, n: Float64Array, offered: Uint8Array): { segments: Array<[number, number]>; jumps: JumpSplit[] } {
  const out: Array<[number, number]> = [];
  const jumps: JumpSplit[] = [];
  const near = (from: number, step: 1 | -1, lo: number, hi: number, e0: number, n0: number): number[] => {
    const d: number[] = [];
    for (let i = from; i >= lo && i <= hi && d.length < JUMP_SIDE_FIXES; i += step) if (offered[i]) d.push(Math.hypot(e[i]! - e0, n[i]! - n0));
    return d;
  };
  // all but the farthest one (one outlier on a side may stay for the gate)
  const spread = (d: number[]) => d.slice().sort((a, b) => a - b)[d.length - 2]!;
  for (const [a, b] of segs) {
    let start = a;
    let prev = -1;
    for (let i = a; i <= b; i++) {
      if (!offered[i]) continue;
      if (prev >= 0) {
        const dist = Math.hypot(e[i]! - e[prev]!, n[i]! - n[prev]!);
        const dt = tSec[i]! - tSec[prev]!;
        if (dist > Math.max(JUMP_MIN_M, JUMP_SPEED_MPS * dt)) {
          const before = near(prev, -1, start, b, e[prev]!, n[prev]!);
          const after = near(i, 1, i, b, e[i]!, n[i]!);
          if (before.length >= JUMP_SIDE_FIXES && after.length >= JUMP_SIDE_FIXES && spread(before) < dist / 4 && spread(after) < dist / 4) {
            out.push([start, prev]);
            jumps.push({ fix: i, distanceM: dist, dtSec: dt });
            start = i;
          }
        }
      }
      prev = i;
    }
    out.push([start, b]);
  }
  return { segments: out, jumps };
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
