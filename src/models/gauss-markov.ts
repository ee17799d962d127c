/**
 * First-order Gauss–Markov (exponentially correlated) fix error b:  ḃ = −b/τ + w.
 * Exact discretization for a step Δt: b_{k+1} = φ·b_k + w_k, φ = e^{−Δt/τ},
 * Var(w_k) = σ²·(1 − φ²), so the stationary variance stays σ².
 * Source: Brown & Hwang, "Introduction to Random Signals and Applied Kalman Filtering", 4th ed.
 * (2012), §2.9 and example 4.3 (Gauss–Markov process).
 */

export interface GaussMarkovParams {
  sigmaM: number;
  tauSec: number;
}

/** φ = e^{−Δt/τ}. */
export function gmPhi(dtSec: number, tauSec: number): number {
  return Math.exp(-dtSec / tauSec);
}

/** Discrete driving-noise variance σ²(1 − e^{−2Δt/τ}). */
export function gmQ(dtSec: number, p: GaussMarkovParams): number {
  // −expm1 keeps precision for Δt ≪ τ
  return p.sigmaM * p.sigmaM * -Math.expm1((-2 * dtSec) / p.tauSec);
}
