/**
 * The outlier review loop of one segment: forward gate first, then repeated smoothing in which every
 * fix is tested against the smoothed track (estimation/review.ts). Kept fixes that fail are
 * rejected (reason "review"), rejected fixes that pass are re-admitted, and the decisions are fed
 * back as fixed (no forward gate) until nothing changes or maxPasses is reached. Re-admission is
 * what undoes a cascade of rejections after a manoeuvre or a gap; rejection catches bursts that the
 * forward gate let through.
 * To avoid swamping, only the worst failing fix within a guard time is rejected per pass (its
 * neighbours are judged again once it no longer pulls the track).
 */
import type { AxisModel } from '../../models/axis-model.js';
import { forwardFilter, type FilterHistory, type FilterOptions, type SegmentData } from '../../estimation/track-filter.js';
import { resmoothWindows, smoothInto } from '../../estimation/track-smoother.js';
import { allocateHistory, historyOf, horizontalShare } from '../../estimation/track-filter.js';
import { reviewStatisticsRange } from '../../estimation/review.js';
import { applyReviewDecisions, reviewThresholds, type ReviewThresholds } from './review-decisions.js';
import { findSwaps, makeSwapTrial, trySwap } from './review-swaps.js';
import type { StageTimings } from '../result/timings.js';
import type { DecisionLog } from '../result/decision-log.js';

/** Value in `offered` of a fix the excursion test (excursion.ts) rejected: held out (the review never judges it again, so never re-admits it). */
export const HELD_OUT = 3;

/**
 * Tolerance of the windowed re-runs (m, m/s, m²): a re-run stops once every state and covariance
 * element is within it of the previous pass's value. With 0 (bit for bit) a change reaches ~16,000
 * epochs at 10 Hz (the slow Gauss–Markov mode must decay below one ulp), so windows merge into full
 * passes on long logs; at 1e-6 a change reaches ~900 epochs, and states differ from full passes by
 * micrometres (test/session/classify/review-windowed.test.ts). Measured on a 100k-fix 10 Hz vehicle log.
 */
export const RERUN_TOL = 1e-6;

export interface ReviewOutcome {
  history: FilterHistory;
  /** The filtered history behind `history` (its forward moments; read by the simulation smoother). */
  filtered: FilterHistory;
  /** Data with the final decisions in `use` (2 kept, 0 rejected or no fix). */
  data: SegmentData;
  /** Final decision per epoch: 1 kept, 0 not used. */
  kept: Uint8Array;
  /** Rejected by the forward gate in the first pass. */
  gateRejected: Uint8Array;
  /**
   * The test that leaves each rejected gated fix out (epoch → decision; decision-log.ts): the gate
   * of the first pass, the review, or the swap test, with its statistic and threshold at the time.
   */
  why: DecisionLog;
  /** Review statistic, its dof and threshold per epoch (NaN where no fix). */
  T: Float64Array;
  dof: Uint8Array;
  threshold: Float64Array;
  passes: number;
  /** The loop ended because no decision changed (not at maxPasses): rerunning it from `kept` under the same model gives this outcome again. */
  converged: boolean;
}

import type { ReviewOptions } from '../prepare/axis-params.js';
export type { ReviewOptions };

/**
 * @param offered the original use flags (0 none/user-rejected, 1 fix, 2 user-kept)
 * @param initial optional starting decisions (1 kept / 0 rejected per epoch) instead of the forward gate
 */
export function reviewSegment(
  models: AxisModel[],
  data: SegmentData,
  offered: Uint8Array,
  opt: FilterOptions,
  ro: ReviewOptions,
  initial?: { kept: Uint8Array; gateRejected: Uint8Array; why?: DecisionLog },
  tm?: StageTimings,
): ReviewOutcome {
  const tStart = tm ? performance.now() : 0;
  const N = data.N;
  const work: SegmentData = { ...data, use: offered.slice() };
  // east and north measured alike (horizontalShare: it reads the models, the options and z, r, not
  // the use, so it holds for every pass of this review and for the time-reversed data): every pass
  // writes north's covariance as a copy of east's, filtered and smoothed, so each history holds one
  // array for both (the same values; ~48 MB a history less to write at 1M epochs)
  // (taken where the filter and smoother run their n = 3 loops, forwardShared3 and smoothIntoShared3)
  const shareP = horizontalShare(models, data, opt.rScale, opt.qScale) && (models.length === 2 || models[2]!.n === 3);
  const start = initial ? startFromInitial(N, models, offered, initial, shareP) : gateBothWays(models, work, offered, opt, shareP, tm);
  const T = (start.spare.pop() ?? new Float64Array(N)).fill(NaN);
  const dof = new Uint8Array(N);
  const threshold = (start.spare.pop() ?? new Float64Array(N)).fill(NaN);
  const run: ReviewRun = {
    models, data, work, offered, opt, ro, th: reviewThresholds(ro.probability), shareP, tm,
    kept: start.kept, why: start.why, T, dof, threshold, nu: new Float64Array(models.length),
    histBuf: start.histBuf, smoothBuf: start.smoothBuf, changed: [], windows: [], smoothed: [], tKernel: start.tKernelMs,
  };
  const { passes, converged } = reviewPasses(run);
  return finishReview(run, start.gateRejected, passes, converged, tStart);
}

