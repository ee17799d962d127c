/**
 * A plain textbook Kalman filter and Rauch–Tung–Striebel smoother over a segment, in ml-matrix
 * (full matrices, no packing, no sharing between axes, no caches), for checking forwardFilter and
 * the smoothers against the equations rather than against another implementation:
 *   predict  x⁻ = F x,  P⁻ = F P Fᵀ + Q  (Q with any re-acquisition noise of the step on its diagonal)
 *   innovate ν = z − H x⁻,  S = H P⁻ Hᵀ + R
 *   update   K = P⁻ Hᵀ S⁻¹,  x = x⁻ + K ν,  P = (I − K H) P⁻ (I − K H)ᵀ + K R Kᵀ  (Joseph form)
 *   smooth   G = Pₖ Fᵀ (P⁻ₖ₊₁)⁻¹,  xˢₖ = xₖ + G (xˢₖ₊₁ − x⁻ₖ₊₁),  Pˢₖ = Pₖ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ
 * Each axis is its own filter (independent axes, diagonal R); which fixes update the state is given
 * (the decisions of an ungated or held-fixed pass), so there is no gate here.
 * Sources: Bar-Shalom, Li, Kirubarajan (2001), "Estimation with Applications to Tracking and
 * Navigation" §5.2 (Joseph form §5.2.3); Rauch, Tung, Striebel (1965), AIAA J. 3(8):1445–1450;
 * Särkkä (2013) Theorem 8.2. The prior (position at the first fix, diagonal variances) is this
 * project's (writePrior in track-filter.ts); common practice.
 */
import { expect } from 'vitest';
import { CholeskyDecomposition, Matrix } from 'ml-matrix';
import type { AxisModel } from '../../src/models/axis-model.js';
import { covIndex, type FilterHistory, type FilterOptions, type SegmentData } from '../../src/estimation/track-filter.js';

/** States and covariances per axis and epoch, with the innovation statistics of each epoch. */
export interface TextbookTrack {
  x: Matrix[][];
  P: Matrix[][];
  /** The covariances the step to each epoch started from: the filter's predicted ones (the prior at 0); for the smoother, the filtered ones. */
  P0: Matrix[][];
  /** Σ ν²/S over the axes measured at epochs with use ≠ 0 (NaN elsewhere); dof the axes counted. */
  nis: Float64Array;
  dof: Uint8Array;
  /** Σ (log 2π + log S) over the same axes. */
  logDet: Float64Array;
}

/** (A + Aᵀ) / 2: rounding leaves products like F P Fᵀ a few ulps from symmetric (symmetrizing is common practice). */
function sym(A: Matrix): Matrix {
  return A.clone().add(A.transpose()).mul(0.5);
}

/** F and Q of the step ending at epoch k for axis a (q scale and re-acquisition noise included). */
function step(m: AxisModel, data: SegmentData, k: number, a: number, qScale: Float64Array[] | null | undefined, extraQ: Map<number, Float64Array[]> | undefined): { F: Matrix; Q: Matrix } {
  const n = m.n;
  const dt = data.tSec[k]! - data.tSec[k - 1]!;
  const f = new Float64Array(n * n), q = new Float64Array(n * n);
  m.fillF(dt, f);
  m.fillQ(dt, q, qScale ? qScale[a]![k]! : 1);
  const Q = Matrix.from1DArray(n, n, q);
  const e = extraQ?.get(k);
  if (e) for (let i = 0; i < n; i++) Q.set(i, i, Q.get(i, i) + e[a]![i]!);
  return { F: Matrix.from1DArray(n, n, f), Q };
}

/**
 * The filter over `data`, updating at epoch k the axes measured there when update[k] is 1 (and
 * only predicting otherwise). R = r · rScale; the q scale and `extraQ` as in FilterOptions and
 * FilterHistory.
 */
