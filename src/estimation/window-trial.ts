/**
 * The smoothed track over a window [w0, w1] of a segment under decisions that differ from those of
 * its current filtered and smoothed histories only at epochs c0..w1 (w0 ≤ c0 ≤ w1), without
 * re-running the rest of the segment:
 *  - the filtered states before c0 are unchanged (they depend on earlier fixes only): the forward
 *    filter restarts from the filtered state at c0 − 1 and runs to w1 under the new decisions;
 *  - the fixes after w1 are unchanged, and so is the information they carry back to w1 (the
 *    backward filter of the two-filter smoother). In information form that is the smoothed minus
 *    the filtered information of the current histories,
 *        Y_b = (Pˢ)⁻¹ − (Pᶠ)⁻¹,   y_b = (Pˢ)⁻¹ xˢ − (Pᶠ)⁻¹ xᶠ,
 *    and the new smoothed state at w1 fuses it with the new filtered one:
 *        Pˢ' = ((Pᶠ')⁻¹ + Y_b)⁻¹,   xˢ' = Pˢ' ((Pᶠ')⁻¹ xᶠ' + y_b)
 *    (Fraser & Potter, "The optimum linear smoother as a combination of two optimum linear
 *    filters", IEEE Trans. Automatic Control 14(4):387–390, 1969; the equivalence with the RTS
 *    smoother: Särkkä, "Bayesian Filtering and Smoothing", 2013, §8.2 — from memory);
 *  - the RTS smoother then runs from w1 down to w0.
 * Exact in exact arithmetic for the linear-Gaussian axis models (each axis independent), so a
 * trial change of a few decisions costs the window's epochs instead of two passes over the segment.
 * The inverses are Cholesky solves against the identity (fails loudly when positive definiteness
 * is lost: the trial then reports failure instead of a number). Axes with n = 3 run the packed
 * kernels of kalman3.ts straight in the output arrays (the history layout); others the generic
 * kernels on full n×n matrices, packed at the end. Measured at 1M fixes (2,411 sandwiches of
 * ~100 epochs): the generic kernels for every axis took ~0.6 s, ~0.25 ms a trial.
 * Epochs are ungated here: `use` is 0 (left out) or non-zero (used), as in the review's passes.
 */
import type { AxisModel } from '../models/axis-model.js';
import { cholesky, choleskySolve } from './cholesky.js';
import { innovation, makeScratch, predict, updateJoseph, type KalmanScratch } from './kalman.js';
import { innovation3p, predict3p, rtsStep3p, updateJoseph3p } from './kalman3.js';
import { makeRtsScratch, rtsStep, type RtsScratch } from './rts.js';
import { covIndex, covStride, makeStepCache, stepMatrices, writePrior, type FilterHistory, type FilterOptions, type SegmentData, type StepCache } from './track-filter.js';

export interface WindowTrialWork {
  /** Per axis with n ≠ 3, full n×n layout, grown to the longest window: states and covariances of the window's epochs. */
  x: Float64Array[];
  P: Float64Array[];
  F: Float64Array[];
  Q: Float64Array[];
  cache: StepCache;
  ks: KalmanScratch[];
  rs: RtsScratch[];
  /** Per axis, n×n: Cholesky factor, the fused information, its inverse, and three inverses of the fusion. */
  L: Float64Array[];
  A: Float64Array[];
  B: Float64Array[];
  C: Float64Array[];
  invS: Float64Array[];
  invF: Float64Array[];
  invNew: Float64Array[];
  /** Per axis, n: the fused information vector; and P hᵀ of the packed update. */
  v: Float64Array[];
  w3: Float64Array;
  out1: Float64Array;
  /** A one-epoch history for the prior at a segment's first epoch. */
  prior: FilterHistory;
}

