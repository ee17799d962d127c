/**
 * The per-session local frame (src/geodesy/local-frame.ts) and the proj4 transverse Mercator it
 * rests on, against published worked examples:
 * - Snyder, "Map Projections: A Working Manual", USGS Professional Paper 1395 (1987), transverse
 *   Mercator numerical example (ellipsoid form), Clarke 1866;
 * - IOGP Guidance Note 7-2, EPSG method 9807 worked example (British National Grid, Airy 1830).
 * proj4js ignores +es (it recomputes e² from a and b), so the Clarke 1866 ellipsoid is given by
 * +a and +b = a√(1 − e²).
 */
import { describe, expect, it } from 'vitest';
import proj4 from 'proj4';
import { localTmDefinition, makeLocalFrame, sessionCentre, wrapLonDeg } from '../../src/geodesy/local-frame.js';
import { geodesicDistanceM } from '../../src/geodesy/geodesic.js';
import { Rng } from '../../src/simulate/rng.js';

const dms = (d: number, m: number, s = 0) => Math.sign(d) * (Math.abs(d) + m / 60 + s / 3600);

describe('proj4 transverse Mercator against published examples', () => {
  it('Snyder PP 1395 (1987) example: Clarke 1866, φ 40°30′N, λ 73°30′W, λ0 75°W, k0 0.9996 → x 127106.5, y 4484124.4 m (Snyder PP 1395 numerical example; tol 0.1 m)', () => {
    const a = 6378206.4;
    const b = a * Math.sqrt(1 - 0.00676866);
    const def = `+proj=tmerc +lat_0=0 +lon_0=-75 +k=0.9996 +x_0=0 +y_0=0 +a=${a} +b=${b} +units=m +no_defs`;
    const [x, y] = proj4('WGS84', def, [dms(-73, 30), dms(40, 30)]) as [number, number];
    expect(Math.abs(x - 127106.5)).toBeLessThan(0.1);
    expect(Math.abs(y - 4484124.4)).toBeLessThan(0.1);
  });
  it('IOGP GN 7-2 EPSG 9807 example (British National Grid): φ 50°30′N, λ 0°30′E → E 577274.99, N 69740.50 m (tol 0.01 m)', () => {
    const def = '+proj=tmerc +lat_0=49 +lon_0=-2 +k=0.9996012717 +x_0=400000 +y_0=-100000 +a=6377563.396 +rf=299.3249646 +units=m +no_defs';
    const [E, N] = proj4('WGS84', def, [0.5, 50.5]) as [number, number];
    expect(Math.abs(E - 577274.99)).toBeLessThan(0.01);
    expect(Math.abs(N - 69740.5)).toBeLessThan(0.01);
    // and back (datum-free: both ends only reinterpret the coordinates)
    const [lon, lat] = proj4(def, 'WGS84', [577274.99, 69740.5]) as [number, number];
    expect(Math.abs(lon - 0.5)).toBeLessThan(1e-7);
    expect(Math.abs(lat - 50.5)).toBeLessThan(1e-7);
  });
});

describe('makeLocalFrame', () => {
  it('the definition is a WGS84 transverse Mercator with scale 1 and false origin at the centre', () => {
    expect(localTmDefinition(47.5, 8.25)).toBe('+proj=tmerc +lat_0=47.5 +lon_0=8.25 +k=1 +x_0=0 +y_0=0 +ellps=WGS84 +units=m +no_defs');
    const f = makeLocalFrame(47.5, 8.25);
    const out = [NaN, NaN];
    f.forward(8.25, 47.5, out);
    expect(Math.abs(out[0]!)).toBeLessThan(1e-6);
    expect(Math.abs(out[1]!)).toBeLessThan(1e-6);
  });

  it.each([
    [47.5, 8.25],
    [-33.86, 151.21],
    [0, 0],
    [69.6, 18.9],
    [-54.8, -68.3],
  ])('centre (%f, %f): round trip better than 1 mm over ±50 km (seeded)', (lat0, lon0) => {
    const f = makeLocalFrame(lat0, lon0);
    const rng = new Rng(Math.round(1000 * (lat0 + 200) + lon0));
    const g = [0, 0];
    const e = [0, 0];
    for (let i = 0; i < 300; i++) {
      const E = rng.uniform(-5e4, 5e4);
      const N = rng.uniform(-5e4, 5e4);
      f.inverse(E, N, g);
      f.forward(g[0]!, g[1]!, e);
      expect(Math.hypot(e[0]! - E, e[1]! - N)).toBeLessThan(1e-3);
    }
  });

  it('distances in the frame match geodesic distances to 1e-4 relative within 50 km (scale 1 on the central meridian; common practice)', () => {
    const f = makeLocalFrame(52, 13);
    const rng = new Rng(5);
    const g1 = [0, 0];
    const g2 = [0, 0];
    for (let i = 0; i < 50; i++) {
      const p = [rng.uniform(-5e4, 5e4), rng.uniform(-5e4, 5e4)] as const;
      const q = [rng.uniform(-5e4, 5e4), rng.uniform(-5e4, 5e4)] as const;
      f.inverse(p[0], p[1], g1);
      f.inverse(q[0], q[1], g2);
      const grid = Math.hypot(p[0] - q[0], p[1] - q[1]);
      const geo = geodesicDistanceM(g1[1]!, g1[0]!, g2[1]!, g2[0]!);
      // TM scale k ≈ 1 + E²/(2R²) ≤ 1 + 3.1e-5 at 50 km from the central meridian
      expect(Math.abs(grid / geo - 1)).toBeLessThan(1e-4);
    }
  });
});

