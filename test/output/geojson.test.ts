import { describe, expect, test, beforeAll } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { getIssues } from '@placemarkio/check-geojson';
import { cutAtAntimeridian, longitudeExtent, sessionGeoJson, sessionGeoJsonChunks, sessionGeoJsonText, geoJsonOptions } from '../../src/output/geojson.js';
import { chunksToString } from '../../src/output/byte-chunks.js';
import { sessionGpx } from '../../src/output/gpx.js';
import { loadConfig } from '../../src/config/load.js';
import type { SessionResult } from '../../src/session/result/result.js';
import { session } from './fixtures.js';
import { requireGdal, run, SKIP_SYSTEM_TOOLS } from './system-tools.js';

type FC = { type: string; bbox?: number[]; features: Array<{ geometry: { type: string; coordinates: any }; properties: Record<string, unknown> }> };

function positions(fc: FC): number[][] {
  const out: number[][] = [];
  for (const f of fc.features) {
    const g = f.geometry;
    if (g.type === 'Point') out.push(g.coordinates);
    else if (g.type === 'LineString') out.push(...g.coordinates);
    else if (g.type === 'MultiLineString') for (const l of g.coordinates) out.push(...l);
  }
  return out;
}

/** A vehicle session on the antimeridian (Fiji, Taveuni: 16.8° S, 180°), driving across it. */
const crossing = () => session('vehicle', 7, { durationSec: 300, origin: [-16.8, 179.9999, 20] }, 'dateline');
const plain = () => session('vehicle', 7, { durationSec: 300 });

describe('cutAtAntimeridian (RFC 7946 §3.1.9)', () => {
  // expected values worked by hand: the crossing latitude is linear in unwrapped longitude
  test.each([
    { name: 'no crossing', line: [[10, 1], [11, 2], [12, 3]], parts: [[[10, 1], [11, 2], [12, 3]]] },
    { name: 'east to west', line: [[179, 0], [-179, 2]], parts: [[[179, 0], [180, 1]], [[-180, 1], [-179, 2]]] },
    { name: 'west to east', line: [[-179.5, 10], [179.5, 11]], parts: [[[-179.5, 10], [-180, 10.5]], [[180, 10.5], [179.5, 11]]] },
    { name: 'with height', line: [[179, 0, 100], [-179, 2, 200]], parts: [[[179, 0, 100], [180, 1, 150]], [[-180, 1, 150], [-179, 2, 200]]] },
    { name: 'there and back', line: [[179, 0], [-179, 0], [179, 0]], parts: [[[179, 0], [180, 0]], [[-180, 0], [-179, 0], [-180, 0]], [[180, 0], [179, 0]]] },
    { name: 'a vertex on the meridian', line: [[179, 0], [180, 1], [-179, 2]], parts: [[[179, 0], [180, 1]], [[-180, 1], [-179, 2]]] },
  ])('$name', ({ line, parts }) => {
    expect(cutAtAntimeridian(line)).toEqual(parts);
  });
});