export function makeWindowTrialWork(models: AxisModel[]): WindowTrialWork {
  const nn = () => models.map((m) => new Float64Array(m.n * m.n));
  return {
    x: models.map(() => new Float64Array(0)),
    P: models.map(() => new Float64Array(0)),
    F: nn(),
    Q: nn(),
    cache: makeStepCache(models.length, models.map((m) => m.n)),
    ks: models.map((m) => makeScratch(m.n)),
    rs: models.map((m) => makeRtsScratch(m.n, makeScratch(m.n))),
    L: nn(),
    A: nn(),
    B: nn(),
    C: nn(),
    invS: nn(),
    invF: nn(),
    invNew: nn(),
    v: models.map((m) => new Float64Array(m.n)),
    w3: new Float64Array(3),
    out1: new Float64Array(1),
    prior: {
      N: 1,
      x: models.map((m) => new Float64Array(m.n)),
      P: models.map((m) => new Float64Array(covStride(m.n))),
      nis: new Float64Array(1),
      dof: new Uint8Array(1),
      threshold: new Float64Array(1),
      accepted: new Uint8Array(1),
      extraQ: new Map(),
      logLik: new Float64Array(1),
      reacquired: [],
    },
  };
}

/** Epoch k of a history axis (packed layout, covStride) into full n×n at offset o of dst. */
function unpackCov(n: number, src: Float64Array, k: number, dst: Float64Array, o: number): void {
  const ps = covStride(n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) dst[o + i * n + j] = src[k * ps + covIndex(n, i, j)]!;
}

/** inv ← A⁻¹ for a symmetric positive-definite n×n A (at offset o): Cholesky, then solves against I. */
function spdInverse(n: number, A: Float64Array, o: number, L: Float64Array, inv: Float64Array): boolean {
  if (!cholesky(n, A, o, L)) return false;
  inv.fill(0);
  for (let i = 0; i < n; i++) inv[i * n + i] = 1;
  choleskySolve(n, L, inv, n);
  return true;
}

/**
 * Smoothed states of epochs w0..w1 under `use` (the new decisions, equal to those of hf and hs
 * before c0 and after w1), written into xOut, POut in the history layout with epoch k at index
 * k − w0. hf: filtered history of the current decisions; hs: smoothed history of the same.
 * Returns false where a covariance lost positive definiteness (no result).
 */
export function windowTrial(
  models: AxisModel[],
  data: SegmentData,
  use: Uint8Array,
  opt: FilterOptions,
  hf: FilterHistory,
  hs: FilterHistory,
  w0: number,
  c0: number,
  w1: number,
  xOut: Float64Array[],
  POut: Float64Array[],
  wk: WindowTrialWork,
): boolean {
  const len = w1 - w0 + 1;
  const win = windowStates(models, len, xOut, POut, wk);
  // ---- filtered states: unchanged before c0 ----
  for (let k = w0; k < c0; k++) for (let a = 0; a < models.length; a++) loadEpoch(models, win, a, hf, k, k - w0);
  // ---- forward from c0 under the new decisions ----
  forwardWindow(models, data, use, opt, hf, w0, c0, w1, win, wk);
  // ---- smoothed state at w1: the new filtered one fused with the information from after w1 ----
  if (w1 < data.N - 1) for (let a = 0; a < models.length; a++) if (!fuseWithLater(models[a]!.n, a, hf, hs, w1, len - 1, win, wk)) return false;
  // ---- RTS from w1 down to w0 ----
  for (let k = w1 - 1; k >= w0; k--) {
    const i = k - w0;
    stepMatrices(models, data, hf, k + 1, opt.qScale, wk.F, wk.Q, wk.cache);
    for (let a = 0; a < models.length; a++) {
      const n = models[a]!.n;
      const X = win.X[a]!, PP = win.PP[a]!;
      const ok = n === 3
        ? rtsStep3p(wk.F[a]!, wk.Q[a]!, X, i * 3, (i + 1) * 3, PP, i * 6, (i + 1) * 6)
        : rtsStep(n, wk.F[a]!, wk.Q[a]!, X, i * n, (i + 1) * n, PP, i * n * n, (i + 1) * n * n, wk.rs[a]!);
      if (!ok) return false;
    }
  }
  // ---- out, in the history layout (n = 3 axes are there already) ----
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    if (n === 3) continue;
    const ps = covStride(n);
    for (let i = 0; i < len; i++) {
      for (let j = 0; j < n; j++) xOut[a]![i * n + j] = win.X[a]![i * n + j]!;
      for (let j = 0; j < n * n; j++) POut[a]![i * ps + j] = win.PP[a]![i * n * n + j]!;
    }
  }
  return true;
}

