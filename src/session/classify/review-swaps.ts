/**
 * The swap test of the two-sided review: a short run of kept fixes with rejected fixes on both sides
 * (within the guard time) is the pattern a burst leaves when it got past the gates and pulled the
 * track, so that the good fixes beside it failed instead. Once the review has converged, every such
 * "sandwich" is tried the other way round (the run rejected, its rejected neighbours kept); after the
 * re-run a swap stays only where it lowered the robust cost of its neighbourhood: the sum over the
 * gated fixes there of their review statistic when kept and of the threshold when rejected (the
 * capped χ² of a trimmed fit; the same capping as the calibration's likelihood). Local and
 * one-shot: each sandwich is tried alone against the converged track, on its neighbourhood only
 * (trySwap: estimation/window-trial.ts gives the smoothed track there that a re-run of the whole
 * segment with the swap would give, to rounding); the swaps that lower their cost are kept
 * together and the review's next pass re-runs where they changed the decisions. Swapping all
 * sandwiches at once and re-running the segment twice (trial and undo) cost two full passes at 1M
 * fixes, ~1.1 s of a 9.8 s run (docs/decisions/swap-trial-per-neighbourhood.md).
 * Measured: simulated vehicle seed 5 (a 4-fix, 24 m burst during hard braking, docs/validation.md "Known shortfalls").
 */
import type { AxisModel } from '../../models/axis-model.js';
import { covStride, type FilterHistory, type FilterOptions, type SegmentData } from '../../estimation/track-filter.js';
import { reviewStatisticsRange } from '../../estimation/review.js';
import { makeWindowTrialWork, windowTrial, type WindowTrialWork } from '../../estimation/window-trial.js';
import type { DecisionLog } from '../result/decision-log.js';

export interface Swap {
  /** Epochs kept before the swap (the suspected burst). */
  keptRun: number[];
  /** Rejected epochs beside it (the suspected good fixes). */
  rejected: number[];
  /** Epochs [first, last] whose statistics make up the cost. */
  window: [number, number];
}

/**
 * The sandwiches of a converged review: maximal runs of kept gated fixes spanning at most guardSec,
 * whose nearest gated neighbours on both sides are rejected and within guardSec of the run; with
 * the maximal rejected runs on each side (each spanning at most guardSec). Neighbourhoods that
 * would overlap an earlier one are skipped.
 */
export function findSwaps(N: number, offered: Uint8Array, kept: Uint8Array, tSec: Float64Array, guardSec: number): Swap[] {
  // the gated epochs in order (a typed array: at 1M epochs a list grown by push was ~0.1 s of regrowth)
  const gatedAll = new Int32Array(N);
  let ng = 0;
  for (let k = 0; k < N; k++) if (offered[k] === 1) gatedAll[ng++] = k;
  const gated = gatedAll.subarray(0, ng);
  const out: Swap[] = [];
  let lastWindowEnd = -1;
  let i = 0;
  while (i < gated.length) {
    if (!kept[gated[i]!]) {
      i++;
      continue;
    }
    // the maximal kept run gated[i..j]
    let j = i;
    while (j + 1 < gated.length && kept[gated[j + 1]!]) j++;
    const first = gated[i]!, last = gated[j]!;
    const left = i - 1, right = j + 1;
    if (left >= 0 && right < gated.length && tSec[last]! - tSec[first]! <= guardSec && tSec[first]! - tSec[gated[left]!]! <= guardSec && tSec[gated[right]!]! - tSec[last]! <= guardSec) {
      const rejected: number[] = [];
      let l = left;
      while (l >= 0 && !kept[gated[l]!] && tSec[gated[left]!]! - tSec[gated[l]!]! <= guardSec) rejected.push(gated[l--]!);
      let r = right;
      while (r < gated.length && !kept[gated[r]!] && tSec[gated[r]!]! - tSec[gated[right]!]! <= guardSec) rejected.push(gated[r++]!);
      rejected.sort((a, b) => a - b);
      // the neighbourhood: the guard time beyond the outermost rejected fixes
      let w0 = rejected[0]!, w1 = rejected[rejected.length - 1]!;
      while (w0 > 0 && tSec[rejected[0]!]! - tSec[w0 - 1]! <= guardSec) w0--;
      while (w1 < N - 1 && tSec[w1 + 1]! - tSec[rejected[rejected.length - 1]!]! <= guardSec) w1++;
      if (w0 > lastWindowEnd) {
        const keptRun: number[] = [];
        for (let q = i; q <= j; q++) keptRun.push(gated[q]!);
        out.push({ keptRun, rejected, window: [w0, w1] });
        lastWindowEnd = w1;
      }
    }
    i = j + 1;
  }
  return out;
}