export function textbookFilter(models: AxisModel[], data: SegmentData, opt: FilterOptions, update: ArrayLike<number>, extraQ?: Map<number, Float64Array[]>): TextbookTrack {
  const N = data.N;
  const t: TextbookTrack = { x: models.map(() => []), P: models.map(() => []), P0: models.map(() => []), nis: new Float64Array(N).fill(NaN), dof: new Uint8Array(N), logDet: new Float64Array(N) };
  const x = models.map((m, a) => {
    const z0 = data.z[a]![0]!;
    return Matrix.columnVector(Array.from({ length: m.n }, (_, i) => (i === 0 && Number.isFinite(z0) ? z0 : 0)));
  });
  const P = models.map((m) => Matrix.diag(Array.from({ length: m.n }, (_, i) => (i < m.nMotion ? opt.priorVar[i]! : m.params.gm!.sigmaM ** 2))));
  for (let k = 0; k < N; k++) {
    let nis = 0, dof = 0, logDet = 0;
    models.forEach((m, a) => {
      if (k > 0) {
        const { F, Q } = step(m, data, k, a, opt.qScale, extraQ);
        x[a] = F.mmul(x[a]!);
        P[a] = sym(F.mmul(P[a]!).mmul(F.transpose()).add(Q));
      }
      t.P0[a]!.push(P[a]!);
      const z = data.z[a]![k]!;
      if (data.use[k] === 0 || !Number.isFinite(z)) return;
      const H = new Matrix([Array.from(m.h)]);
      const R = data.r[a]![k]! * (opt.rScale ? opt.rScale[a]! : 1);
      const nu = z - H.mmul(x[a]!).get(0, 0);
      const S = H.mmul(P[a]!).mmul(H.transpose()).get(0, 0) + R;
      nis += (nu * nu) / S;
      logDet += Math.log(2 * Math.PI) + Math.log(S);
      dof++;
      if (update[k] !== 1) return;
      const K = P[a]!.mmul(H.transpose()).div(S);
      x[a] = x[a]!.clone().add(K.clone().mul(nu));
      const IKH = Matrix.eye(m.n, m.n).sub(K.mmul(H));
      P[a] = sym(IKH.mmul(P[a]!).mmul(IKH.transpose()).add(K.mmul(K.transpose()).mul(R)));
    });
    if (dof > 0) {
      t.nis[k] = nis;
      t.dof[k] = dof;
      t.logDet[k] = logDet;
    }
    models.forEach((_, a) => {
      t.x[a]!.push(x[a]!);
      t.P[a]!.push(P[a]!);
    });
  }
  return t;
}

/** The RTS smoother over a textbook filter's track (the same steps: q scale and `extraQ` as given). */
export function textbookSmoother(models: AxisModel[], data: SegmentData, f: TextbookTrack, qScale: Float64Array[] | null | undefined, extraQ?: Map<number, Float64Array[]>): TextbookTrack {
  const N = data.N;
  const s: TextbookTrack = { x: models.map(() => new Array<Matrix>(N)), P: models.map(() => new Array<Matrix>(N)), P0: f.P, nis: f.nis, dof: f.dof, logDet: f.logDet };
  models.forEach((m, a) => {
    s.x[a]![N - 1] = f.x[a]![N - 1]!;
    s.P[a]![N - 1] = f.P[a]![N - 1]!;
    for (let k = N - 2; k >= 0; k--) {
      const { F, Q } = step(m, data, k + 1, a, qScale, extraQ);
      const xf = f.x[a]![k]!, Pf = f.P[a]![k]!;
      const xp = F.mmul(xf);
      const Pp = sym(F.mmul(Pf).mmul(F.transpose()).add(Q));
      // G = Pₖ Fᵀ (P⁻ₖ₊₁)⁻¹ as the solution of P⁻ₖ₊₁ Gᵀ = F Pₖ (Cholesky; Särkkä 2013 §8.2, common practice)
      const G = new CholeskyDecomposition(Pp).solve(F.mmul(Pf)).transpose();
      s.x[a]![k] = xf.clone().add(G.mmul(s.x[a]![k + 1]!.clone().sub(xp)));
      s.P[a]![k] = sym(Pf.clone().add(G.mmul(s.P[a]![k + 1]!.clone().sub(Pp)).mmul(G.transpose())));
    }
  });
  return s;
}

/**
 * Every epoch's state and covariance of `h` (history layout) within relTol of the textbook track,
 * norm-wise: |ΔP| ≤ relTol · the largest element of that epoch's textbook covariance or of the one
 * the step started from (P0: rounding error scales with the operands, e.g. after a gap), |Δx| ≤
 * relTol · the larger of the state's largest element and the square root of that covariance scale
 * (a position crossing 0 m is still known to its standard deviation). Returns the largest ratio seen.
 */
export function expectNearTrack(models: AxisModel[], h: FilterHistory, t: TextbookTrack, relTol: number): number {
  let worst = 0;
  models.forEach((m, a) => {
    const n = m.n;
    const ps = n === 3 ? 6 : n * n;
    for (let k = 0; k < h.N; k++) {
      const tx = t.x[a]![k]!, tP = t.P[a]![k]!;
      const sP = Math.max(...tP.to1DArray().map(Math.abs), ...t.P0[a]![k]!.to1DArray().map(Math.abs));
      const sx = Math.max(...tx.to1DArray().map(Math.abs), Math.sqrt(sP));
      for (let i = 0; i < n; i++) {
        const e = Math.abs(h.x[a]![k * n + i]! - tx.get(i, 0)) / sx;
        if (!(e <= relTol)) expect.fail(`axis ${a} epoch ${k} x[${i}]: ${h.x[a]![k * n + i]} vs ${tx.get(i, 0)} (${e.toExponential(2)} relative)`);
        worst = Math.max(worst, e);
        for (let j = 0; j < n; j++) {
          const ep = Math.abs(h.P[a]![k * ps + covIndex(n, i, j)]! - tP.get(i, j)) / sP;
          if (!(ep <= relTol)) expect.fail(`axis ${a} epoch ${k} P[${i}][${j}]: ${h.P[a]![k * ps + covIndex(n, i, j)]} vs ${tP.get(i, j)} (${ep.toExponential(2)} relative)`);
          worst = Math.max(worst, ep);
        }
      }
    }
  });
  return worst;
}
