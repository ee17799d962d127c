/**
 * The error model's discretization and covariance products in their plain dense form (loops that skip
 * zeros element by element): the reference of the nonzero-list kernels in
 * src/estimation/ins/error-model.ts, which must equal them bit for bit.
 */
import { gmPhi, gmQ } from '../../src/models/gauss-markov.js';
import { E_A, E_BA, E_BG, E_GM, E_P, E_V, NE, type DiscScratch, type ErrorModelParams } from '../../src/estimation/ins/error-model.js';

/** Diagonal of the continuous noise Qc (the accelerometer/gyro white noise maps through Ĉ, which leaves an isotropic density unchanged). */
function fillQcDiag(qc: Float64Array, mp: ErrorModelParams): void {
  for (let i = 0; i < 3; i++) {
    qc[E_P + i] = 0;
    qc[E_V + i] = mp.accelNoiseDensity ** 2;
    qc[E_A + i] = mp.gyroNoiseDensity ** 2;
    qc[E_BA + i] = mp.accelBiasWalk ** 2;
    qc[E_BG + i] = mp.gyroBiasWalk ** 2;
    qc[E_GM + i] = 0;
  }
}

/** Φ and Qd (18×18 each, fully overwritten) for a step Δt with the continuous F. */
export function discretizeDense(F: Float64Array, dtSec: number, mp: ErrorModelParams, Phi: Float64Array, Qd: Float64Array, s: DiscScratch): void {
  const n = NE;
  const t = dtSec, t2 = t * t, t3 = t2 * t;
  const F2 = s.F2;
  // F² (F is sparse: skip zeros)
  F2.fill(0);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const f = F[i * n + k]!;
      if (f === 0) continue;
      for (let j = 0; j < n; j++) F2[i * n + j] += f * F[k * n + j]!;
    }
  // F³ = F² F (the third hop carries gyro bias → attitude → velocity → position)
  const F3 = s.F3;
  F3.fill(0);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const f = F2[i * n + k]!;
      if (f === 0) continue;
      for (let j = 0; j < n; j++) F3[i * n + j] += f * F[k * n + j]!;
    }
  // Φ = I + FΔt + ½F²Δt² + ⅙F³Δt³
  for (let i = 0; i < n * n; i++) Phi[i] = F[i]! * t + 0.5 * F2[i]! * t2 + (F3[i]! * t3) / 6;
  for (let i = 0; i < n; i++) Phi[i * n + i] += 1;
  const qc = s.qc;
  fillQcDiag(qc, mp);
  const FQ = s.FQ;
  // F Qc (Qc diagonal)
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) FQ[i * n + j] = F[i * n + j]! * qc[j]!;
  // Qd = QcΔt + ½(FQc + QcFᵀ)Δt² + ⅓ F Qc Fᵀ Δt³
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let fqf = 0;
      for (let k = 0; k < n; k++) {
        const a = FQ[i * n + k]!;
        if (a !== 0) fqf += a * F[j * n + k]!;
      }
      let v = 0.5 * (FQ[i * n + j]! + FQ[j * n + i]!) * t2 + (fqf * t3) / 3;
      if (i === j) v += qc[i]! * t;
      Qd[i * n + j] = v;
      Qd[j * n + i] = v;
    }
  // Gauss–Markov block exactly: φ = e^{−Δt/τ}, q = σ²(1 − e^{−2Δt/τ}); it is decoupled from the rest
  for (let i = 0; i < 3; i++) {
    const ii = E_GM + i;
    const sigma = i < 2 ? mp.gmSigmaHM : mp.gmSigmaVM;
    for (let j = 0; j < n; j++) {
      Phi[ii * n + j] = 0;
      Phi[j * n + ii] = 0;
      Qd[ii * n + j] = 0;
      Qd[j * n + ii] = 0;
    }
    Phi[ii * n + ii] = gmPhi(dtSec, mp.gmTauSec);
    // a tiny floor keeps the smoother's predicted covariance positive definite when σ = 0
    Qd[ii * n + ii] = Math.max(gmQ(dtSec, { sigmaM: sigma, tauSec: mp.gmTauSec }), 1e-12);
  }
}

/** P ← Φ P Φᵀ + Qd in place (18×18), skipping the many zeros of Φ; symmetrized from the upper triangle. */
export function propagateCovarianceDense(Phi: Float64Array, Qd: Float64Array, P: Float64Array, tmp: Float64Array): void {
  const n = NE;
  // tmp = Φ P
  tmp.fill(0);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const f = Phi[i * n + k]!;
      if (f === 0) continue;
      for (let j = 0; j < n; j++) tmp[i * n + j] += f * P[k * n + j]!;
    }
  // P = (Φ P) Φᵀ + Qd; upper triangle mirrored, since rounding would otherwise drift P from symmetry
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = Qd[i * n + j]!;
      for (let k = 0; k < n; k++) {
        const f = Phi[j * n + k]!;
        if (f !== 0) acc += tmp[i * n + k]! * f;
      }
      P[i * n + j] = acc;
      P[j * n + i] = acc;
    }
}

/** A ← Φ A (18×18), for the transition accumulated between epochs. */
export function leftMultiplyDense(Phi: Float64Array, A: Float64Array, tmp: Float64Array): void {
  const n = NE;
  tmp.fill(0);
  for (let i = 0; i < n; i++)
    for (let k = 0; k < n; k++) {
      const f = Phi[i * n + k]!;
      if (f === 0) continue;
      for (let j = 0; j < n; j++) tmp[i * n + j] += f * A[k * n + j]!;
    }
  A.set(tmp);
}