describe('longitudeExtent (bbox west/east, RFC 7946 §5.2)', () => {
  test.each([
    { lons: [10, 12, 11], we: [10, 12] },
    { lons: [179.5, -179.5, 179.9], we: [179.5, -179.5] },
    { lons: [-170, 170], we: [170, -170] },
    { lons: [-10, 10], we: [-10, 10] },
    { lons: [-92, 92], we: [92, -92] },
    { lons: [-85, 0, 85], we: [-85, 85] },
    { lons: [5], we: [5, 5] },
  ])('$lons → $we', ({ lons, we }) => {
    expect(longitudeExtent(lons)).toEqual(we);
  });
  test('no finite longitudes', () => expect(longitudeExtent([NaN])).toBeNull());
  // The definition of RFC 7946 §5.2, written naively: the extent [west, east] runs eastward from
  // west to east (across the antimeridian when west > east), holds every finite longitude, and is
  // the narrowest such interval; the narrowest width is found by trying every given longitude as
  // the west edge.
  const eastOf = (from: number, v: number) => (v >= from ? v - from : v + 360 - from);
  const narrowestWidth = (lons: number[]) => Math.min(...lons.map((c) => Math.max(...lons.map((v) => eastOf(c, v)))));
  test('holds every finite longitude and is the narrowest interval that does, seeded: narrow, wide, wrapped, signed zeros, NaN', () => {
    let seed = 4711;
    const rnd = () => (seed = (seed * 48271) % 2147483647) / 2147483647;
    let wrapped = 0;
    for (let t = 0; t < 3000; t++) {
      const n = 1 + Math.floor(rnd() * 40);
      const centre = rnd() * 360 - 180;
      const span = [0, 1e-9, 0.5, 20, 169.99, 170, 170.01, 200, 359][t % 9]!;
      const lons: number[] = [];
      for (let i = 0; i < n; i++) {
        const u = rnd();
        let v = u < 0.05 ? NaN : u < 0.1 ? 0 : u < 0.15 ? -0 : centre + (rnd() - 0.5) * span;
        if (v > 180) v -= 360;
        if (v < -180) v += 360;
        lons.push(v);
      }
      const finite = lons.filter(Number.isFinite);
      const we = longitudeExtent(lons);
      if (finite.length === 0) {
        expect(we).toBeNull();
        continue;
      }
      const [w, e] = we!;
      if (w > e) wrapped++;
      expect(finite, `${lons}`).toContain(w);
      expect(finite, `${lons}`).toContain(e);
      const width = eastOf(w, e);
      for (const v of finite) expect(eastOf(w, v), `${lons}`).toBeLessThanOrEqual(width);
      expect(Math.abs(width - narrowestWidth(finite)), `${lons}`).toBeLessThanOrEqual(1e-9);
    }
    // the cases reach both kinds of extent
    expect(wrapped).toBeGreaterThan(100);
  });
});

