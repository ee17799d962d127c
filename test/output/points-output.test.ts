/**
 * The occupied points in the outputs: <stem>.points.csv (one row per point, columns of
 * docs/survey.md), the GeoJSON Points with "kind": "occupation" (the same bytes from both GeoJSON
 * writers, valid by RFC 7946 per @placemarkio/check-geojson, read by GDAL), and summary.json.
 */
import { describe, expect, test } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { getIssues } from '@placemarkio/check-geojson';
import { pointsCsv, POINT_COLUMNS } from '../../src/output/points-csv.js';
import { sessionGeoJson, sessionGeoJsonText } from '../../src/output/geojson.js';
import { okEntry } from '../../src/output/summary.js';
import { session } from './fixtures.js';
import { requireGdal, run, SKIP_SYSTEM_TOOLS } from './system-tools.js';

// walk seed 2 (1200 s) stands still three times (0–38 s, 215–303 s, 851–889 s of the truth)
const r = session('walk', 2).result;

type Feature = { geometry: { type: string; coordinates: number[] }; properties: Record<string, unknown> };

describe('occupied points in the outputs', () => {
  test('the walk has occupied points', () => {
    expect(r.survey!.occupations.length).toBeGreaterThanOrEqual(3);
  });
  test('points.csv: a header and one row per occupied point, every column filled', () => {
    const lines = pointsCsv(r).trimEnd().split('\n');
    expect(lines[0]).toBe(POINT_COLUMNS.join(','));
    expect(lines).toHaveLength(r.survey!.occupations.length + 1);
    const row = lines[1]!.split(',');
    expect(row).toHaveLength(POINT_COLUMNS.length);
    expect(row[0]).toBe('P1');
    for (const cell of row) expect(cell).not.toBe('');
    expect(Number(row[POINT_COLUMNS.indexOf('effective_fixes')])).toBeLessThan(Number(row[POINT_COLUMNS.indexOf('fixes')]));
  });
  test('GeoJSON: one Point of kind "occupation" per point; the streamed text is the object tree’s; RFC 7946 valid', () => {
    const text = sessionGeoJsonText(r, { decimals: 7 });
    expect(text).toBe(JSON.stringify(sessionGeoJson(r, { decimals: 7 })) + '\n');
    const fc = JSON.parse(text) as { features: Feature[] };
    const occ = fc.features.filter((f) => f.properties.kind === 'occupation');
    expect(occ).toHaveLength(r.survey!.occupations.length);
    expect(occ[0]!.geometry.type).toBe('Point');
    expect(occ[0]!.properties.id).toBe('P1');
    expect(fc.features.some((f) => f.properties.kind === 'track-segment')).toBe(true);
    expect(getIssues(text)).toEqual([]);
  });
  test('summary.json entry carries the survey products', () => {
    const e = okEntry(r, 'walk-2.csv', [], 0);
    const s = e.survey as { occupations: unknown[]; lengths: Array<{ segment: unknown }> };
    expect(s.occupations).toHaveLength(r.survey!.occupations.length);
    expect(s.lengths.at(-1)!.segment).toBe('track');
  });
});

describe.skipIf(SKIP_SYSTEM_TOOLS)('GDAL reads the occupation Points', () => {
  test('ogrinfo counts every feature, occupations included', () => {
    requireGdal();
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-occ-'));
    const text = sessionGeoJsonText(r, { decimals: 7 });
    const path = join(dir, 'walk.geojson');
    writeFileSync(path, text);
    const n = (JSON.parse(text) as { features: unknown[] }).features.length;
    expect(run('ogrinfo', ['-ro', '-al', '-so', path])).toMatch(new RegExp(`Feature Count: ${n}\\b`));
  });
});

describe('a log without heights', () => {
  test('occupied points without height or sd up; GeoJSON Points with two coordinates; lengths without 3D', async () => {
    const { loadConfig } = await import('../../src/config/load.js');
    const { readFixCsv } = await import('../../src/input/csv-fixes.js');
    const { processSession } = await import('../../src/session/process-session.js');
    const { defaultSpec, scenarioCsv, simulate } = await import('../../src/simulate/scenario.js');
    const cfg = loadConfig();
    const csv = scenarioCsv(simulate(defaultSpec('walk', 2, { durationSec: 400 })), { hdop: false })
      .split('\n')
      .map((l) => l.split(',').slice(0, 3).join(','))
      .join('\n');
    const r2 = processSession(readFixCsv(csv, 'flat.csv', cfg), cfg, 'flat');
    expect(r2.hasHeight).toBe(false);
    const occ = r2.survey!.occupations;
    expect(occ.length).toBeGreaterThan(0);
    expect(Number.isNaN(occ[0]!.heightM)).toBe(true);
    const row = pointsCsv(r2).split('\n')[1]!.split(',');
    expect(row[POINT_COLUMNS.indexOf('height')]).toBe('');
    expect(row[POINT_COLUMNS.indexOf('sd_up_m')]).toBe('');
    const fc = JSON.parse(sessionGeoJsonText(r2, { decimals: 7 })) as { features: Feature[] };
    expect(fc.features.find((f) => f.properties.kind === 'occupation')!.geometry.coordinates).toHaveLength(2);
    const total = r2.survey!.lengths.at(-1)!;
    expect(total.threeDM).toBeNull();
    expect(total.horizontalM!.sd).toBeGreaterThan(0);
  });
});