/** The decisions a review starts from, and the buffers its first pass may reuse. */
interface ReviewStart {
  kept: Uint8Array;
  gateRejected: Uint8Array;
  why: DecisionLog;
  /** Buffers of the first pass's filtered history. */
  histBuf: FilterHistory;
  /**
   * Buffers of the smoothed history: the time-reversed gate pass's, when there is one (only its
   * accepted flags are needed after the gate), so the review holds two full histories, not three.
   */
  smoothBuf?: FilterHistory;
  /** Arrays of N doubles that nothing reads any more, to be reused whole. */
  spare: Float64Array[];
  /** Time spent in the filter kernels (ms; 0 without timings). */
  tKernelMs: number;
}

/** One review's inputs, its per-epoch decisions and statistics, and the histories carried from pass to pass. */
interface ReviewRun {
  models: AxisModel[];
  data: SegmentData;
  /** The data with the current decisions in `use` (2 kept, 0 not used). */
  work: SegmentData;
  offered: Uint8Array;
  opt: FilterOptions;
  ro: ReviewOptions;
  th: ReviewThresholds;
  shareP: boolean;
  tm?: StageTimings;
  kept: Uint8Array;
  why: DecisionLog;
  T: Float64Array;
  dof: Uint8Array;
  threshold: Float64Array;
  nu: Float64Array;
  histBuf?: FilterHistory;
  smoothBuf?: FilterHistory;
  /**
   * After the first pass, the filter and smoother re-run only where a decision changed
   * (FilterResume, resmoothWindows): hf keeps the filtered states, hs the smoothed ones; with
   * RERUN_TOL = 0 the skipped epochs are bit for bit those of a full pass.
   */
  hf?: FilterHistory;
  hs?: FilterHistory;
  /** Epochs whose use changed in this pass, the filter's re-run windows and the re-smoothed ranges. */
  changed: number[];
  windows: number[];
  smoothed: number[];
  /** Time spent in the filter and smoother kernels (ms; timed only with tm). */
  tKernel: number;
}

/** The decisions handed in (user-kept fixes kept, fixes not offered not), with fresh buffers for the first pass. */
function startFromInitial(N: number, models: AxisModel[], offered: Uint8Array, initial: { kept: Uint8Array; gateRejected: Uint8Array; why?: DecisionLog }, shareP: boolean): ReviewStart {
  const histBuf = allocateHistory(N, models, shareP);
  const gateRejected = new Uint8Array(N);
  const kept = new Uint8Array(N);
  for (let k = 0; k < N; k++) {
    kept[k] = offered[k] === 2 ? 1 : offered[k] ? initial.kept[k]! : 0;
    gateRejected[k] = initial.gateRejected[k]!;
  }
  return { kept, gateRejected, why: new Map(initial.why), histBuf, spare: [], tKernelMs: 0 };
}