describe('session GeoJSON', () => {
  test('segments as LineStrings with units in property names, flagged fixes as Points, 3-D bbox holding every position', () => {
    const r = plain().result;
    const fc = sessionGeoJson(r, { decimals: 7 }) as FC;
    const lines = fc.features.filter((f) => f.properties.kind === 'track-segment');
    expect(lines.length).toBe(r.metrics.segmentCount);
    expect(lines.every((f) => f.geometry.type === 'LineString')).toBe(true);
    const flagged = fc.features.filter((f) => f.properties.kind === 'flagged-fix');
    // invalid fixes ((0, 0) placeholders) have no position to map
    expect(r.outliers.some((o) => o.reason === 'invalid')).toBe(true);
    expect(flagged.length).toBe(r.outliers.filter((o) => o.reason !== 'invalid').length);
    expect(flagged.every((f) => Math.abs(f.geometry.coordinates[0]) > 1)).toBe(true);
    for (const f of lines) for (const k of ['duration_s', 'length_m', 'mean_sd_horizontal_m']) expect(typeof f.properties[k]).toBe('number');
    expect(fc.bbox).toHaveLength(6);
    const [w, s, z0, e, n, z1] = fc.bbox!;
    expect(w).toBeLessThanOrEqual(e!);
    for (const p of positions(fc)) {
      expect(p[0]).toBeGreaterThanOrEqual(w!);
      expect(p[0]).toBeLessThanOrEqual(e!);
      expect(p[1]).toBeGreaterThanOrEqual(s!);
      expect(p[1]).toBeLessThanOrEqual(n!);
      if (p.length > 2) {
        expect(p[2]).toBeGreaterThanOrEqual(z0!);
        expect(p[2]).toBeLessThanOrEqual(z1!);
      }
    }
  });

  test.each([3, 6, 9])('coordinates carry at most %i decimals', (d) => {
    const fc = sessionGeoJson(plain().result, { decimals: d }) as FC;
    for (const p of positions(fc).slice(0, 500)) for (const v of p.slice(0, 2)) expect(Math.abs(v * 10 ** d - Math.round(v * 10 ** d))).toBeLessThan(1e-6);
  });

  test('the default precision comes from output.geojsonDecimals (7 ≈ 1 cm) and points from output.points', () => {
    const cfg = loadConfig();
    expect(geoJsonOptions(cfg)).toEqual({ decimals: 7, points: false });
    expect(geoJsonOptions(loadConfig({ overrides: { output: { geojsonDecimals: 6, points: true } } }))).toEqual({ decimals: 6, points: true });
  });

  test('per-epoch points carry sd and the 95% ellipse', () => {
    const r = plain().result;
    const fc = sessionGeoJson(r, { decimals: 7, points: true }) as FC;
    const pts = fc.features.filter((f) => f.properties.kind === 'epoch');
    expect(pts.length).toBe(r.N);
    const j = 40;
    const p = pts[j]!.properties;
    expect(p.sd_east_m).toBeCloseTo(r.sdEnu[0][j]!, 3);
    expect(p.ell95_major_m).toBeCloseTo(r.ell95MajorM[j]!, 3);
    expect(p.ell95_azimuth_deg).toBeCloseTo(r.ell95AzimuthDeg[j]!, 1);
    expect(typeof p.speed_mps).toBe('number');
    expect(new Set(pts.map((f) => f.properties.status))).toContain('bridged');
  });

  test('a track across the antimeridian is cut there and its bbox has west > east', () => {
    const r = crossing().result;
    let minLon = Infinity, maxLon = -Infinity;
    for (const v of r.lonDeg) {
      minLon = Math.min(minLon, v);
      maxLon = Math.max(maxLon, v);
    }
    // the scenario really crosses: longitudes on both sides
    expect(minLon).toBeLessThan(-179);
    expect(maxLon).toBeGreaterThan(179);
    const fc = sessionGeoJson(r, { decimals: 7 }) as FC;
    const multi = fc.features.filter((f) => f.geometry.type === 'MultiLineString');
    expect(multi.length).toBeGreaterThan(0);
    for (const f of multi) {
      for (const part of f.geometry.coordinates as number[][][]) {
        for (let i = 1; i < part.length; i++) expect(Math.abs(part[i]![0]! - part[i - 1]![0]!)).toBeLessThan(180);
        const ends = [part[0]![0]!, part[part.length - 1]![0]!];
        expect(ends.some((x) => Math.abs(x) === 180)).toBe(true);
      }
    }
    const [w, , , e] = fc.bbox!;
    expect(w).toBeGreaterThan(e!);
    expect(w).toBeGreaterThan(179);
    expect(e).toBeLessThan(-179);
  });

  test.each([
    ['plain', plain, false],
    ['plain with points', plain, true],
    ['antimeridian', crossing, false],
  ] as const)('%s passes the GeoJSON validator', (_n, f, points) => {
    const issues = getIssues(sessionGeoJsonText(f().result, { decimals: 7, points }));
    expect(issues).toEqual([]);
  });
});

/** A copy of a result without heights, with awkward names and a segment left with one valid position. */
function awkward(r: SessionResult): SessionResult {
  const latDeg = r.latDeg.slice();
  // the last segment keeps only its first position
  const last = r.segment[r.N - 1]!;
  const s1 = r.segment.indexOf(last);
  for (let k = s1 + 1; k < r.N; k++) latDeg[k] = NaN;
  return { ...r, name: 'Café "north" \\ run\u2028', hasHeight: false, latDeg, outliers: r.outliers.map((o, i) => (i === 0 ? { ...o, detail: 'tab\there "quoted" ✓' } : o)) };
}

