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
 * is lost: the trial then reports failure instead of a number).
 * Epochs are ungated here: `use` is 0 (left out) or non-zero (used), as in the review's passes.
 */
import type { AxisModel } from '../models/axis-model.js';
import { cholesky, choleskySolve } from './cholesky.js';
import { innovation, makeScratch, predict, updateJoseph, type KalmanScratch } from './kalman.js';
import { makeRtsScratch, rtsStep, type RtsScratch } from './rts.js';
import { covIndex, covStride, stepMatrices, writePrior, type FilterHistory, type FilterOptions, type SegmentData } from './track-filter.js';

export interface WindowTrialWork {
  /** Per axis, full n×n layout, grown to the longest window: states and covariances of the window's epochs. */
  x: Float64Array[];
  P: Float64Array[];
  F: Float64Array[];
  Q: Float64Array[];
  ks: KalmanScratch[];
  rs: RtsScratch[];
  L: Float64Array[];
  A: Float64Array[];
  B: Float64Array[];
  v: Float64Array[];
  out1: Float64Array;
  /** A one-epoch history for the prior at a segment's first epoch. */
  prior: FilterHistory;
}

export function makeWindowTrialWork(models: AxisModel[]): WindowTrialWork {
  const nn = (m: AxisModel) => m.n * m.n;
  return {
    x: models.map(() => new Float64Array(0)),
    P: models.map(() => new Float64Array(0)),
    F: models.map((m) => new Float64Array(nn(m))),
    Q: models.map((m) => new Float64Array(nn(m))),
    ks: models.map((m) => makeScratch(m.n)),
    rs: models.map((m) => makeRtsScratch(m.n, makeScratch(m.n))),
    L: models.map((m) => new Float64Array(nn(m))),
    A: models.map((m) => new Float64Array(nn(m))),
    B: models.map((m) => new Float64Array(nn(m))),
    v: models.map((m) => new Float64Array(m.n)),
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

/** Epoch k of a history axis (packed layout) into full n×n at offset o of P. */
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
  const nAx = models.length;
  const rScale = opt.rScale ?? null;
  for (let a = 0; a < nAx; a++) {
    const n = models[a]!.n;
    if (wk.x[a]!.length < len * n) wk.x[a] = new Float64Array(len * n);
    if (wk.P[a]!.length < len * n * n) wk.P[a] = new Float64Array(len * n * n);
  }
  // ---- filtered states: unchanged before c0 ----
  for (let k = w0; k < c0; k++) {
    const i = k - w0;
    for (let a = 0; a < nAx; a++) {
      const n = models[a]!.n;
      for (let j = 0; j < n; j++) wk.x[a]![i * n + j] = hf.x[a]![k * n + j]!;
      unpackCov(n, hf.P[a]!, k, wk.P[a]!, i * n * n);
    }
  }
  // ---- forward from c0 under the new decisions ----
  for (let k = c0; k <= w1; k++) {
    const i = k - w0;
    if (k === 0) {
      // the segment's prior (as forwardFilter writes it)
      writePrior(models, data, opt, wk.prior);
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        for (let j = 0; j < n; j++) wk.x[a]![j] = wk.prior.x[a]![j]!;
        unpackCov(n, wk.prior.P[a]!, 0, wk.P[a]!, 0);
      }
    } else {
      stepMatrices(models, data, hf, k, opt.qScale, wk.F, wk.Q);
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        const xa = wk.x[a]!, Pa = wk.P[a]!;
        if (k === w0) {
          // the step from w0 − 1 (outside the window): from the history
          const v = wk.v[a]!, B = wk.B[a]!;
          for (let j = 0; j < n; j++) v[j] = hf.x[a]![(k - 1) * n + j]!;
          unpackCov(n, hf.P[a]!, k - 1, B, 0);
          predict(n, wk.F[a]!, wk.Q[a]!, v, 0, B, 0, xa, i * n, Pa, i * n * n, wk.ks[a]!);
        } else predict(n, wk.F[a]!, wk.Q[a]!, xa, (i - 1) * n, Pa, (i - 1) * n * n, xa, i * n, Pa, i * n * n, wk.ks[a]!);
      }
    }
    if (use[k] === 0) continue;
    for (let a = 0; a < nAx; a++) {
      const z = data.z[a]![k]!;
      if (!Number.isFinite(z)) continue;
      const m = models[a]!;
      const n = m.n;
      const r = data.r[a]![k]! * (rScale ? rScale[a]! : 1);
      const nu = innovation(n, m.h, z, r, wk.x[a]!, i * n, wk.P[a]!, i * n * n, wk.ks[a]!, wk.out1);
      updateJoseph(n, m.h, nu, wk.out1[0]!, r, wk.x[a]!, i * n, wk.P[a]!, i * n * n, wk.ks[a]!);
    }
  }
  // ---- smoothed state at w1: the new filtered one fused with the information from after w1 ----
  const last = len - 1;
  if (w1 < data.N - 1) {
    for (let a = 0; a < nAx; a++) {
      const n = models[a]!.n;
      const nn = n * n;
      const L = wk.L[a]!, A = wk.A[a]!, B = wk.B[a]!, v = wk.v[a]!;
      // Ps⁻¹ and Pf⁻¹ of the current histories at w1, and Pf'⁻¹ of the trial
      const cur = new Float64Array(nn);
      unpackCov(n, hs.P[a]!, w1, cur, 0);
      const invS = new Float64Array(nn);
      if (!spdInverse(n, cur, 0, L, invS)) return false;
      unpackCov(n, hf.P[a]!, w1, cur, 0);
      const invF = new Float64Array(nn);
      if (!spdInverse(n, cur, 0, L, invF)) return false;
      const invNew = new Float64Array(nn);
      if (!spdInverse(n, wk.P[a]!, last * nn, L, invNew)) return false;
      // information of the fused estimate: A = Pf'⁻¹ + Ps⁻¹ − Pf⁻¹ (symmetrized);
      // v = Pf'⁻¹ xf' + Ps⁻¹ xs − Pf⁻¹ xf
      for (let r = 0; r < n; r++) {
        let acc = 0;
        for (let c = 0; c < n; c++) {
          A[r * n + c] = invNew[r * n + c]! + (invS[r * n + c]! - invF[r * n + c]!);
          acc += invNew[r * n + c]! * wk.x[a]![last * n + c]! + invS[r * n + c]! * hs.x[a]![w1 * n + c]! - invF[r * n + c]! * hf.x[a]![w1 * n + c]!;
        }
        v[r] = acc;
      }
      for (let r = 0; r < n; r++)
        for (let c = r + 1; c < n; c++) {
          const s = 0.5 * (A[r * n + c]! + A[c * n + r]!);
          A[r * n + c] = s;
          A[c * n + r] = s;
        }
      // Ps' = A⁻¹, xs' = Ps' v (a solve with A's factor)
      if (!cholesky(n, A, 0, L)) return false;
      B.fill(0);
      for (let r = 0; r < n; r++) B[r * n + r] = 1;
      choleskySolve(n, L, B, n);
      choleskySolve(n, L, v, 1);
      for (let j = 0; j < nn; j++) wk.P[a]![last * nn + j] = B[j]!;
      for (let j = 0; j < n; j++) wk.x[a]![last * n + j] = v[j]!;
    }
  }
  // ---- RTS from w1 down to w0 ----
  for (let k = w1 - 1; k >= w0; k--) {
    const i = k - w0;
    stepMatrices(models, data, hf, k + 1, opt.qScale, wk.F, wk.Q);
    for (let a = 0; a < nAx; a++) {
      const n = models[a]!.n;
      if (!rtsStep(n, wk.F[a]!, wk.Q[a]!, wk.x[a]!, i * n, (i + 1) * n, wk.P[a]!, i * n * n, (i + 1) * n * n, wk.rs[a]!)) return false;
    }
  }
  // ---- out, in the history layout ----
  for (let a = 0; a < nAx; a++) {
    const n = models[a]!.n;
    const ps = covStride(n);
    for (let i = 0; i < len; i++) {
      for (let j = 0; j < n; j++) xOut[a]![i * n + j] = wk.x[a]![i * n + j]!;
      for (let r = 0; r < n; r++) for (let c = r; c < n; c++) {
        const v = wk.P[a]![i * n * n + r * n + c]!;
        POut[a]![i * ps + covIndex(n, r, c)] = v;
        if (ps === n * n) POut[a]![i * ps + covIndex(n, c, r)] = v;
      }
    }
  }
  return true;
}
