/**
 * Kinematic motion models for one axis, driven by continuous white noise of the highest
 * derivative, discretized exactly for a time step Δt (irregular steps allowed).
 * Source: Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking and Navigation",
 * Wiley 2001, §6.2 (continuous white-noise acceleration, CWNA) and §6.3 (white-noise jerk, Wiener
 * process acceleration).
 */

export type MotionKind = 'cv' | 'ca';

/** Number of kinematic states of a motion model (position, velocity[, acceleration]). */
export function motionDim(kind: MotionKind): number {
  return kind === 'cv' ? 2 : 3;
}

/**
 * Write the motion block of F (n×n row-major, block at row/col 0) for step dtSec.
 * CV: F = [[1, Δt], [0, 1]];  CA: F = [[1, Δt, Δt²/2], [0, 1, Δt], [0, 0, 1]].
 */
export function fillMotionF(kind: MotionKind, dtSec: number, F: Float64Array, n: number): void {
  F[0] = 1;
  F[1] = dtSec;
  F[n] = 0;
  F[n + 1] = 1;
  if (kind === 'ca') {
    F[2] = 0.5 * dtSec * dtSec;
    F[n + 2] = dtSec;
    F[2 * n] = 0;
    F[2 * n + 1] = 0;
    F[2 * n + 2] = 1;
  }
}

/**
 * Write the motion block of Q for step dtSec and spectral density q.
 * CV (q in m²/s³): Q = q·[[Δt³/3, Δt²/2], [Δt²/2, Δt]].
 * CA (q in m²/s⁵): Q = q·[[Δt⁵/20, Δt⁴/8, Δt³/6], [Δt⁴/8, Δt³/3, Δt²/2], [Δt³/6, Δt²/2, Δt]].
 */
export function fillMotionQ(kind: MotionKind, dtSec: number, q: number, Q: Float64Array, n: number): void {
  const t = dtSec, t2 = t * t, t3 = t2 * t;
  if (kind === 'cv') {
    Q[0] = (q * t3) / 3;
    Q[1] = Q[n] = (q * t2) / 2;
    Q[n + 1] = q * t;
    return;
  }
  const t4 = t3 * t, t5 = t4 * t;
  Q[0] = (q * t5) / 20;
  Q[1] = Q[n] = (q * t4) / 8;
  Q[2] = Q[2 * n] = (q * t3) / 6;
  Q[n + 1] = (q * t3) / 3;
  Q[n + 2] = Q[2 * n + 1] = (q * t2) / 2;
  Q[2 * n + 2] = q * t;
}
