/**
 * Geodesic distances on WGS84 (src/geodesy/geodesic.ts, geographiclib; Karney, "Algorithms for
 * geodesics", J. Geodesy 87:43–55, 2013).
 */
import { describe, expect, it } from 'vitest';
import { geodesicDistanceM, geodesicLengthM } from '../../src/geodesy/geodesic.js';

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