describe('streamed GeoJSON = JSON.stringify of the object (RFC 7946 text unchanged)', () => {
  const cases: Array<[string, () => SessionResult]> = [
    ['plain', () => plain().result],
    ['antimeridian', () => crossing().result],
    ['no height, one-position segment, escaped names', () => awkward(plain().result)],
  ];
  test.each(cases)('%s, decimals 0–12, with and without points, small chunks', (_n, get) => {
    const r = get();
    for (const decimals of [0, 3, 7, 9, 12])
      for (const points of [false, true]) {
        const opt = { decimals, points };
        expect(chunksToString(sessionGeoJsonChunks(r, opt, 4096)), `decimals ${decimals}, points ${points}`).toBe(JSON.stringify(sessionGeoJson(r, opt)) + '\n');
      }
  });
  test('the awkward copy has a segment of one position (written twice) and no heights', () => {
    const r = plain().result;
    const fc = sessionGeoJson(awkward(r), { decimals: 7 }) as FC;
    const one = fc.features.filter((f) => f.properties.segment === r.segment[r.N - 1]! + 1);
    expect(one).toHaveLength(1);
    expect(one[0]!.geometry.coordinates).toHaveLength(2);
    expect(one[0]!.geometry.coordinates[0]).toEqual(one[0]!.geometry.coordinates[1]);
    expect(fc.bbox).toHaveLength(4);
  });
  test('a session whose every position is out of range has no features and no bbox', () => {
    const r = plain().result;
    const bad = { ...r, latDeg: new Float64Array(r.N).fill(91), outliers: [], survey: r.survey && { ...r.survey, occupations: r.survey.occupations.map((o) => ({ ...o, latDeg: 91 })) } };
    expect(sessionGeoJsonText(bad, { decimals: 7 })).toBe('{"type":"FeatureCollection","features":[]}\n');
  });
});

