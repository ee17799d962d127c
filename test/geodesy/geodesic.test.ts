/**
 * Geodesic distances on WGS84 (src/geodesy/geodesic.ts, geographiclib; Karney, "Algorithms for
 * geodesics", J. Geodesy 87:43–55, 2013).
 */
import { describe, expect, it } from 'vitest';
import geodesicPkg from 'geographiclib-geodesic';
import { geodesicDistanceM, geodesicLengthM, shortStepM } from '../../src/geodesy/geodesic.js';

describe('geodesicDistanceM', () => {
  it.each([
    // [lat1, lon1, lat2, lon2, metres, source, tolerance]
    [0, 0, 0, 1, 111319.4908, '1° of longitude on the equator = a·π/180 (Karney 2013 / geographiclib, common practice)', 1e-3],
    [0, 0, 90, 0, 10001965.7293, 'equator to pole, the WGS84 quarter meridian (geographiclib, common practice)', 1e-3],
    [0, 0, 0, 180, 20003931.4586, 'antipodal on the equator: the geodesic runs over the pole, twice the quarter meridian (Karney 2013, derived)', 1e-3],
  ])('(%f, %f) → (%f, %f) = %f m — %s (tol %f m)', (la1, lo1, la2, lo2, want, _src, tol) => {
    expect(Math.abs(geodesicDistanceM(la1, lo1, la2, lo2) - want)).toBeLessThan(tol);
  });
  it('equator: exactly a·π/180 per degree (derived from a = 6378137 m; tol 1e-6 m)', () => {
    expect(Math.abs(geodesicDistanceM(0, 10, 0, 11) - (6378137 * Math.PI) / 180)).toBeLessThan(1e-6);
  });
  it('zero for the same point, symmetric, and the same across the antimeridian', () => {
    expect(geodesicDistanceM(47, 8, 47, 8)).toBe(0);
    expect(geodesicDistanceM(10, 20, 11, 21)).toBeCloseTo(geodesicDistanceM(11, 21, 10, 20), 8);
    expect(geodesicDistanceM(0, 179.5, 0, -179.5)).toBeCloseTo(111319.4908, 3);
  });
});

describe('geodesicLengthM', () => {
  const lat = Float64Array.of(0, 0, 0, 0);
  const lon = Float64Array.of(0, 1, 2, 4);
  it('sums consecutive geodesics (4 degrees of equator; tol 1e-3 m)', () => {
    expect(Math.abs(geodesicLengthM(lat, lon) - 4 * 111319.4908)).toBeLessThan(1e-3);
  });
  it('honours from..to', () => {
    expect(Math.abs(geodesicLengthM(lat, lon, 1, 4) - 3 * 111319.4908)).toBeLessThan(1e-3);
    expect(Math.abs(geodesicLengthM(lat, lon, 0, 2) - 111319.4908)).toBeLessThan(1e-3);
    expect(geodesicLengthM(lat, lon, 2, 3)).toBe(0);
  });
});

describe('short steps: the mid-latitude formula against geographiclib', () => {
  // Park–Miller minimal standard generator (seeded)
  let seed = 20240601;
  const r = () => (seed = (seed * 48271) % 2147483647) / 2147483647;
  const G = (geodesicPkg as unknown as { Geodesic: { WGS84: { Direct(lat: number, lon: number, az: number, s: number): { lat2: number; lon2: number } } } }).Geodesic.WGS84;
  it('seeded lines of 0–50 m at latitudes up to ±85°: within 3e-9 m of geographiclib up to 10 m, 2e-8 m up to 50 m (measured: third-order terms and rounding)', () => {
    let worst = 0, worst10 = 0, used = 0;
    for (let i = 0; i < 20_000; i++) {
      const lat = (2 * r() - 1) * 85, lon = (2 * r() - 1) * 179.9, az = 360 * r();
      const len = (i % 4 === 0 ? 1 : i % 4 === 1 ? 5 : i % 4 === 2 ? 20 : 49.9) * r();
      const d = G.Direct(lat, lon, az, len);
      const fast = shortStepM(lat, lon, d.lat2, d.lon2);
      if (Number.isNaN(fast)) continue;
      used++;
      const err = Math.abs(fast - geodesicDistanceM(lat, lon, d.lat2, d.lon2));
      worst = Math.max(worst, err);
      if (len <= 10) worst10 = Math.max(worst10, err);
    }
    expect(used).toBeGreaterThan(19_000);
    expect(worst10).toBeLessThan(3e-9);
    expect(worst).toBeLessThan(2e-8);
  });
  it('not short: long steps, near the poles, across the antimeridian, NaN (geographiclib is used)', () => {
    expect(shortStepM(47, 8, 47, 8.0005)).toBeGreaterThan(0); // 38 m of longitude: short
    expect(Number.isNaN(shortStepM(47, 8, 47, 8.001))).toBe(true); // 76 m
    expect(Number.isNaN(shortStepM(47, 8, 47.001, 8))).toBe(true); // 111 m
    expect(Number.isNaN(shortStepM(89.5, 8, 89.5, 8.0001))).toBe(true);
    expect(Number.isNaN(shortStepM(0, 179.99999, 0, -179.99999))).toBe(true);
    expect(Number.isNaN(shortStepM(NaN, 0, 0, 0))).toBe(true);
    // a track of short and long steps sums the same as geographiclib step by step (within 1e-7 m)
    const lat = Float64Array.of(47, 47.00001, 47.00002, 47.1, 47.10001);
    const lon = Float64Array.of(8, 8.00001, 8.00001, 8.2, 8.2);
    let want = 0;
    for (let i = 1; i < lat.length; i++) want += geodesicDistanceM(lat[i - 1]!, lon[i - 1]!, lat[i]!, lon[i]!);
    expect(Math.abs(geodesicLengthM(lat, lon) - want)).toBeLessThan(1e-7);
  });
});
