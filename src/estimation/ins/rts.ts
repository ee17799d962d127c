/**
 * Backward Rauch–Tung–Striebel step on the error state of the IMU-aided filter, with the transition
 * Φ and the predicted covariance P⁻ stored per epoch (accumulated over the IMU samples between
 * epochs), so the smoother's memory is per epoch, not per IMU sample.
 * With closed-loop corrections the filtered error state is zero after each reset; the smoothed error
 * of epoch k relative to its filtered nominal is
 *   G = Pₖ⁺ Φᵀ (P⁻ₖ₊₁)⁻¹,  δxˢₖ = G (δxˢₖ₊₁ + δx̂ₖ₊₁),  Pˢₖ = Pₖ⁺ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ,
 * where δx̂ₖ₊₁ is the correction the filter applied at k+1 (δxˢₖ₊₁ + δx̂ₖ₊₁ is then the smoothed error
 * relative to the predicted nominal, to first order).
 * Sources: Rauch, Tung, Striebel, AIAA J. 3(8), 1965; Särkkä (2013) Th. 8.2; Shin (2005) §4 (RTS on
 * the INS error state) — from memory.
 */
import { cholesky, choleskySolve } from '../cholesky.js';
import { checkSize } from './check-size.js';
import { NE, NE_SHAPE } from './error-model.js';

export interface InsRtsScratch {
  L: Float64Array;
  Gt: Float64Array;
  D: Float64Array;
  GD: Float64Array;
}

export function makeInsRtsScratch(): InsRtsScratch {
  const m = NE * NE;
  return { L: new Float64Array(m), Gt: new Float64Array(m), D: new Float64Array(m), GD: new Float64Array(m) };
}

/**
 * One step. Inputs: Pf = Pₖ⁺, Pm = P⁻ₖ₊₁, Phi (k→k+1), Ps = Pˢₖ₊₁ (full 18×18), dNext = δxˢₖ₊₁ + δx̂ₖ₊₁.
 * Outputs: dx = δxˢₖ and PsOut = Pˢₖ (may alias Pf). Returns false when P⁻ₖ₊₁ is not positive definite.
 */
export function insRtsStep(Pf: Float64Array, Pm: Float64Array, Phi: Float64Array, Ps: Float64Array, dNext: Float64Array, dx: Float64Array, PsOut: Float64Array, s: InsRtsScratch): boolean {
  checkSize('insRtsStep', 'Pf', Pf, NE * NE, NE_SHAPE);
  checkSize('insRtsStep', 'Pm', Pm, NE * NE, NE_SHAPE);
  checkSize('insRtsStep', 'Phi', Phi, NE * NE, NE_SHAPE);
  checkSize('insRtsStep', 'Ps', Ps, NE * NE, NE_SHAPE);
  checkSize('insRtsStep', 'PsOut', PsOut, NE * NE, NE_SHAPE);
  checkSize('insRtsStep', 'dNext', dNext, NE, 'error state');
  checkSize('insRtsStep', 'dx', dx, NE, 'error state');
  const n = NE;
  // Cholesky solve instead of an explicit inverse: P⁻ Gᵀ = Φ Pₖ⁺
  if (!cholesky(n, Pm, 0, s.L)) return false;
  const Gt = s.Gt;
  Gt.fill(0);
  for (let i = 0; i < n; i++)
    for (let m = 0; m < n; m++) {
      const f = Phi[i * n + m]!;
      if (f === 0) continue;
      for (let j = 0; j < n; j++) Gt[i * n + j] = Gt[i * n + j]! + f * Pf[m * n + j]!;
    }
  choleskySolve(n, s.L, Gt, n);
  // δxˢₖ = G dNext, G[i][j] = Gt[j][i]
  for (let i = 0; i < n; i++) {
    let acc = 0;
    for (let j = 0; j < n; j++) acc += Gt[j * n + i]! * dNext[j]!;
    dx[i] = acc;
  }
  // D = Pˢₖ₊₁ − P⁻ₖ₊₁
  const D = s.D;
  for (let i = 0; i < n * n; i++) D[i] = Ps[i]! - Pm[i]!;
  // GD = G D
  const GD = s.GD;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += Gt[m * n + i]! * D[m * n + j]!;
      GD[i * n + j] = acc;
    }
  // Pˢₖ = Pₖ⁺ + G D Gᵀ, symmetric by construction (written from the upper triangle)
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = 0;
      for (let m = 0; m < n; m++) acc += GD[i * n + m]! * Gt[m * n + j]!;
      const v = Pf[i * n + j]! + acc;
      PsOut[i * n + j] = v;
      PsOut[j * n + i] = v;
    }
  return true;
}
