/**
 * Normal gravity of the WGS84 ellipsoid for a local-level (ENU) mechanization.
 * Source: NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed. (2000), §4
 * (Somigliana closed formula, eq. 4-1, with γe = 9.7803253359 m/s², k = 0.00193185265241,
 * e² = 0.00669437999013); free-air decrease 3.086e-6 m/s² per metre of height (common practice,
 * the first term of TR8350.2 eq. 4-3). Earth rotation rate ω = 7.292115e-5 rad/s (TR8350.2 §3).
 * Normal gravity includes the centrifugal acceleration, so a mechanization on it adds only Coriolis.
 */
import { WGS84_OMEGA_E } from '../../geodesy/wgs84.js';

export const GAMMA_E_MPS2 = 9.7803253359;
export const SOMIGLIANA_K = 0.00193185265241;
export const SOMIGLIANA_E2 = 0.00669437999013;
/** Free-air gradient of normal gravity (m/s² per m), common practice. */
export const FREE_AIR_GRADIENT_PER_M = 3.086e-6;

/** Somigliana normal gravity on the ellipsoid at geodetic latitude φ (degrees), m/s². */
export function normalGravityMps2(latDeg: number): number {
  const s = Math.sin((latDeg * Math.PI) / 180);
  const s2 = s * s;
  // γ(φ) = γe (1 + k sin²φ) / √(1 − e² sin²φ)
  return (GAMMA_E_MPS2 * (1 + SOMIGLIANA_K * s2)) / Math.sqrt(1 - SOMIGLIANA_E2 * s2);
}

/** Normal gravity at height h (m) above the ellipsoid: γ(φ) − 3.086e-6·h (linear free-air term). */
export function gravityAtHeightMps2(latDeg: number, hM: number): number {
  // γ(φ, h) ≈ γ(φ) − 3.086e-6 h
  return normalGravityMps2(latDeg) - FREE_AIR_GRADIENT_PER_M * hM;
}

/** Earth rotation in the local ENU frame at latitude φ: ω_ie^n = ω·[0, cos φ, sin φ] (rad/s). */
export function earthRateEnu(latDeg: number, out: Float64Array): Float64Array {
  const phi = (latDeg * Math.PI) / 180;
  out[0] = 0;
  out[1] = WGS84_OMEGA_E * Math.cos(phi);
  out[2] = WGS84_OMEGA_E * Math.sin(phi);
  return out;
}