/** Per axis: where the window's states live (n = 3: the output itself, packed; else full n×n scratch). */
interface WindowStates {
  X: Float64Array[];
  PP: Float64Array[];
}

function windowStates(models: AxisModel[], len: number, xOut: Float64Array[], POut: Float64Array[], wk: WindowTrialWork): WindowStates {
  const X: Float64Array[] = [];
  const PP: Float64Array[] = [];
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    if (n === 3) {
      X.push(xOut[a]!);
      PP.push(POut[a]!);
      continue;
    }
    if (wk.x[a]!.length < len * n) wk.x[a] = new Float64Array(len * n);
    if (wk.P[a]!.length < len * n * n) wk.P[a] = new Float64Array(len * n * n);
    X.push(wk.x[a]!);
    PP.push(wk.P[a]!);
  }
  return { X, PP };
}

/** Copy epoch k of a history axis into window slot i. */
function loadEpoch(models: AxisModel[], win: WindowStates, a: number, src: FilterHistory, k: number, i: number): void {
  const n = models[a]!.n;
  const X = win.X[a]!, PP = win.PP[a]!;
  for (let j = 0; j < n; j++) X[i * n + j] = src.x[a]![k * n + j]!;
  if (n === 3) for (let j = 0; j < 6; j++) PP[i * 6 + j] = src.P[a]![k * 6 + j]!;
  else unpackCov(n, src.P[a]!, k, PP, i * n * n);
}

/** The forward filter from c0 to w1 under `use` (ungated), from hf's filtered state at c0 − 1. */
function forwardWindow(models: AxisModel[], data: SegmentData, use: Uint8Array, opt: FilterOptions, hf: FilterHistory, w0: number, c0: number, w1: number, win: WindowStates, wk: WindowTrialWork): void {
  const nAx = models.length;
  const rScale = opt.rScale ?? null;
  for (let k = c0; k <= w1; k++) {
    const i = k - w0;
    if (k === 0) {
      // the segment's prior (as forwardFilter writes it)
      writePrior(models, data, opt, wk.prior);
      for (let a = 0; a < nAx; a++) loadEpoch(models, win, a, wk.prior, 0, 0);
    } else {
      // (F, Q point into the step cache: read them after the call)
      stepMatrices(models, data, hf, k, opt.qScale, wk.F, wk.Q, wk.cache);
      for (let a = 0; a < nAx; a++) predictInWindow(models[a]!.n, a, hf, k, i, k === w0, win, wk);
    }
    if (use[k] === 0) continue;
    for (let a = 0; a < nAx; a++) {
      const z = data.z[a]![k]!;
      if (!Number.isFinite(z)) continue;
      const m = models[a]!;
      const n = m.n;
      const X = win.X[a]!, PP = win.PP[a]!;
      const r = data.r[a]![k]! * (rScale ? rScale[a]! : 1);
      // ν = z − h x⁻, S = h P hᵀ + r; then the Joseph-form update
      if (n === 3) {
        const nu = innovation3p(m.h, z, r, X, i * 3, PP, i * 6, wk.w3, wk.out1);
        updateJoseph3p(m.h, nu, wk.out1[0]!, r, wk.w3, X, i * 3, PP, i * 6);
      } else {
        const nu = innovation(n, m.h, z, r, X, i * n, PP, i * n * n, wk.ks[a]!, wk.out1);
        updateJoseph(n, m.h, nu, wk.out1[0]!, r, X, i * n, PP, i * n * n, wk.ks[a]!);
      }
    }
  }
}