/** Robust cost of a swap's neighbourhood: Σ (kept ? T : threshold) over its gated fixes with a statistic. */
export function swapCost(s: Swap, offered: Uint8Array, kept: Uint8Array, T: Float64Array, threshold: Float64Array): number {
  let c = 0;
  for (let k = s.window[0]; k <= s.window[1]; k++) {
    if (offered[k] !== 1 || !Number.isFinite(T[k]!)) continue;
    c += kept[k] ? T[k]! : threshold[k]!;
  }
  return c;
}

/** Apply a swap (forward: run rejected, neighbours kept) or undo it, in place on `kept`. */
export function applySwap(s: Swap, kept: Uint8Array, undo: boolean): void {
  for (const k of s.keptRun) kept[k] = undo ? 1 : 0;
  for (const k of s.rejected) kept[k] = undo ? 0 : 1;
}

/** Scratch of trySwap (the window's states and statistics), grown to the longest neighbourhood. */
export interface SwapTrial {
  wk: WindowTrialWork;
  x: Float64Array[];
  P: Float64Array[];
  T: Float64Array;
  dof: Uint8Array;
  thr: Float64Array;
}

export function makeSwapTrial(models: AxisModel[]): SwapTrial {
  return { wk: makeWindowTrialWork(models), x: [], P: [], T: new Float64Array(0), dof: new Uint8Array(0), thr: new Float64Array(0) };
}

/**
 * The robust cost of a swap's neighbourhood after the swap, which `kept` already holds: its
 * smoothed track from windowTrial (on the current filtered and smoothed histories hf, hs of `data`,
 * whose `use` holds the decisions before the swap and is left as it was), the review statistics
 * there, and swapCost over them. Infinity where the trial lost positive definiteness.
 */
export function trialCost(tr: SwapTrial, sw: Swap, models: AxisModel[], data: SegmentData, opt: FilterOptions, hf: FilterHistory, hs: FilterHistory, offered: Uint8Array, kept: Uint8Array, thr: readonly number[], nu: Float64Array): number {
  const [w0, w1] = sw.window;
  const len = w1 - w0 + 1;
  if (tr.T.length < len) {
    tr.x = models.map((m) => new Float64Array(len * m.n));
    tr.P = models.map((m) => new Float64Array(len * covStride(m.n)));
    tr.T = new Float64Array(len);
    tr.dof = new Uint8Array(len);
    tr.thr = new Float64Array(len);
  }
  // the swap's use at its epochs, for the trial only (restored below)
  const moved = [...sw.keptRun, ...sw.rejected];
  const was = moved.map((k) => data.use[k]!);
  for (const k of moved) data.use[k] = offered[k] === 0 ? 0 : kept[k] ? 2 : 0;
  const c0 = Math.min(sw.keptRun[0]!, sw.rejected[0]!);
  const ok = windowTrial(models, data, data.use, opt, hf, hs, w0, c0, w1, tr.x, tr.P, tr.wk);
  moved.forEach((k, i) => (data.use[k] = was[i]!));
  if (!ok) return Infinity;
  const Tw = tr.T.subarray(0, len).fill(NaN);
  const thrW = tr.thr.subarray(0, len).fill(NaN);
  const offW = offered.subarray(w0, w1 + 1);
  const keptW = kept.subarray(w0, w1 + 1);
  const slice = (a: Float64Array) => a.subarray(w0, w1 + 1);
  reviewStatisticsRange(models, tr.x, tr.P, 0, len - 1, data.z.map(slice), data.r.map(slice), offW, keptW, Tw, tr.dof, thrW, thr, nu);
  return swapCost({ ...sw, window: [0, len - 1] }, offW, keptW, Tw, thrW);
}

/**
 * Try one swap against the converged review (T, threshold: its current statistics, read for the
 * cost before the swap): apply it to `kept` and keep it (true) where trialCost is lower than the
 * cost before, else undo it (false). With `log`, a kept swap is recorded there: each fix of the run
 * it left out as the swap test's (statistic: the cost with the run kept, threshold: the cost
 * without it), and its re-admitted neighbours removed.
 */
export function trySwap(
  tr: SwapTrial,
  sw: Swap,
  models: AxisModel[],
  data: SegmentData,
  opt: FilterOptions,
  hf: FilterHistory,
  hs: FilterHistory,
  offered: Uint8Array,
  kept: Uint8Array,
  T: Float64Array,
  threshold: Float64Array,
  thr: readonly number[],
  nu: Float64Array,
  log?: DecisionLog,
): boolean {
  const before = swapCost(sw, offered, kept, T, threshold);
  applySwap(sw, kept, false);
  const after = trialCost(tr, sw, models, data, opt, hf, hs, offered, kept, thr, nu);
  if (after < before) {
    if (log) {
      for (const k of sw.keptRun) log.set(k, { test: 'swap', statistic: before, threshold: after, dof: 0 });
      for (const k of sw.rejected) log.delete(k);
    }
    return true;
  }
  applySwap(sw, kept, true);
  return false;
}
