/**
 * Geodetic ⇄ Earth-centred Earth-fixed (ECEF) coordinates and the local east-north-up (ENU) frame.
 * Source: IOGP Guidance Note 7-2, "Coordinate Conversions and Transformations including Formulas",
 * EPSG method 9602 (geographic/geocentric conversions); inverse by Bowring's method with one
 * refinement iteration (sub-millimetre for terrestrial heights).
 */
import { WGS84_A_M, WGS84_E2, WGS84_B_M, DEG } from './wgs84.js';

export interface Ellipsoid {
  a: number;
  e2: number;
}
export const WGS84: Ellipsoid = { a: WGS84_A_M, e2: WGS84_E2 };

/** Geodetic latitude, longitude (degrees), ellipsoidal height (m) → ECEF (m). */
export function geodeticToEcef(latDeg: number, lonDeg: number, hM: number, ell: Ellipsoid = WGS84): [number, number, number] {
  const phi = latDeg * DEG;
  const lam = lonDeg * DEG;
  const s = Math.sin(phi);
  const c = Math.cos(phi);
  // ν = a / √(1 − e² sin²φ): prime-vertical radius of curvature
  const nu = ell.a / Math.sqrt(1 - ell.e2 * s * s);
  return [(nu + hM) * c * Math.cos(lam), (nu + hM) * c * Math.sin(lam), ((1 - ell.e2) * nu + hM) * s];
}

/** ECEF (m) → geodetic latitude, longitude (degrees), ellipsoidal height (m). */
export function ecefToGeodetic(x: number, y: number, z: number, ell: Ellipsoid = WGS84): [number, number, number] {
  const a = ell.a;
  const e2 = ell.e2;
  const b = ell === WGS84 ? WGS84_B_M : a * Math.sqrt(1 - e2);
  const ep2 = (a * a - b * b) / (b * b);
  const p = Math.hypot(x, y);
  const lam = Math.atan2(y, x);
  // Bowring's parametric-latitude start, then iterate the standard fixed point twice
  const theta = Math.atan2(z * a, p * b);
  let phi = Math.atan2(z + ep2 * b * Math.sin(theta) ** 3, p - e2 * a * Math.cos(theta) ** 3);
  let h = 0;
  for (let i = 0; i < 2; i++) {
    const s = Math.sin(phi);
    const nu = a / Math.sqrt(1 - e2 * s * s);
    h = p / Math.cos(phi) - nu;
    phi = Math.atan2(z, p * (1 - (e2 * nu) / (nu + h)));
  }
  const s = Math.sin(phi);
  const nu = a / Math.sqrt(1 - e2 * s * s);
  // near the poles p/cos φ is ill-conditioned; use the z form there
  h = Math.abs(Math.cos(phi)) > 1e-6 ? p / Math.cos(phi) - nu : Math.abs(z) / Math.abs(s) - nu * (1 - e2);
  return [phi / DEG, lam / DEG, h];
}

/**
 * Rotation from ECEF to ENU at a geodetic origin, row-major 3×3:
 * [e; n; u] = R · ([x; y; z] − origin).
 */
export function ecefToEnuRotation(latDeg: number, lonDeg: number): Float64Array {
  const phi = latDeg * DEG;
  const lam = lonDeg * DEG;
  const sp = Math.sin(phi), cp = Math.cos(phi), sl = Math.sin(lam), cl = Math.cos(lam);
  return Float64Array.of(-sl, cl, 0, -sp * cl, -sp * sl, cp, cp * cl, cp * sl, sp);
}

/** A local tangent-plane ENU frame at a geodetic origin. */
export class EnuFrame {
  readonly origin: [number, number, number];
  private readonly r: Float64Array;
  constructor(readonly lat0Deg: number, readonly lon0Deg: number, readonly h0M: number) {
    this.origin = geodeticToEcef(lat0Deg, lon0Deg, h0M);
    this.r = ecefToEnuRotation(lat0Deg, lon0Deg);
  }
  ecefToEnu(x: number, y: number, z: number): [number, number, number] {
    const dx = x - this.origin[0], dy = y - this.origin[1], dz = z - this.origin[2];
    const r = this.r;
    return [r[0]! * dx + r[1]! * dy + r[2]! * dz, r[3]! * dx + r[4]! * dy + r[5]! * dz, r[6]! * dx + r[7]! * dy + r[8]! * dz];
  }
  enuToEcef(e: number, n: number, u: number): [number, number, number] {
    const r = this.r;
    // inverse of a rotation is its transpose
    return [
      this.origin[0] + r[0]! * e + r[3]! * n + r[6]! * u,
      this.origin[1] + r[1]! * e + r[4]! * n + r[7]! * u,
      this.origin[2] + r[2]! * e + r[5]! * n + r[8]! * u,
    ];
  }
  geodeticToEnu(latDeg: number, lonDeg: number, hM: number): [number, number, number] {
    const [x, y, z] = geodeticToEcef(latDeg, lonDeg, hM);
    return this.ecefToEnu(x, y, z);
  }
  enuToGeodetic(e: number, n: number, u: number): [number, number, number] {
    const [x, y, z] = this.enuToEcef(e, n, u);
    return ecefToGeodetic(x, y, z);
  }
}
