/**
 * Backward Rauch–Tung–Striebel pass over a segment's forward history, in place (the filtered
 * estimate of epoch k is replaced by the smoothed one). Uses the same step matrices as the forward
 * pass, including the extra noise recorded at re-acquisitions.
 * Optionally returns, per axis and step, the expected kinematic process noise given all the data,
 * expressed as a local estimate of the spectral density q (the E-step of EM for Q; Shumway &
 * Stoffer, "An approach to time series smoothing and forecasting using the EM algorithm",
 * J. Time Series Analysis 3(4):253–264, 1982, eqs. (9)–(12)):
 *   E[w wᵀ] = (xˢₖ₊₁ − F xˢₖ)(…)ᵀ + Pˢₖ₊₁ − Pˢₖ₊₁ Gᵀ Fᵀ − F G Pˢₖ₊₁ + F Pˢₖ Fᵀ,   w = xₖ₊₁ − F xₖ
 *   q̂ₖ = tr(Q₁⁻¹ E[w wᵀ]) / m   over the m kinematic states, Q₁ = Q for q = 1.
 * Source: Rauch, Tung, Striebel (1965); Särkkä (2013) Theorem 8.2 (lag-one covariance: Theorem 12.?
 * "from memory": Cov(xₖ₊₁, xₖ | y₁:T) = Pˢₖ₊₁ Gₖᵀ).
 */
import type { AxisModel } from '../models/axis-model.js';
import { NumericalError } from '../errors.js';
import { cholesky, choleskySolve } from './cholesky.js';
import { makeScratch } from './kalman.js';
import { makeRtsScratch, rtsStep } from './rts.js';
import { makeStepCache, stepMatrices, type FilterHistory, type SegmentData } from './track-filter.js';

export function smoothInPlace(models: AxisModel[], data: SegmentData, h: FilterHistory, qScale?: Float64Array[] | null, qStat?: Float64Array[]): void {
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const rs = models.map((m) => makeRtsScratch(m.n, makeScratch(m.n)));
  const Q1 = models.map((m) => new Float64Array(m.n * m.n));
  const L1 = models.map((m) => new Float64Array(m.n * m.n));
  const Ew = models.map((m) => new Float64Array(m.n * m.n));
  const FG = models.map((m) => new Float64Array(m.n * m.n));
  const Qm = models.map((m) => new Float64Array(m.n * m.n));
  const cache = makeStepCache(models.length);
  for (let k = h.N - 2; k >= 0; k--) {
    stepMatrices(models, data, h, k + 1, qScale, F, Q, cache);
    for (let a = 0; a < models.length; a++) {
      const n = models[a]!.n;
      // keep the smoothed k+1 state before the step (it is not changed by the step)
      const ok = rtsStep(n, F[a]!, Q[a]!, h.x[a]!, k * n, (k + 1) * n, h.P[a]!, k * n * n, (k + 1) * n * n, rs[a]!);
      if (!ok) throw new NumericalError(`smoother: predicted covariance not positive definite at epoch ${k + 1}`);
      if (qStat) qStat[a]![k + 1] = expectedQ(models[a]!, data.tSec[k + 1]! - data.tSec[k]!, F[a]!, h, a, k, rs[a]!.Gt, Q1[a]!, L1[a]!, Ew[a]!, FG[a]!, Qm[a]!);
    }
  }
  if (qStat) for (const s of qStat) s[0] = NaN;
}

/** q̂ₖ for the step k → k+1 of axis a, from smoothed states at k and k+1 and Gᵀ in Gt. */
function expectedQ(m: AxisModel, dtSec: number, F: Float64Array, h: FilterHistory, a: number, k: number, Gt: Float64Array, Q1: Float64Array, L1: Float64Array, Ew: Float64Array, FG: Float64Array, Qm: Float64Array): number {
  const n = m.n;
  const x = h.x[a]!;
  const P = h.P[a]!;
  const xk = k * n, xk1 = (k + 1) * n, Pk = k * n * n, Pk1 = (k + 1) * n * n;
  // FG = F G  (G[i][j] = Gt[j][i])
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let l = 0; l < n; l++) acc += F[i * n + l]! * Gt[j * n + l]!;
      FG[i * n + j] = acc;
    }
  const mm = m.nMotion;
  // only the kinematic block of E[w wᵀ] is needed
  for (let i = 0; i < mm; i++) {
    let fxi = 0;
    for (let l = 0; l < n; l++) fxi += F[i * n + l]! * x[xk + l]!;
    const di = x[xk1 + i]! - fxi;
    for (let j = 0; j < mm; j++) {
      let fxj = 0;
      for (let l = 0; l < n; l++) fxj += F[j * n + l]! * x[xk + l]!;
      const dj = x[xk1 + j]! - fxj;
      // F G Pˢₖ₊₁ (i,j) and F Pˢₖ Fᵀ (i,j)
      let fgp = 0, fpf = 0;
      for (let l = 0; l < n; l++) {
        fgp += FG[i * n + l]! * P[Pk1 + l * n + j]!;
        let pf = 0;
        for (let r = 0; r < n; r++) pf += P[Pk + l * n + r]! * F[j * n + r]!;
        fpf += F[i * n + l]! * pf;
      }
      let fgpT = 0;
      for (let l = 0; l < n; l++) fgpT += FG[j * n + l]! * P[Pk1 + l * n + i]!;
      Ew[i * mm + j] = di * dj + P[Pk1 + i * n + j]! - fgpT - fgp + fpf;
    }
  }
  // tr(Q₁⁻¹ E[w wᵀ]) by a Cholesky solve on the kinematic block of Q for q = 1
  m.fillQ(dtSec, Q1, 1 / m.params.q);
  for (let i = 0; i < mm; i++) for (let j = 0; j < mm; j++) Qm[i * mm + j] = Q1[i * n + j]!;
  if (!cholesky(mm, Qm, 0, L1)) return NaN;
  const B = Ew.subarray(0, mm * mm);
  choleskySolve(mm, L1, B, mm);
  let tr = 0;
  for (let i = 0; i < mm; i++) tr += B[i * mm + i]!;
  return tr / mm;
}
