/**
 * The zero-velocity (ZUPT) and zero-angular-rate (ZARU) updates of the IMU-aided filter at an epoch
 * where the stationary detector (./stationary-detector.ts) sees the vehicle standing, after a χ² test
 * of the zero-velocity hypothesis against the filter's own prediction.
 *   ZUPT  z = 0 = v + w:                                H = [0, I, 0, 0, 0, 0]
 *   ZARU  ω̄ = b_g + C_bn ω_ie + w, var(w) = N²/T:       H = [0, 0, 0, 0, I, 0]
 * Sources: Groves (2013) §15.3 (ZUPT, ZARU) — from memory; rows in ./measurements.ts.
 */
import { cholesky } from '../cholesky.js';
import { NAV_BG, NAV_V } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { E_V, NE } from './error-model.js';
import { gyroBiasRow, velocityRow } from './measurements.js';
import { checkInsRecords, type InsScratch, type InsState } from './state.js';

/**
 * χ²₃ quantile at 0.9999 (21.11; a strict tail, common practice for a pseudo-measurement gate): a true stop passes
 * (the ZUPT innovation is the velocity drift of one epoch interval), a vehicle moving at a few dm/s
 * against a velocity sd of a few cm/s does not.
 */
export const ZUPT_GATE_NIS = 21.108;

/** The options of the zero updates (InsOptions fields of the same names). */
export interface ZeroUpdateParams {
  zuptSigmaMps: number;
  staticWindowSec: number;
  /** Gyro white-noise density (rad/s/√Hz) and ω_ie^n (rad/s). */
  gyroNoiseDensity: number;
  earthRateEnu: Float64Array;
}

/**
 * Variance of one zero-velocity pseudo-measurement: σ² · max(1, T_c/Δt). Its error is the standing
 * body's residual motion (engine shake, rocking as the vehicle is loaded), correlated over about the
 * detector's window T_c; updates closer together than that are not independent, so each carries the
 * share Δt/T_c of one window's information and the information per second does not grow with the
 * fix rate (at 1 Hz fixes and a 1 s window: σ² unchanged). Δt: the time since the last epoch.
 */
export function zuptVariance(s: InsState, zp: ZeroUpdateParams): number {
  const dt = s.zaruDt;
  const s2 = zp.zuptSigmaMps ** 2;
  return dt > 0 ? s2 * Math.max(1, zp.staticWindowSec / dt) : s2;
}

/**
 * The zero-velocity hypothesis against the filter's own prediction: χ² test (3 dof) of ν = 0 − v̂
 * with S = P_vv + R. Moving off (or creeping) after the detector's window last saw stillness, the
 * mechanized velocity grows by a·Δt each epoch and the test fails before a wrong update can pin the
 * velocity (and bias the accelerometer and tilt estimates through their correlations).
 */
export function zuptConsistent(s: InsState, w: InsScratch, zp: ZeroUpdateParams): boolean {
  checkInsRecords('zuptConsistent', s, w);
  const P = s.P, x = s.nav, dx = w.kf.dx, S = w.S3;
  const r = zuptVariance(s, zp);
  for (let i = 0; i < 3; i++) {
    // ν = −(v̂ + δv̂): innovation at the current estimate (after this epoch's fix update)
    w.nu[i] = -(x[NAV_V + i]! + dx[E_V + i]!);
    for (let j = 0; j < 3; j++) S[i * 3 + j] = P[(E_V + i) * NE + E_V + j]! + (i === j ? r : 0);
  }
  if (!cholesky(3, S, 0, w.L3)) return false;
  let nis = 0;
  const y = [0, 0, 0];
  for (let i = 0; i < 3; i++) {
    let v = w.nu[i]!;
    for (let j = 0; j < i; j++) v -= w.L3[i * 3 + j]! * y[j]!;
    y[i] = v / w.L3[i * 3 + i]!;
    nis += y[i]! * y[i]!;
  }
  return nis <= ZUPT_GATE_NIS;
}

/**
 * Zero velocity (three scalar updates) and, over a positive time since the last epoch, zero angular
 * rate (three more, against the gyro mean of that time). Needs w.C = Ĉ_nb at the epoch.
 */
export function insZeroVelocityUpdate(s: InsState, w: InsScratch, zp: ZeroUpdateParams): void {
  checkInsRecords('insZeroVelocityUpdate', s, w);
  checkSize('insZeroVelocityUpdate', 'earthRateEnu', zp.earthRateEnu, 3, 'ENU');
  const x = s.nav, C = w.C, kf = w.kf, h = kf.h;
  const r = zuptVariance(s, zp);
  for (let a = 0; a < 3; a++) {
    velocityRow(a, h);
    kf.scalarUpdate(-x[NAV_V + a]!, r);
  }
  if (s.zaruDt > 0) {
    const we = zp.earthRateEnu;
    // gyro mean over the epoch interval ≈ b_g + C_bn ω_ie + noise of variance N²/T
    const rz = zp.gyroNoiseDensity ** 2 / s.zaruDt + 1e-10;
    for (let a = 0; a < 3; a++) {
      const earth = C[a]! * we[0]! + C[3 + a]! * we[1]! + C[6 + a]! * we[2]!;
      gyroBiasRow(a, h);
      kf.scalarUpdate(s.zaruSum[a]! / s.zaruDt - earth - x[NAV_BG + a]!, rz);
    }
  }
}