/** The first decisions from the forward gate run both ways: a fix stays where both accept it, and a refused one is logged with the gate that refused it. */
function gateBothWays(models: AxisModel[], work: SegmentData, offered: Uint8Array, opt: FilterOptions, shareP: boolean, tm?: StageTimings): ReviewStart {
  const N = work.N;
  const gateRejected = new Uint8Array(N);
  const kept = new Uint8Array(N);
  const why: DecisionLog = new Map();
  // gate both ways: a burst that opens the forward gate (the prediction's covariance grows while
  // its first fixes are rejected) is met from the other side by the time-reversed filter
  const t0 = tm ? performance.now() : 0;
  const h = forwardFilter(models, work, opt, allocateHistory(N, models, shareP));
  const rv = reversed(work);
  const back = forwardFilter(models, rv, opt, allocateHistory(N, models, shareP));
  // the reversed data's arrays are not read again (the histories hold no data): two of them
  // become T and threshold (memory already written instead of 16 MB fresh at 1M epochs)
  const spare = [rv.z[0]!, rv.r[0]!];
  let tKernelMs = 0;
  if (tm) {
    const d = performance.now() - t0;
    tm.filter += d;
    tKernelMs += d;
    tm.filterPasses += 2;
    tm.filterEpochs += 2 * N;
  }
  for (let k = 0; k < N; k++) {
    const both = h.accepted[k]! && back.accepted[N - 1 - k]!;
    kept[k] = offered[k] === 2 ? 1 : offered[k] ? both : 0;
    if (offered[k] === 1 && !both) {
      gateRejected[k] = 1;
      // the gate that refused it, with its NIS (the forward one where both did); read now, since
      // the first review pass overwrites these histories
      const kb = N - 1 - k;
      why.set(k, h.accepted[k] ? { test: 'backward-gate', statistic: back.nis[kb]!, threshold: back.threshold[kb]!, dof: back.dof[kb]! } : { test: 'forward-gate', statistic: h.nis[k]!, threshold: h.threshold[k]!, dof: h.dof[k]! });
    }
  }
  // the first review pass reuses the forward history's buffers (every epoch is rewritten)
  return { kept, gateRejected, why, histBuf: h, smoothBuf: back, spare, tKernelMs };
}

/** The review passes until no decision changes (after the swap test) or the pass budget is spent. */
function reviewPasses(run: ReviewRun): { passes: number; converged: boolean } {
  const { data, offered, kept, T, dof, threshold, ro, why } = run;
  let passes = 0;
  let converged = false;
  let swapsTried = false;
  for (;;) {
    passes++;
    filterSmoothPass(run);
    // the swap test (review-swaps.ts) may take two passes beyond the budget (the re-run of the swaps
    // it kept, and one more round of decisions)
    if (passes > ro.maxPasses + (swapsTried ? 2 : 0)) break;
    converged = false;
    retestChanged(run);
    // re-admit the clearly consistent, reject the worst failing fix per guard window
    const changedAny = applyReviewDecisions(data.N, offered, kept, T, dof, threshold, data.tSec, run.th, ro.guardSec, why);
    if (!changedAny) {
      if (!swapsTried && ro.swaps !== false) {
        swapsTried = true;
        if (trySwaps(run)) continue;
      }
      converged = true;
      break;
    }
  }
  return { passes, converged };
}

/** One filter and smoother pass under the current decisions (after the first, windowed: only where a use changed). */
function filterSmoothPass(run: ReviewRun): void {
  const { models, work, offered, kept, opt, ro, tm, changed, windows, smoothed } = run;
  const N = work.N;
  changed.length = 0;
  // work.use holds the previous pass's use (nothing else writes it between passes): only the
  // epochs whose use changes are written (and listed for the re-run)
  const use = work.use;
  for (let k = 0; k < N; k++) {
    const u = offered[k] === 0 ? 0 : kept[k] ? 2 : 0;
    if (u !== use[k]) {
      if (run.hf) changed.push(k);
      use[k] = u;
    }
  }
  const t0 = tm ? performance.now() : 0;
  let nf = N;
  let ns = N;
  smoothed.length = 0;
  let hf = run.hf;
  if (!hf || ro.windowed === false) {
    if (run.histBuf) {
      run.histBuf.extraQ.clear();
      run.histBuf.reacquired.length = 0;
    }
    hf = forwardFilter(models, work, opt, run.histBuf);
    run.histBuf = hf;
  } else {
    windows.length = 0;
    forwardFilter(models, work, opt, hf, { changed, tol: RERUN_TOL, windows });
    nf = 0;
    for (let i = 0; i < windows.length; i += 2) nf += windows[i + 1]! - windows[i]! + 1;
  }
  run.hf = hf;
  const t1 = tm ? performance.now() : 0;
  if (!run.hs || ro.windowed === false) {
    // the smoothed history shares the forward pass's per-epoch flags and statistics
    const alloc = run.hs ?? run.smoothBuf ?? allocateHistory(N, models, run.shareP);
    run.hs = historyOf(hf, alloc.x, alloc.P);
    smoothInto(models, work, hf, run.hs, opt.qScale);
    smoothed.push(N - 1, 0);
  } else ns = resmoothWindows(models, work, hf, run.hs, windows, opt.qScale, RERUN_TOL, smoothed);
  if (tm) {
    const t2 = performance.now();
    tm.filter += t1 - t0;
    tm.smooth += t2 - t1;
    run.tKernel += t2 - t0;
    tm.filterPasses++;
    tm.smoothPasses++;
    tm.filterEpochs += nf;
    tm.smoothEpochs += ns;
  }
}

