/**
 * Rauch–Tung–Striebel fixed-interval smoother step.
 * Source: Rauch, Tung, Striebel, "Maximum likelihood estimates of linear dynamic systems",
 * AIAA Journal 3(8):1445–1450 (1965); notation of Särkkä, "Bayesian Filtering and Smoothing",
 * Cambridge 2013, Theorem 8.2.
 */
import { cholesky, choleskySolve } from './cholesky.js';
import { predict, type KalmanScratch } from './kalman.js';

export interface RtsScratch {
  n: number;
  xPred: Float64Array;
  PPred: Float64Array;
  L: Float64Array;
  /** Gᵀ, n×n */
  Gt: Float64Array;
  D: Float64Array;
  k: KalmanScratch;
}

export function makeRtsScratch(n: number, k: KalmanScratch): RtsScratch {
  return { n, xPred: new Float64Array(n), PPred: new Float64Array(n * n), L: new Float64Array(n * n), Gt: new Float64Array(n * n), D: new Float64Array(n * n), k };
}

/**
 * One backward step, in place: on entry (x, P) at offset k hold the filtered estimate of epoch k and
 * (x, P) at offset k+1 the smoothed estimate of epoch k+1; on exit offset k holds the smoothed one.
 *   x⁻ₖ₊₁ = F xₖ,  P⁻ₖ₊₁ = F Pₖ Fᵀ + Q
 *   G = Pₖ Fᵀ (P⁻ₖ₊₁)⁻¹
 *   xˢₖ = xₖ + G (xˢₖ₊₁ − x⁻ₖ₊₁)
 *   Pˢₖ = Pₖ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ
 * The prediction is recomputed here rather than stored, halving the forward history's memory.
 * Returns false if P⁻ₖ₊₁ is not positive definite.
 */
export function rtsStep(
  n: number,
  F: Float64Array,
  Q: Float64Array,
  x: Float64Array, xk: number, xk1: number,
  P: Float64Array, Pk: number, Pk1: number,
  s: RtsScratch,
): boolean {
  predict(n, F, Q, x, xk, P, Pk, s.xPred, 0, s.PPred, 0, s.k);
  // Cholesky solve instead of an explicit inverse: P⁻ Gᵀ = F Pₖ (P⁻ and Pₖ symmetric)
  if (!cholesky(n, s.PPred, 0, s.L)) return false;
  const Gt = s.Gt;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += F[i * n + m]! * P[Pk + m * n + j]!;
      Gt[i * n + j] = acc;
    }
  choleskySolve(n, s.L, Gt, n);
  // xˢₖ = xₖ + G (xˢₖ₊₁ − x⁻ₖ₊₁), with G[i][j] = Gt[j][i]
  const dx = s.k.w;
  for (let i = 0; i < n; i++) dx[i] = x[xk1 + i]! - s.xPred[i]!;
  for (let i = 0; i < n; i++) {
    let acc = 0;
    for (let j = 0; j < n; j++) acc += Gt[j * n + i]! * dx[j]!;
    x[xk + i] = x[xk + i]! + acc;
  }
  // D = Pˢₖ₊₁ − P⁻ₖ₊₁;  Pˢₖ = Pₖ + G D Gᵀ
  const D = s.D;
  for (let i = 0; i < n * n; i++) D[i] = P[Pk1 + i]! - s.PPred[i]!;
  const GD = s.k.B;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += Gt[m * n + i]! * D[m * n + j]!;
      GD[i * n + j] = acc;
    }
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += GD[i * n + m]! * Gt[m * n + j]!;
      const v = P[Pk + i * n + j]! + acc;
      P[Pk + i * n + j] = v;
      P[Pk + j * n + i] = v;
    }
  return true;
}
