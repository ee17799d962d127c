/**
 * Strapdown inertial mechanization in the session's local-level ENU frame (flat-Earth local frame:
 * transport rate and curvature neglected — at road speeds the transport rate v/R ≲ 3e-6 rad/s is three
 * orders of magnitude below a MEMS gyro bias), with WGS84 normal gravity and optional Earth rotation.
 *   attitude  Ċ_nb = C_nb [ω_ib^b ×] − [ω_ie^n ×] C_nb
 *   velocity  v̇^n = C_nb f^b + g^n − 2 ω_ie^n × v^n
 *   position  ṗ^n = v^n
 * Discrete algorithm per IMU interval Δt (rates held at their mean over the interval): rotation-vector
 * attitude update, first-order rotation compensation of the velocity increment (Δv + ½ Δθ × Δv), and
 * trapezoidal position. Sources: Titterton & Weston, "Strapdown Inertial Navigation Technology", 2nd ed.
 * (2004), ch. 3 and §11.2; Savage (1998) parts 1–2 (velocity rotation compensation); Groves (2013) §5.4
 * (local-navigation-frame equations) — from memory.
 *
 * Navigation state (flat Float64Array, NAV_LEN): p^n (m) [0..2], v^n (m/s) [3..5], q_nb [6..9],
 * accelerometer bias (m/s²) [10..12], gyro bias (rad/s) [13..15], GNSS Gauss–Markov fix error (m) [16..18].
 */
import { quatNormalize, quatRotateBody, quatToDcm } from './attitude.js';
import { FREE_AIR_GRADIENT_PER_M, normalGravityMps2 } from './gravity.js';

export const NAV_P = 0;
export const NAV_V = 3;
export const NAV_Q = 6;
export const NAV_BA = 10;
export const NAV_BG = 13;
export const NAV_GM = 16;
export const NAV_LEN = 19;

export interface MechParams {
  /** Normal gravity on the ellipsoid at the session latitude (m/s²). */
  gamma0Mps2: number;
  /** Ellipsoidal height of the frame's up = 0 (m), for the free-air term. */
  heightRefM: number;
  /** ω_ie^n (rad/s); zeros when Earth rotation is not modelled. */
  earthRateEnu: Float64Array;
}

export function makeMechParams(latDeg: number, heightRefM: number, earthRotation: boolean, earthRate: Float64Array): MechParams {
  return { gamma0Mps2: normalGravityMps2(latDeg), heightRefM, earthRateEnu: earthRotation ? earthRate : new Float64Array(3) };
}

/** Gravity magnitude at local up coordinate uM: γ0 − 3.086e-6 (h_ref + u). */
export function gravityAt(mp: MechParams, uM: number): number {
  return mp.gamma0Mps2 - FREE_AIR_GRADIENT_PER_M * (mp.heightRefM + uM);
}

/** Scratch for one mechanization step (no allocation per sample). */
export interface MechScratch {
  C: Float64Array;
  /** Specific force in the nav frame over the last step (m/s²), bias-corrected. */
  fNav: Float64Array;
  /** mechanize's arguments for mechanizeRates. */
  rates: Float64Array;
}

export function makeMechScratch(): MechScratch {
  return { C: new Float64Array(9), fNav: new Float64Array(3), rates: new Float64Array(7) };
}

/**
 * Advance the navigation state by Δt with the raw mean specific force (m/s²) and angular rate
 * (rad/s) over the interval, body frame. Uses the state's biases. Leaves C_nb at the start of the step
 * in s.C and the bias-corrected nav-frame specific force in s.fNav (for the error-state model).
 */
export function mechanize(
  x: Float64Array,
  fxMps2: number, fyMps2: number, fzMps2: number,
  wxRadps: number, wyRadps: number, wzRadps: number,
  dtSec: number,
  mp: MechParams,
  s: MechScratch,
): void {
  const r = s.rates;
  r[0] = fxMps2;
  r[1] = fyMps2;
  r[2] = fzMps2;
  r[3] = wxRadps;
  r[4] = wyRadps;
  r[5] = wzRadps;
  r[6] = dtSec;
  mechanizeRates(x, r, mp, s);
}

/**
 * mechanize with its rates and step in an array: rates = [fx, fy, fz, wx, wy, wz, Δt] (the filter's
 * per-sample path: doubles in arrays, not arguments, since arguments of a call that is not inlined
 * are boxed on the heap).
 */