describe('wrapLonDeg into (−180, 180]', () => {
  it.each([
    [0, 0],
    [10, 10],
    [180, 180],
    [-180, 180],
    [190, -170],
    [-190, 170],
    [359.5, -0.5],
    [540, 180],
    [-540, 180],
    [720.25, 0.25],
  ])('%f → %f', (d, want) => {
    expect(wrapLonDeg(d)).toBeCloseTo(want, 10);
  });
});

describe('sessionCentre', () => {
  it('median latitude and longitude', () => {
    const [lat, lon] = sessionCentre(Float64Array.of(10, 11, 30), Float64Array.of(20, 21, 22));
    expect(lat).toBe(11);
    expect(lon).toBe(21);
  });
  it('across the antimeridian: 179.9, −179.9, 179.95 → 179.95 (not near 0)', () => {
    const [, lon] = sessionCentre(Float64Array.of(0, 0, 0), Float64Array.of(179.9, -179.9, 179.95));
    expect(lon).toBeCloseTo(179.95, 10);
  });
  it('across the antimeridian from the west side: −179.9, 179.9, −179.8 → −179.9', () => {
    const [, lon] = sessionCentre(Float64Array.of(0, 0, 0), Float64Array.of(-179.9, 179.9, -179.8));
    expect(lon).toBeCloseTo(-179.9, 10);
  });
  it('an even count straddling the antimeridian gives 180 (wrapped into (−180, 180])', () => {
    const [, lon] = sessionCentre(Float64Array.of(1, 2, 3, 4), Float64Array.of(179.8, -179.8, -179.9, 179.9));
    expect(lon).toBeCloseTo(180, 10);
  });
  it('the valid mask excludes fixes; none valid → [0, 0]', () => {
    const lat = Float64Array.of(50, 10, 51);
    const lon = Float64Array.of(5, 100, 6);
    expect(sessionCentre(lat, lon, Uint8Array.of(1, 0, 1))).toEqual([50.5, 5.5]);
    expect(sessionCentre(lat, lon, Uint8Array.of(0, 0, 0))).toEqual([0, 0]);
    expect(sessionCentre(new Float64Array(0), new Float64Array(0))).toEqual([0, 0]);
  });
});

describe('makeLocalFrame calls the projection directly', () => {
  it('gives bit for bit the numbers of proj4("WGS84", definition), both ways', async () => {
    const proj4 = (await import('proj4')).default;
    const { Rng } = await import('../../src/simulate/rng.js');
    const rng = new Rng(42);
    const centres: Array<[number, number]> = [[52.5, 13.4], [-33.9, 151.2], [64.1, -21.9], [0.2, 179.9], [37.8, -122.4], [-77.8, 166.7]];
    for (const [lat0, lon0] of centres) {
      const frame = makeLocalFrame(lat0, lon0);
      const conv = proj4('WGS84', frame.definition);
      const out = new Float64Array(2);
      for (let i = 0; i < 2000; i++) {
        // within about ±100 km of the centre
        const lat = lat0 + (rng.next() - 0.5) * 1.8;
        const lon = lon0 + (rng.next() - 0.5) * 1.8 / Math.cos((lat0 * Math.PI) / 180);
        frame.forward(lon, lat, out);
        const r = conv.forward({ x: lon, y: lat });
        expect(Object.is(out[0], r.x) && Object.is(out[1], r.y)).toBe(true);
        const e = (rng.next() - 0.5) * 2e5;
        const n = (rng.next() - 0.5) * 2e5;
        frame.inverse(e, n, out);
        const q = conv.inverse({ x: e, y: n });
        expect(Object.is(out[0], q.x) && Object.is(out[1], q.y)).toBe(true);
      }
    }
  });
});
