/**
 * Measurement rows of the IMU-aided filter (linearized about the nominal state, error state
 * δx = [δp, δv, φ, δb_a, δb_g, b_GNSS], C_true = (I + [φ×]) Ĉ):
 *   GNSS antenna position  z = p + C_nb l^b + b_GNSS + w:  H = [I, 0, −[(Ĉ l)×], 0, 0, I]
 *   non-holonomic (body y, z velocity = 0):  v^b = C_bn v^n,  δv^b = Ĉ_bn δv + Ĉ_bn [v̂×] φ
 *   zero velocity:  z = 0 = v + w:  H = [0, I, 0, 0, 0, 0]
 *   zero angular rate (stationary gyro mean = b_g + C_bn ω_ie):  H = [0, 0, 0, 0, I, 0]
 * Sources: Groves (2013) §14.3 (lever arm), §15.3 (ZUPT, ZARU, non-holonomic constraints);
 * Shin (2005) §5 (NHC) — from memory.
 */
import { checkSize, sizeError } from './check-size.js';
import { E_A, E_BG, E_GM, E_P, E_V, NE } from './error-model.js';

/**
 * Row of the GNSS position measurement for axis a (0 e, 1 n, 2 u), with u = Ĉ_nb l^b (antenna offset in
 * the nav frame). Writes h (length 18, fully overwritten).
 */
export function gnssRow(a: number, leverNav: Float64Array, h: Float64Array): void {
  checkSize('gnssRow', 'leverNav', leverNav, 3, 'ENU');
  checkSize('gnssRow', 'h', h, NE, 'error state');
  h.fill(0);
  h[E_P + a] = 1;
  h[E_GM + a] = 1;
  const u0 = leverNav[0]!, u1 = leverNav[1]!, u2 = leverNav[2]!;
  // −[u×] rows: [0, u2, −u1], [−u2, 0, u0], [u1, −u0, 0]
  if (a === 0) {
    h[E_A + 1] = u2;
    h[E_A + 2] = -u1;
  } else if (a === 1) {
    h[E_A] = -u2;
    h[E_A + 2] = u0;
  } else {
    h[E_A] = u1;
    h[E_A + 1] = -u0;
  }
}

/**
 * Row of the body-frame velocity component b (1 lateral y, 2 vertical z): δv^b_b = Σ_j C_bn[b][j] δv_j +
 * (Ĉ_bn [v̂×])[b] φ, with C_bn = C_nbᵀ. Returns the predicted component v̂^b_b.
 */
export function bodyVelocityRow(b: number, Cnb: Float64Array, vNav: Float64Array, vOff: number, h: Float64Array): number {
  checkSize('bodyVelocityRow', 'Cnb', Cnb, 9, '3×3');
  if (vNav.length < vOff + 3) throw sizeError('bodyVelocityRow', 'vNav', vNav.length, vOff + 3, `velocity at ${vOff}`, true);
  checkSize('bodyVelocityRow', 'h', h, NE, 'error state');
  h.fill(0);
  const ve = vNav[vOff]!, vn = vNav[vOff + 1]!, vu = vNav[vOff + 2]!;
  // row b of C_bn is column b of C_nb
  const c0 = Cnb[b]!, c1 = Cnb[3 + b]!, c2 = Cnb[6 + b]!;
  h[E_V] = c0;
  h[E_V + 1] = c1;
  h[E_V + 2] = c2;
  // c·[v×] = (c × …): row vector cᵀ[v×] = (v × c)ᵀ … computed componentwise: [v×] = [[0,−vu,vn],[vu,0,−ve],[−vn,ve,0]]
  h[E_A] = c1 * vu - c2 * vn;
  h[E_A + 1] = -c0 * vu + c2 * ve;
  h[E_A + 2] = c0 * vn - c1 * ve;
  return c0 * ve + c1 * vn + c2 * vu;
}

/** Row of a velocity component (zero-velocity update). */
export function velocityRow(a: number, h: Float64Array): void {
  checkSize('velocityRow', 'h', h, NE, 'error state');
  h.fill(0);
  h[E_V + a] = 1;
}

/** Row of a gyro-bias component (zero-angular-rate update). */
export function gyroBiasRow(a: number, h: Float64Array): void {
  checkSize('gyroBiasRow', 'h', h, NE, 'error state');
  h.fill(0);
  h[E_BG + a] = 1;
}

export const MEAS_DIM = NE;