export function mechanizeRates(x: Float64Array, rates: Float64Array, mp: MechParams, s: MechScratch): void {
  // size checks once per call (a wrongly sized state would read undefined as NaN)
  if (x.length !== NAV_LEN) throw new Error(`mechanizeRates: x has ${x.length} elements, expected ${NAV_LEN} (navigation state)`);
  if (rates.length < 7) throw new Error(`mechanizeRates: rates has ${rates.length} elements, expected at least 7 (fx, fy, fz, wx, wy, wz, Δt)`);
  if (s.C.length !== 9 || s.fNav.length !== 3) throw new Error('mechanizeRates: scratch of another layout (makeMechScratch)');
  const fxMps2 = rates[0]!, fyMps2 = rates[1]!, fzMps2 = rates[2]!;
  const wxRadps = rates[3]!, wyRadps = rates[4]!, wzRadps = rates[5]!;
  const dtSec = rates[6]!;
  const C = s.C;
  quatToDcm(x, NAV_Q, C);
  const we = mp.earthRateEnu;
  // bias-corrected increments: Δv^b = (f̃ − b_a) Δt, Δθ^b = (ω̃ − b_g − C_bn ω_ie^n) Δt
  const dvx = (fxMps2 - x[NAV_BA]!) * dtSec, dvy = (fyMps2 - x[NAV_BA + 1]!) * dtSec, dvz = (fzMps2 - x[NAV_BA + 2]!) * dtSec;
  // C_bn ω_ie = C_nbᵀ ω_ie
  const eb0 = C[0]! * we[0]! + C[3]! * we[1]! + C[6]! * we[2]!;
  const eb1 = C[1]! * we[0]! + C[4]! * we[1]! + C[7]! * we[2]!;
  const eb2 = C[2]! * we[0]! + C[5]! * we[1]! + C[8]! * we[2]!;
  const tx = (wxRadps - x[NAV_BG]! - eb0) * dtSec, ty = (wyRadps - x[NAV_BG + 1]! - eb1) * dtSec, tz = (wzRadps - x[NAV_BG + 2]! - eb2) * dtSec;
  // rotation compensation: Δv' = Δv + ½ Δθ × Δv (attitude change within the interval)
  const rx = dvx + 0.5 * (ty * dvz - tz * dvy);
  const ry = dvy + 0.5 * (tz * dvx - tx * dvz);
  const rz = dvz + 0.5 * (tx * dvy - ty * dvx);
  // Δv^n_sf = C_nb(start) Δv'
  const de = C[0]! * rx + C[1]! * ry + C[2]! * rz;
  const dn = C[3]! * rx + C[4]! * ry + C[5]! * rz;
  const du = C[6]! * rx + C[7]! * ry + C[8]! * rz;
  const inv = dtSec > 0 ? 1 / dtSec : 0;
  s.fNav[0] = de * inv;
  s.fNav[1] = dn * inv;
  s.fNav[2] = du * inv;
  const ve = x[NAV_V]!, vn = x[NAV_V + 1]!, vu = x[NAV_V + 2]!;
  // Coriolis −2 ω_ie × v (normal gravity already holds the centrifugal term)
  const ce = -2 * (we[1]! * vu - we[2]! * vn);
  const cn = -2 * (we[2]! * ve - we[0]! * vu);
  const cu = -2 * (we[0]! * vn - we[1]! * ve);
  // g^n = [0, 0, −γ(h)] at the mid-step height
  const g = gravityAt(mp, x[NAV_P + 2]! + 0.5 * vu * dtSec);
  const ve1 = ve + de + ce * dtSec;
  const vn1 = vn + dn + cn * dtSec;
  const vu1 = vu + du + (cu - g) * dtSec;
  // trapezoidal position: p += ½ (v_k + v_{k+1}) Δt
  x[NAV_P] = x[NAV_P]! + 0.5 * (ve + ve1) * dtSec;
  x[NAV_P + 1] = x[NAV_P + 1]! + 0.5 * (vn + vn1) * dtSec;
  x[NAV_P + 2] = x[NAV_P + 2]! + 0.5 * (vu + vu1) * dtSec;
  x[NAV_V] = ve1;
  x[NAV_V + 1] = vn1;
  x[NAV_V + 2] = vu1;
  quatRotateBody(x, NAV_Q, tx, ty, tz);
  quatNormalize(x, NAV_Q);
}
