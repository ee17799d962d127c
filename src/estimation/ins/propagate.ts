/**
 * The time update of the IMU-aided filter: the strapdown mechanization of the nominal state at the
 * IMU rate (../../models/ins/mechanization.ts), and the error covariance propagated in steps of at
 * most `propagationStepSec` with F taken at the step's mean C_nb and f^n — the error model varies
 * slowly against the IMU rate, so the covariance need not follow every sample (Groves 2013 §14.2.4).
 *   P ← Φ P Φᵀ + Qd,  Φ_acc ← Φ Φ_acc,  b_GNSS ← e^{−Δt/τ} b_GNSS
 */
import { mechanizeRates, NAV_GM, type MechParams } from '../../models/ins/mechanization.js';
import { gmPhi } from '../../models/gauss-markov.js';
import { checkSize } from './check-size.js';
import { fillErrorF, type ErrorModelParams } from './error-model.js';
import { checkInsRecords, type InsScratch, type InsState } from './state.js';
import type { InsTimings } from './stats.js';

/**
 * Mechanize over w.rate[6] seconds with the mean rates w.rate[0..6) (nothing for a step that is not
 * positive), add the step to the sums of the covariance step and of the zero-angular-rate update, and
 * propagate the covariance once the sums span `propagationStepSec`.
 */
export function insAdvance(s: InsState, w: InsScratch, mech: MechParams, err: ErrorModelParams, propagationStepSec: number, tm?: InsTimings): void {
  checkSize('insAdvance', 'rate', w.rate, 7, 'fx, fy, fz, wx, wy, wz, Δt');
  const m = w.rate;
  const dt = m[6]!;
  if (!(dt > 0)) return;
  const ms = w.ms;
  mechanizeRates(s.nav, m, mech, ms);
  for (let i = 0; i < 9; i++) s.sumC[i] = s.sumC[i]! + ms.C[i]! * dt;
  for (let i = 0; i < 3; i++) s.sumF[i] = s.sumF[i]! + ms.fNav[i]! * dt;
  s.sumDt += dt;
  s.zaruSum[0] = s.zaruSum[0]! + m[3]! * dt;
  s.zaruSum[1] = s.zaruSum[1]! + m[4]! * dt;
  s.zaruSum[2] = s.zaruSum[2]! + m[5]! * dt;
  s.zaruDt += dt;
  s.tNav += dt;
  if (s.sumDt >= propagationStepSec) insPropagate(s, w, err, tm);
}

/** Covariance step over the time accumulated since the last one, with F at the interval means of C_nb and f^n. */
export function insPropagate(s: InsState, w: InsScratch, err: ErrorModelParams, tm?: InsTimings): void {
  checkInsRecords('insPropagate', s, w);
  const T = s.sumDt;
  if (!(T > 0)) return;
  const t0 = tm ? performance.now() : 0;
  const kf = w.kf;
  const inv = 1 / T;
  for (let i = 0; i < 9; i++) w.C[i] = s.sumC[i]! * inv;
  for (let i = 0; i < 3; i++) w.v3[i] = s.sumF[i]! * inv;
  fillErrorF(kf.F, w.C, w.v3, err);
  kf.discretize(T);
  kf.propagate();
  // Φ_acc ← Φ Φ_acc (the first step after an epoch: Φ_acc = Φ, the same value)
  kf.accumulate(s.phiAccIdentity);
  s.phiAccIdentity = false;
  // mean of the Gauss–Markov fix error decays: b ← e^{−Δt/τ} b
  const phiGm = gmPhi(T, err.gmTauSec);
  for (let i = 0; i < 3; i++) s.nav[NAV_GM + i] = s.nav[NAV_GM + i]! * phiGm;
  s.sumDt = 0;
  s.sumC.fill(0);
  s.sumF.fill(0);
  if (tm) tm.propagateMs += performance.now() - t0;
}
