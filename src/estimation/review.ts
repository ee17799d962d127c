/**
 * Two-sided review of a fix against the smoothed track.
 * For a fix used by the smoother, the residual ν = z − H xˢ has covariance R − H Pˢ Hᵀ (the
 * smoothed estimate already contains the fix); for a fix left out it is R + H Pˢ Hᵀ (the estimate
 * is independent of it). T = Σ ν²/var over the measured axes is then χ²(m) under the model, a
 * deletion-residual test in the sense of regression diagnostics.
 * Source: de Jong, "The likelihood for a state space model", Biometrika 75:165–169 (1988) and
 * de Jong & Penzer, "Diagnosing shocks in time series", JASA 93:796–806 (1998) (smoothed
 * measurement disturbances and their variances); Teunissen, "Testing Theory" (2006), for the
 * two-sided (detection, identification) use.
 */
import type { AxisModel } from '../models/axis-model.js';
import { covIndex, covStride } from './track-filter.js';

/** Smallest share of R kept in the kept-fix residual variance, so a fix that alone determines the track cannot produce an infinite statistic. */
export const MIN_RESIDUAL_SHARE = 0.02;

/**
 * Statistic of epoch k. x and P hold smoothed states (N×n per axis, and N covariances in the
 * history layout of covStride/covIndex). Returns T and writes
 * the per-axis residuals into nuOut; dof through the return of countAxes.
 */
export function reviewStatistic(
  models: AxisModel[],
  x: Float64Array[],
  P: Float64Array[],
  k: number,
  z: Float64Array[],
  r: Float64Array[],
  used: boolean,
  nuOut: Float64Array,
): { T: number; dof: number } {
  let T = 0;
  let dof = 0;
  for (let a = 0; a < models.length; a++) {
    const zk = z[a]![k]!;
    if (!Number.isFinite(zk)) {
      nuOut[a] = NaN;
      continue;
    }
    const m = models[a]!;
    const n = m.n;
    const h = m.h;
    let hx = 0;
    let hph = 0;
    const Pk = k * covStride(n);
    if (n === 3) {
      // the loops below written out for n = 3 on the packed triangle [p00, p01, p02, p11, p12, p22],
      // in their order of operations (sums start from 0, as the loops' do), so the same bits
      const Pa = P[a]!, xa = x[a]!, xk = k * 3;
      const h0 = h[0]!, h1 = h[1]!, h2 = h[2]!;
      const p00 = Pa[Pk]!, p01 = Pa[Pk + 1]!, p02 = Pa[Pk + 2]!, p11 = Pa[Pk + 3]!, p12 = Pa[Pk + 4]!, p22 = Pa[Pk + 5]!;
      // H xˢ
      hx = 0 + h0 * xa[xk]! + h1 * xa[xk + 1]! + h2 * xa[xk + 2]!;
      // P hᵀ, row by row
      const c0 = 0 + p00 * h0 + p01 * h1 + p02 * h2;
      const c1 = 0 + p01 * h0 + p11 * h1 + p12 * h2;
      const c2 = 0 + p02 * h0 + p12 * h1 + p22 * h2;
      // H Pˢ Hᵀ
      hph = 0 + h0 * c0 + h1 * c1 + h2 * c2;
    } else for (let i = 0; i < n; i++) {
      hx += h[i]! * x[a]![k * n + i]!;
      let acc = 0;
      for (let j = 0; j < n; j++) acc += P[a]![Pk + covIndex(n, i, j)]! * h[j]!;
      hph += h[i]! * acc;
    }
    const rk = r[a]![k]!;
    // ν = z − H xˢ
    const nu = zk - hx;
    // var(ν) = R ∓ H Pˢ Hᵀ
    const v = used ? Math.max(rk - hph, MIN_RESIDUAL_SHARE * rk) : rk + hph;
    nuOut[a] = nu;
    T += (nu * nu) / v;
    dof++;
  }
  return { T, dof };
}

/**
 * The review statistic of every gated fix (offered[k] === 1) at epochs from..to (inclusive), into
 * T[k], dof[k] and threshold[k] = thr[dof]: reviewStatistic at each such epoch (used = kept[k] === 1),
 * with the arrays of the axes looked up once. Models with n = 3 on every axis take reviewStatistic's
 * n = 3 arithmetic written out here (the same operations, so the same bits; test/estimation/
 * review-statistic.test.ts); any other model goes through reviewStatistic.
 */
export function reviewStatisticsRange(
  models: AxisModel[],
  x: Float64Array[],
  P: Float64Array[],
  from: number,
  to: number,
  z: Float64Array[],
  r: Float64Array[],
  offered: Uint8Array,
  kept: Uint8Array,
  T: Float64Array,
  dof: Uint8Array,
  threshold: Float64Array,
  thr: readonly number[],
  nuScratch: Float64Array,
): void {
  const nAx = models.length;
  if (!models.every((m) => m.n === 3) || nAx > 3) {
    for (let k = from; k <= to; k++) {
      if (offered[k] !== 1) continue;
      const st = reviewStatistic(models, x, P, k, z, r, kept[k] === 1, nuScratch);
      T[k] = st.T;
      dof[k] = st.dof;
      threshold[k] = thr[st.dof]!;
    }
    return;
  }
  for (let k = from; k <= to; k++) {
    if (offered[k] !== 1) continue;
    const used = kept[k] === 1;
    let t = 0;
    let d = 0;
    const xk = k * 3, Pk = k * 6;
    for (let a = 0; a < nAx; a++) {
      const zk = z[a]![k]!;
      if (!Number.isFinite(zk)) continue;
      const h = models[a]!.h;
      const Pa = P[a]!, xa = x[a]!;
      const h0 = h[0]!, h1 = h[1]!, h2 = h[2]!;
      const p00 = Pa[Pk]!, p01 = Pa[Pk + 1]!, p02 = Pa[Pk + 2]!, p11 = Pa[Pk + 3]!, p12 = Pa[Pk + 4]!, p22 = Pa[Pk + 5]!;
      // H xˢ
      const hx = 0 + h0 * xa[xk]! + h1 * xa[xk + 1]! + h2 * xa[xk + 2]!;
      // P hᵀ, row by row
      const c0 = 0 + p00 * h0 + p01 * h1 + p02 * h2;
      const c1 = 0 + p01 * h0 + p11 * h1 + p12 * h2;
      const c2 = 0 + p02 * h0 + p12 * h1 + p22 * h2;
      // H Pˢ Hᵀ
      const hph = 0 + h0 * c0 + h1 * c1 + h2 * c2;
      const rk = r[a]![k]!;
      // ν = z − H xˢ
      const nu = zk - hx;
      // var(ν) = R ∓ H Pˢ Hᵀ
      const v = used ? Math.max(rk - hph, MIN_RESIDUAL_SHARE * rk) : rk + hph;
      t += (nu * nu) / v;
      d++;
    }
    T[k] = t;
    dof[k] = d;
    threshold[k] = thr[d]!;
  }
}
