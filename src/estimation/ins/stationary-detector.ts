/**
 * The stationary detector of the IMU-aided filter: a ring of the latest IMU samples (specific force
 * and angular rate, about `staticWindowSec` of them) and the test that the vehicle stands still —
 * small spread of both over the window, a gyro mean at the estimated bias, a mean specific force at
 * gravity (over the window and over its newest quarter) and a low estimated speed. Window tests of
 * this kind: Groves (2013) §15.3 (zero updates and the detection of a stationary vehicle) — from memory.
 */
import { gravityAt, NAV_BA, NAV_BG, NAV_P, NAV_V, type MechParams } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';

export interface StationaryDetector {
  /** 6 values (fx, fy, fz, wx, wy, wz) per sample, `cap` samples; null until the first interval sized it. */
  ring: Float64Array | null;
  cap: number;
  /** Next slot to write, and how many slots hold samples. */
  head: number;
  count: number;
}

/** The detector's thresholds (InsOptions fields of the same names). */
export interface StationaryLimits {
  mech: MechParams;
  staticAccelSdMps2: number;
  staticGyroRadps: number;
  staticMaxSpeedMps: number;
  staticAccelMeanMps2: number;
}

export function newStationaryDetector(): StationaryDetector {
  return { ring: null, cap: 0, head: 0, count: 0 };
}

/** Size the window from the first sample interval dtSec (bounded to 5..8192 samples). */
export function sizeDetector(d: StationaryDetector, windowSec: number, dtSec: number): void {
  d.cap = Math.max(5, Math.min(8192, Math.round(windowSec / dtSec)));
  d.ring = new Float64Array(6 * d.cap);
}

/** Push the rates of the sample at src[o..o+7) (t, fx, fy, fz, wx, wy, wz); nothing before the window is sized. */
export function pushDetector(d: StationaryDetector, src: Float64Array, o: number): void {
  const r = d.ring;
  if (!r) return;
  const h = 6 * d.head;
  for (let i = 0; i < 6; i++) r[h + i] = src[o + 1 + i]!;
  d.head = (d.head + 1) % d.cap;
  if (d.count < d.cap) d.count++;
}

/**
 * The IMU shows the vehicle stationary (window statistics) and the estimated speed is low. `nav`:
 * the nominal state (speed, biases, height); `Cnb`: its attitude as a DCM (row-major 3×3).
 */
export function detectorSaysStationary(d: StationaryDetector, nav: Float64Array, Cnb: Float64Array, lim: StationaryLimits): boolean {
  checkSize('detectorSaysStationary', 'Cnb', Cnb, 9, '3×3');
  const r = d.ring;
  const n = d.count;
  if (!r || n < Math.max(3, d.cap >> 1)) return false;
  const x = nav;
  if (Math.hypot(x[NAV_V]!, x[NAV_V + 1]!, x[NAV_V + 2]!) > lim.staticMaxSpeedMps) return false;
  const mean = [0, 0, 0, 0, 0, 0];
  for (let i = 0; i < n; i++) for (let c = 0; c < 6; c++) mean[c] = mean[c]! + r[6 * i + c]!;
  for (let c = 0; c < 6; c++) mean[c] = mean[c]! / n;
  let vf = 0, vw = 0;
  for (let i = 0; i < n; i++) {
    for (let c = 0; c < 3; c++) vf += (r[6 * i + c]! - mean[c]!) ** 2;
    for (let c = 3; c < 6; c++) vw += (r[6 * i + c]! - mean[c]!) ** 2;
  }
  const sdF = Math.sqrt(vf / (n - 1));
  const sdW = Math.sqrt(vw / (n - 1));
  const rate = Math.hypot(mean[3]! - x[NAV_BG]!, mean[4]! - x[NAV_BG + 1]!, mean[5]! - x[NAV_BG + 2]!);
  if (!(sdF < lim.staticAccelSdMps2 && sdW < lim.staticGyroRadps && rate < lim.staticGyroRadps)) return false;
  // mean specific force in the nav frame, f^n = C_nb (f̄^b − b̂_a), against gravity [0, 0, γ]: a steady
  // deceleration (braking into a stop, pulling away) has a small sd but a mean off gravity by the acceleration
  if (!(forceOffGravity(nav, Cnb, lim.mech, mean[0]!, mean[1]!, mean[2]!) < lim.staticAccelMeanMps2)) return false;
  // the same on the newest quarter of the window: pulling away shows there first (the whole window lags)
  const m = Math.max(3, n >> 2);
  let q0 = 0, q1 = 0, q2 = 0;
  for (let i = 1; i <= m; i++) {
    const o = 6 * ((d.head - i + d.cap) % d.cap);
    q0 += r[o]!;
    q1 += r[o + 1]!;
    q2 += r[o + 2]!;
  }
  return forceOffGravity(nav, Cnb, lim.mech, q0 / m, q1 / m, q2 / m) < lim.staticAccelMeanMps2;
}

/** |C_nb (f̄^b − b̂_a) − [0, 0, γ]|: how far a mean specific force (body, m/s²) is from gravity. */
function forceOffGravity(x: Float64Array, C: Float64Array, mech: MechParams, m0: number, m1: number, m2: number): number {
  const f0 = m0 - x[NAV_BA]!, f1 = m1 - x[NAV_BA + 1]!, f2 = m2 - x[NAV_BA + 2]!;
  const fe = C[0]! * f0 + C[1]! * f1 + C[2]! * f2;
  const fn = C[3]! * f0 + C[4]! * f1 + C[5]! * f2;
  const fu = C[6]! * f0 + C[7]! * f1 + C[8]! * f2;
  return Math.hypot(fe, fn, fu - gravityAt(mech, x[NAV_P + 2]!));
}
