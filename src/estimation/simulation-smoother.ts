/**
 * Simulation smoother by forward filtering, backward sampling (FFBS): whole state paths drawn from
 * the joint smoothing posterior p(x₀ … x_N | y₁ … y_N) of a linear Gaussian state-space model, from
 * the forward filter's stored moments (xₖ|ₖ, Pₖ|ₖ) and the step matrices F, Q.
 * Sources: Carter & Kohn, "On Gibbs sampling for state space models", Biometrika 81(3):541–553
 * (1994); Frühwirth-Schnatter, "Data augmentation and dynamic linear models", J. Time Series
 * Analysis 15(2):183–202 (1994); notation of Särkkä, "Bayesian Filtering and Smoothing" (2013), §8.
 *
 * The backward conditional of epoch k given the draw at k + 1 and the data up to k:
 *   P⁻ = F Pₖ|ₖ Fᵀ + Q
 *   G  = Pₖ|ₖ Fᵀ (P⁻)⁻¹                       (the RTS smoother gain)
 *   xₖ | xₖ₊₁, y₁:ₖ ~ N(xₖ|ₖ + G (xₖ₊₁ − F xₖ|ₖ),  Pₖ|ₖ − G P⁻ Gᵀ)
 * The gain and the factor of the conditional covariance do not depend on the draw, so they are
 * computed once per epoch (backwardGain) and shared by every draw (backwardDraw).
 */
import { cholesky, choleskySolve } from './cholesky.js';

export interface BackwardScratch {
  n: number;
  /** P⁻ and its Cholesky factor (n×n). */
  PPred: Float64Array;
  L: Float64Array;
  /** Gᵀ during the solve (n×n). */
  Gt: Float64Array;
  /** Conditional covariance C (n×n). */
  C: Float64Array;
  /** F Pₖ (n×n). */
  FP: Float64Array;
  /** F x (n). */
  Fx: Float64Array;
}

export function makeBackwardScratch(n: number): BackwardScratch {
  return { n, PPred: new Float64Array(n * n), L: new Float64Array(n * n), Gt: new Float64Array(n * n), C: new Float64Array(n * n), FP: new Float64Array(n * n), Fx: new Float64Array(n) };
}

/**
 * Positive semi-definite Cholesky factor A = L Lᵀ (L lower, n×n): a pivot below tolRel times the
 * largest diagonal of A is a direction with no variance (Q has none for a quiet platform, q → 0);
 * its column is set to zero instead of failing. Golub & Van Loan (2013) §4.2.8 (semidefinite case).
 */
export function choleskyPsd(n: number, A: Float64Array, L: Float64Array, tolRel = 1e-12): void {
  let dmax = 0;
  for (let i = 0; i < n; i++) dmax = Math.max(dmax, A[i * n + i]!);
  const tol = tolRel * dmax;
  L.fill(0, 0, n * n);
  for (let j = 0; j < n; j++) {
    let d = A[j * n + j]!;
    for (let k = 0; k < j; k++) d -= L[j * n + k]! * L[j * n + k]!;
    // rounding can leave a tiny negative pivot on a direction of zero variance
    if (!(d > tol)) continue;
    const ljj = Math.sqrt(d);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = A[i * n + j]!;
      for (let k = 0; k < j; k++) s -= L[i * n + k]! * L[j * n + k]!;
      L[i * n + j] = s / ljj;
    }
  }
}

/**
 * Gain and conditional moments of the backward step at epoch k (full n×n row-major P at offset Pk,
 * x at offset xk). Writes G (n×n), c = xₖ|ₖ − G F xₖ|ₖ (n; the conditional mean is c + G xₖ₊₁) and
 * Lc (n×n lower, Lc Lcᵀ = Pₖ|ₖ − G P⁻ Gᵀ). Returns false if P⁻ is not positive definite.
 */
export function backwardGain(
  n: number,
  F: Float64Array,
  Q: Float64Array,
  x: Float64Array, xk: number,
  P: Float64Array, Pk: number,
  G: Float64Array,
  c: Float64Array,
  Lc: Float64Array,
  s: BackwardScratch,
): boolean {
  const PPred = s.PPred, Gt = s.Gt, C = s.C, FP = s.FP;
  // FP = F Pₖ (into Gt, it becomes Gᵀ after the solve: P⁻ Gᵀ = F Pₖ, P⁻ and Pₖ symmetric)
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += F[i * n + m]! * P[Pk + m * n + j]!;
      Gt[i * n + j] = acc;
      FP[i * n + j] = acc;
    }
  // P⁻ = (F Pₖ) Fᵀ + Q
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = Q[i * n + j]!;
      for (let m = 0; m < n; m++) acc += Gt[i * n + m]! * F[j * n + m]!;
      PPred[i * n + j] = acc;
      PPred[j * n + i] = acc;
    }
  // Cholesky solve instead of an explicit inverse (halves the rounding error, fails loudly)
  if (!cholesky(n, PPred, 0, s.L)) return false;
  choleskySolve(n, s.L, Gt, n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) G[i * n + j] = Gt[j * n + i]!;
  // C = Pₖ − G P⁻ Gᵀ = Pₖ − G (F Pₖ): the second form needs one product; symmetrized
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += G[i * n + m]! * FP[m * n + j]!;
      const v = P[Pk + i * n + j]! - acc;
      C[i * n + j] = v;
      C[j * n + i] = v;
    }
  choleskyPsd(n, C, Lc);
  backwardOffset(n, F, G, x, xk, c, s.Fx);
  return true;
}

/**
 * The constant part of the backward conditional mean, c = xₖ|ₖ − G F xₖ|ₖ (n), for a gain G of
 * backwardGain (an axis that shares another's gain and covariance has its own filtered x).
 */
export function backwardOffset(n: number, F: Float64Array, G: Float64Array, x: Float64Array, xk: number, c: Float64Array, Fx: Float64Array): void {
  for (let i = 0; i < n; i++) {
    let acc = 0;
    for (let m = 0; m < n; m++) acc += F[i * n + m]! * x[xk + m]!;
    Fx[i] = acc;
  }
  for (let i = 0; i < n; i++) {
    let acc = x[xk + i]!;
    for (let m = 0; m < n; m++) acc -= G[i * n + m]! * Fx[m]!;
    c[i] = acc;
  }
}

/**
 * One draw's backward step: out = c + G xₖ₊₁ + Lc ξ, ξ ~ N(0, I) (n values at xi).
 * xNext at offset o1, out at offset o0 (may be the same array).
 */
export function backwardDraw(n: number, G: Float64Array, c: Float64Array, Lc: Float64Array, xNext: Float64Array, o1: number, xi: Float64Array, out: Float64Array, o0: number): void {
  for (let i = 0; i < n; i++) {
    let acc = c[i]!;
    for (let m = 0; m < n; m++) acc += G[i * n + m]! * xNext[o1 + m]!;
    // Lc lower triangular: only m ≤ i
    for (let m = 0; m <= i; m++) acc += Lc[i * n + m]! * xi[m]!;
    out[o0 + i] = acc;
  }
}

/** A draw from N(x, P) (P full n×n at Pk): out = x + L ξ with L the (semi-definite) factor of P. */
export function gaussianDraw(n: number, x: Float64Array, xk: number, L: Float64Array, xi: Float64Array, out: Float64Array, o0: number): void {
  for (let i = 0; i < n; i++) {
    let acc = x[xk + i]!;
    for (let m = 0; m <= i; m++) acc += L[i * n + m]! * xi[m]!;
    out[o0 + i] = acc;
  }
}