/** x⁻ = F x, P⁻ = F P Fᵀ + Q of axis a into window slot i; `from`: the step from w0 − 1 (outside the window) reads the history. */
function predictInWindow(n: number, a: number, hf: FilterHistory, k: number, i: number, from: boolean, win: WindowStates, wk: WindowTrialWork): void {
  // doubles of a covariance in the window's layout: packed for n = 3, full otherwise (covStride)
  const ps = covStride(n);
  const F = wk.F[a]!, Q = wk.Q[a]!, xa = win.X[a]!, Pa = win.PP[a]!;
  if (n === 3) predict3p(F, Q, from ? hf.x[a]! : xa, from ? (k - 1) * 3 : (i - 1) * 3, from ? hf.P[a]! : Pa, from ? (k - 1) * 6 : (i - 1) * 6, xa, i * 3, Pa, i * 6);
  else if (from) {
    const v = wk.v[a]!, B = wk.B[a]!;
    for (let j = 0; j < n; j++) v[j] = hf.x[a]![(k - 1) * n + j]!;
    unpackCov(n, hf.P[a]!, k - 1, B, 0);
    predict(n, F, Q, v, 0, B, 0, xa, i * n, Pa, i * ps, wk.ks[a]!);
  } else predict(n, F, Q, xa, (i - 1) * n, Pa, (i - 1) * ps, xa, i * n, Pa, i * ps, wk.ks[a]!);
}

/**
 * The smoothed state of axis a at w1 (window slot `last`): the trial's filtered state fused with
 * the information the fixes after w1 carry back (Fraser & Potter 1969, see the file header).
 * False where an inverse fails (positive definiteness lost).
 */
function fuseWithLater(n: number, a: number, hf: FilterHistory, hs: FilterHistory, w1: number, last: number, win: WindowStates, wk: WindowTrialWork): boolean {
  const nn = n * n;
  const L = wk.L[a]!, A = wk.A[a]!, B = wk.B[a]!, C = wk.C[a]!, v = wk.v[a]!;
  const invS = wk.invS[a]!, invF = wk.invF[a]!, invNew = wk.invNew[a]!;
  const xa = win.X[a]!, Pa = win.PP[a]!;
  // Ps⁻¹ and Pf⁻¹ of the current histories at w1, and Pf'⁻¹ of the trial
  unpackCov(n, hs.P[a]!, w1, C, 0);
  if (!spdInverse(n, C, 0, L, invS)) return false;
  unpackCov(n, hf.P[a]!, w1, C, 0);
  if (!spdInverse(n, C, 0, L, invF)) return false;
  if (n === 3) unpackCov(3, Pa, last, C, 0);
  else C.set(Pa.subarray(last * nn, last * nn + nn));
  if (!spdInverse(n, C, 0, L, invNew)) return false;
  // information of the fused estimate: A = Pf'⁻¹ + (Ps⁻¹ − Pf⁻¹) (symmetrized);
  // v = Pf'⁻¹ xf' + Ps⁻¹ xs − Pf⁻¹ xf
  for (let r = 0; r < n; r++) {
    let acc = 0;
    for (let c = 0; c < n; c++) {
      A[r * n + c] = invNew[r * n + c]! + (invS[r * n + c]! - invF[r * n + c]!);
      acc += invNew[r * n + c]! * xa[last * n + c]! + invS[r * n + c]! * hs.x[a]![w1 * n + c]! - invF[r * n + c]! * hf.x[a]![w1 * n + c]!;
    }
    v[r] = acc;
  }
  for (let r = 0; r < n; r++)
    for (let c = r + 1; c < n; c++) {
      const sym = 0.5 * (A[r * n + c]! + A[c * n + r]!);
      A[r * n + c] = sym;
      A[c * n + r] = sym;
    }
  // Ps' = A⁻¹, xs' = Ps' v (solves with A's factor: the Cholesky solve keeps it symmetric positive definite or fails)
  if (!spdInverse(n, A, 0, L, B)) return false;
  choleskySolve(n, L, v, 1);
  for (let j = 0; j < n; j++) xa[last * n + j] = v[j]!;
  if (n === 3) for (let r = 0; r < 3; r++) for (let c = r; c < 3; c++) Pa[last * 6 + covIndex(3, r, c)] = B[r * 3 + c]!;
  else Pa.set(B, last * nn);
  return true;
}