/** The review statistic of every offered fix whose smoothed state or decision changed in this pass (the others keep theirs). */
function retestChanged(run: ReviewRun): void {
  const { models, data, offered, kept, T, dof, threshold, nu, smoothed } = run;
  const h = run.hs!, thr = run.th.reject;
  for (let i = 0; i < smoothed.length; i += 2) reviewStatisticsRange(models, h.x, h.P, smoothed[i + 1]!, smoothed[i]!, data.z, data.r, offered, kept, T, dof, threshold, thr, nu);
  for (const k of run.changed) reviewStatisticsRange(models, h.x, h.P, k, k, data.z, data.r, offered, kept, T, dof, threshold, thr, nu);
}

/**
 * Once converged: every kept run sandwiched between rejections tried the other way round, each on
 * its own neighbourhood (trySwap, on the current histories hf and hs); the swaps that lower their
 * robust cost stay, and the next pass re-runs where they changed the decisions. True if any stayed.
 */
function trySwaps(run: ReviewRun): boolean {
  const { models, data, work, opt, offered, kept, T, threshold, nu, why } = run;
  let keptAny = false;
  const trial = makeSwapTrial(models);
  for (const sw of findSwaps(data.N, offered, kept, data.tSec, run.ro.guardSec)) if (trySwap(trial, sw, models, work, opt, run.hf!, run.hs!, offered, kept, T, threshold, run.th.reject, nu, why)) keptAny = true;
  return keptAny;
}

/** The outcome once the passes end: the final decisions in the data's use, the decision log settled, the review's own time recorded. */
function finishReview(run: ReviewRun, gateRejected: Uint8Array, passes: number, converged: boolean, tStart: number): ReviewOutcome {
  const { work, offered, kept, T, dof, threshold, why, tm } = run;
  const N = work.N;
  for (let k = 0; k < N; k++) work.use[k] = offered[k] === 0 ? 0 : kept[k] ? 2 : 0;
  settleDecisions(N, offered, kept, T, dof, threshold, why, run.th.readmit);
  if (tm) tm.review += performance.now() - tStart - run.tKernel;
  return { history: run.hs!, filtered: run.hf!, data: work, kept, gateRejected, why, T, dof, threshold, passes, converged };
}

/**
 * The decision log at the end of a review, in place: entries of fixes that are kept are dropped; a
 * rejected fix that fails the review against the final track is the review's (its final T, which
 * is what the reviewer sees against the track); one without an entry (decisions handed in without
 * their log) is the review's where it fails there, and otherwise the review's re-admission test's
 * (T above the stricter re-admission threshold: not clearly consistent, so not taken back).
 */
export function settleDecisions(N: number, offered: Uint8Array, kept: Uint8Array, T: Float64Array, dof: Uint8Array, threshold: Float64Array, why: DecisionLog, readmit: readonly number[]): void {
  // (a fix held out by the excursion test keeps that test's entry)
  for (const k of why.keys()) if (kept[k] || (offered[k] !== 1 && offered[k] !== HELD_OUT)) why.delete(k);
  for (let k = 0; k < N; k++) {
    if (offered[k] !== 1 || kept[k] || !(dof[k]! > 0)) continue;
    if (T[k]! > threshold[k]!) why.set(k, { test: 'review', statistic: T[k]!, threshold: threshold[k]!, dof: dof[k]! });
    else if (!why.has(k)) {
      const ra = readmit[dof[k]!]!;
      why.set(k, { test: 'review', statistic: T[k]!, threshold: ra, dof: dof[k]! });
    }
  }
}

/** The segment in reverse time order (t → −t), for the time-reversed filter; the models are time-symmetric. */
export function reversed(d: SegmentData): SegmentData {
  const N = d.N;
  // typed-array copy and reverse (the same values as an element-wise map, without its per-element call)
  const rev = (a: Float64Array) => a.slice().reverse();
  const tSec = new Float64Array(N);
  for (let i = 0; i < N; i++) tSec[i] = -d.tSec[N - 1 - i]!;
  return { N, tSec, z: d.z.map(rev), r: d.r.map(rev), use: d.use.slice().reverse() };
}