describe.skipIf(SKIP_SYSTEM_TOOLS)('GDAL opens and converts every output', () => {
  let dir: string;
  beforeAll(() => {
    requireGdal();
    dir = mkdtempSync(join(tmpdir(), 'hindcast-gdal-'));
  });

  const cases: Array<[string, () => SessionResult, boolean]> = [
    ['plain', () => plain().result, false],
    ['points', () => plain().result, true],
    ['antimeridian', () => crossing().result, true],
  ];
  test.each(cases)('GeoJSON %s: ogrinfo reads every feature, ogr2ogr writes a GeoPackage', (name, get, points) => {
    const r = get();
    const text = sessionGeoJsonText(r, { decimals: 7, points });
    const n = (JSON.parse(text) as FC).features.length;
    const path = join(dir, `${name}.geojson`);
    writeFileSync(path, text);
    const info = run('ogrinfo', ['-ro', '-al', '-so', path]);
    expect(info).toMatch(new RegExp(`Feature Count: ${n}\\b`));
    expect(info).toMatch(/WGS 84/);
    const gpkg = join(dir, `${name}.gpkg`);
    run('ogr2ogr', ['-f', 'GPKG', gpkg, path]);
    expect(run('ogrinfo', ['-ro', '-al', '-so', gpkg])).toMatch(new RegExp(`Feature Count: ${n}\\b`));
  });

  test('GPX: ogrinfo reads one track point per epoch and one track segment per segment', () => {
    const r = plain().result;
    const path = join(dir, 'plain.gpx');
    writeFileSync(path, sessionGpx(r));
    const pts = run('ogrinfo', ['-ro', '-so', path, 'track_points']);
    expect(pts).toMatch(new RegExp(`Feature Count: ${r.N}\\b`));
    const trk = run('ogrinfo', ['-ro', '-al', '-q', path, 'tracks']);
    expect((trk.match(/MULTILINESTRING/g) ?? []).length).toBe(1);
    expect((trk.match(/\(\(/g) ?? []).length).toBe(r.metrics.segmentCount);
    const gpkg = join(dir, 'plain-gpx.gpkg');
    run('ogr2ogr', ['-f', 'GPKG', gpkg, path, 'track_points']);
    expect(run('ogrinfo', ['-ro', '-so', gpkg, 'track_points'])).toMatch(new RegExp(`Feature Count: ${r.N}\\b`));
  });
});

describe('GeoJSON layers, one geometry type a file (geojson-layers.ts)', () => {
  const cases: Array<[string, () => SessionResult]> = [
    ['plain', () => plain().result],
    ['antimeridian', () => crossing().result],
    ['no height, one-position segment', () => awkward(plain().result)],
  ];
  test.each(cases)('%s: streamed = JSON.stringify of the object, each layer one geometry type, together the whole collection', (_n, get) => {
    const r = get();
    const whole = sessionGeoJson(r, { decimals: 7, points: true }) as FC;
    let total = 0;
    for (const only of ['track', 'flags', 'occupations', 'epochs'] as const) {
      const opt = { decimals: 7, only };
      const text = chunksToString(sessionGeoJsonChunks(r, opt, 4096));
      expect(text, only).toBe(JSON.stringify(sessionGeoJson(r, opt)) + '\n');
      const fc = JSON.parse(text) as FC;
      expect(getIssues(text), only).toEqual([]);
      expect(new Set(fc.features.map((f) => f.geometry.type)).size, only).toBeLessThanOrEqual(1);
      expect(new Set(fc.features.map((f) => f.properties.kind)).size, only).toBeLessThanOrEqual(1);
      total += fc.features.length;
    }
    expect(total).toBe(whole.features.length);
  });
  test('the track layer of a session that crosses the antimeridian is MultiLineStrings throughout', () => {
    const fc = sessionGeoJson(crossing().result, { decimals: 7, only: 'track' }) as FC;
    expect(fc.features.length).toBeGreaterThan(0);
    expect(fc.features.every((f) => f.geometry.type === 'MultiLineString')).toBe(true);
  });
  test('flagged points carry the id and the deciding test with its figures', () => {
    const r = plain().result;
    const fc = sessionGeoJson(r, { decimals: 7, only: 'flags' }) as FC;
    const mapped = r.outliers.filter((o) => o.reason !== 'invalid');
    expect(fc.features.map((f) => f.properties.id)).toEqual(mapped.map((o) => o.id));
    for (const f of fc.features) {
      expect(['forward-gate', 'backward-gate', 'review', 'swap', 'user']).toContain(f.properties.test);
      if (f.properties.test !== 'user') expect(f.properties.statistic as number).toBeGreaterThan(f.properties.threshold as number);
    }
  });
});

describe.skipIf(SKIP_SYSTEM_TOOLS)('GDAL reads each layer as one geometry type and writes GeoPackage and shapefile', () => {
  let dir: string;
  beforeAll(() => {
    requireGdal();
    dir = mkdtempSync(join(tmpdir(), 'hindcast-gdal-layers-'));
  });
  const cases: Array<[string, 'track' | 'flags' | 'occupations' | 'epochs', string, () => SessionResult]> = [
    ['plain', 'track', 'Line String', () => plain().result],
    ['plain', 'flags', 'Point', () => plain().result],
    // the simulated walking survey stands still at its survey marks
    ['walk', 'occupations', 'Point', () => session('walk', 1).result],
    ['plain', 'epochs', 'Point', () => plain().result],
    ['antimeridian', 'track', 'Multi Line String', () => crossing().result],
  ];
  test.each(cases)('%s %s: ogrinfo "Geometry: %s"', (name, only, geometry, get) => {
    const r = get();
    const text = sessionGeoJsonText(r, { decimals: 7, only });
    const n = (JSON.parse(text) as FC).features.length;
    expect(n).toBeGreaterThan(0);
    const path = join(dir, `${name}.${only}.geojson`);
    writeFileSync(path, text);
    const info = run('ogrinfo', ['-ro', '-al', '-so', path]);
    // one layer, of one geometry type (3D where the positions have heights)
    expect(info.match(/^Geometry: .*$/gm)).toEqual([expect.stringMatching(new RegExp(`^Geometry: (3D )?${geometry}$`))]);
    expect(info).toMatch(new RegExp(`Feature Count: ${n}\\b`));
    const gpkg = join(dir, `${name}.${only}.gpkg`);
    run('ogr2ogr', ['-f', 'GPKG', gpkg, path]);
    expect(run('ogrinfo', ['-ro', '-al', '-so', gpkg])).toMatch(new RegExp(`Feature Count: ${n}\\b`));
    const shp = join(dir, `${name}.${only}.shp`);
    run('ogr2ogr', ['-f', 'ESRI Shapefile', shp, path]);
    const shpInfo = run('ogrinfo', ['-ro', '-al', '-so', shp]);
    expect(shpInfo).toMatch(new RegExp(`Feature Count: ${n}\\b`));
    expect(shpInfo).toMatch(only === 'track' ? /Geometry: (3D )?(Multi )?Line String/ : /Geometry: (3D )?Point/);
  });
});
