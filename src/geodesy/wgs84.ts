/** WGS84 defining constants. Source: NIMA TR8350.2, "Department of Defense World Geodetic System 1984", 3rd ed. */
export const WGS84_A_M = 6378137.0;
export const WGS84_INV_F = 298.257223563;
export const WGS84_F = 1 / WGS84_INV_F;
/** First eccentricity squared e² = f(2 − f) ≈ 6.69437999014e-3. */
export const WGS84_E2 = WGS84_F * (2 - WGS84_F);
export const WGS84_B_M = WGS84_A_M * (1 - WGS84_F);
/** Earth rotation rate (rad/s). */
export const WGS84_OMEGA_E = 7.292115e-5;
export const DEG = Math.PI / 180;
