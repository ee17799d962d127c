/**
 * Horizontal error ellipse of a 2×2 covariance (src/estimation/error-ellipse.ts): semi-axes √(k² λ) and the
 * azimuth of the major axis clockwise from north in [0, 180).
 * k² for 95 %: χ²₂(0.95) = −2 ln 0.05 = 5.991 (NIST/SEMATECH e-Handbook §1.3.6.7.4, table to 3
 * decimals; exact for 2 dof).
 */
import { describe, expect, it } from 'vitest';
import { errorEllipse, K2_95 } from '../../src/estimation/error-ellipse.js';
import { chiSquareQuantile } from '../../src/estimation/chi-square.js';

/** Covariance with semi-axis standard deviations s1 ≥ s2, major axis at azimuth azDeg (clockwise from north). */
function covariance(s1: number, s2: number, azDeg: number): [number, number, number] {
  const a = (azDeg * Math.PI) / 180;
  // unit vector of the major axis in (east, north): (sin az, cos az); minor axis perpendicular
  const u = [Math.sin(a), Math.cos(a)] as const;
  const v = [Math.cos(a), -Math.sin(a)] as const;
  const varE = s1 * s1 * u[0] * u[0] + s2 * s2 * v[0] * v[0];
  const varN = s1 * s1 * u[1] * u[1] + s2 * s2 * v[1] * v[1];
  const covEN = s1 * s1 * u[0] * u[1] + s2 * s2 * v[0] * v[1];
  return [varE, varN, covEN];
}

describe('k² for 95 %', () => {
  it('K2_95 = 5.991 (NIST §1.3.6.7.4; tol 5e-4) = −2 ln 0.05 (exact) = chiSquareQuantile(0.95, 2)', () => {
    expect(Math.abs(K2_95 - 5.991)).toBeLessThan(5e-4);
    expect(K2_95).toBe(-2 * Math.log(0.05));
    expect(Math.abs(chiSquareQuantile(0.95, 2) - K2_95)).toBeLessThan(1e-12);
  });
});

describe('diagonal covariances', () => {
  const k = Math.sqrt(K2_95);
  it.each([
    // [varE, varN, major σ, minor σ, azimuth]
    [4, 1, 2, 1, 90, 'east-west major axis → azimuth 90°'],
    [1, 4, 2, 1, 0, 'north-south major axis → azimuth 0°'],
    [9, 0, 3, 0, 90, 'degenerate: all east'],
    [0, 0.25, 0.5, 0, 0, 'degenerate: all north'],
  ])('varE %f, varN %f → %f·k, %f·k, %f° (%s; tol 1e-12)', (vE, vN, s1, s2, az) => {
    const e = errorEllipse(vE, vN, 0);
    expect(Math.abs(e.majorM - s1 * k)).toBeLessThan(1e-12);
    expect(Math.abs(e.minorM - s2 * k)).toBeLessThan(1e-12);
    expect(Math.abs(e.azimuthDeg - az)).toBeLessThan(1e-12);
  });
  it('circular: both axes equal, azimuth in [0, 180)', () => {
    const e = errorEllipse(2, 2, 0);
    expect(e.majorM).toBeCloseTo(Math.sqrt(2 * K2_95), 12);
    expect(e.minorM).toBeCloseTo(Math.sqrt(2 * K2_95), 12);
    expect(e.azimuthDeg).toBeGreaterThanOrEqual(0);
    expect(e.azimuthDeg).toBeLessThan(180);
  });
  it('k² = 1 gives the 1-σ ellipse', () => {
    const e = errorEllipse(4, 1, 0, 1);
    expect(e.majorM).toBe(2);
    expect(e.minorM).toBe(1);
  });
});

describe('rotated covariances: azimuth clockwise from north in [0, 180)', () => {
  it.each([
    [0], [10], [30], [45], [60], [89.5], [90], [120], [135], [150], [179], [200, 20], [-30, 150], [315, 135],
  ])('major axis at %f° (expect %s)', (az, want = az) => {
    const [vE, vN, c] = covariance(5, 2, az);
    const e = errorEllipse(vE, vN, c);
    expect(Math.abs(e.majorM - 5 * Math.sqrt(K2_95))).toBeLessThan(1e-12);
    expect(Math.abs(e.minorM - 2 * Math.sqrt(K2_95))).toBeLessThan(1e-12);
    expect(e.azimuthDeg).toBeGreaterThanOrEqual(0);
    expect(e.azimuthDeg).toBeLessThan(180);
    expect(Math.abs(e.azimuthDeg - want)).toBeLessThan(1e-9);
  });
  it('positive east-north correlation puts the major axis in the north-east quadrant (azimuth 45° for equal variances)', () => {
    expect(errorEllipse(1, 1, 0.5).azimuthDeg).toBeCloseTo(45, 12);
    expect(errorEllipse(1, 1, -0.5).azimuthDeg).toBeCloseTo(135, 12);
  });
  it('a nearly singular covariance keeps minor ≥ 0 (rounding clamped)', () => {
    const [vE, vN, c] = covariance(3, 0, 37);
    const e = errorEllipse(vE, vN, c);
    expect(e.minorM).toBeGreaterThanOrEqual(0);
    expect(e.minorM).toBeLessThan(1e-6);
    expect(e.azimuthDeg).toBeCloseTo(37, 9);
  });
});
