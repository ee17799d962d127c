/**
 * The plain-row fast path of the CSV reader (csv-fixes.ts plainRowReader) gives exactly what the
 * general path gives: the same FixSeries bit for bit (times, positions, −0, NaN, lines, quality) and
 * the same warnings (code, message, file and line, in order), or the same InputError. Checked over
 * every awkward fixture, the sample data, hand-made edge rows (each rule of the fast path and each
 * way out of it) and mutated files (fast-check, fixed seeds). The numbers behind the fast path are
 * in docs/performance.md ("Reading and writing").
 */
import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { Lines, plainRowReader, readFixCsv } from '../../src/input/csv-fixes.js';
import { decodeLogBytes } from '../../src/input/decode-text.js';
import { FixSeriesBuilder, type FixSeries } from '../../src/input/fix-series.js';
import { matchColumns } from '../../src/input/columns.js';
import { readLogBytes } from '../../src/input/read-log.js';

const ROOT = join(import.meta.dirname, '..', '..');
const AWKWARD = join(ROOT, 'test', 'fixtures', 'awkward');
const cfg = (input: Record<string, unknown> = {}): HindcastConfig => configSchema.parse({ input });
const CONFIGS = [cfg(), cfg({ timeUnit: 's' }), cfg({ timeUnit: 'ms' }), cfg({ angleUnit: 'rad' }), cfg({ timeZone: 'Europe/Berlin' }), cfg({ delimiter: ',' })];

/** Every typed array as its bytes (so −0 ≠ 0 and NaN payloads count), the rest as it is. */
function canonical(s: FixSeries): unknown {
  const bytes = (a: ArrayBufferView | null) => (a ? Buffer.from(a.buffer, a.byteOffset, a.byteLength).toString('hex') : null);
  return {
    ...s,
    tSec: bytes(s.tSec),
    latDeg: bytes(s.latDeg),
    lonDeg: bytes(s.lonDeg),
    heightM: bytes(s.heightM),
    line: bytes(s.line),
    quality: Object.fromEntries(Object.entries(s.quality).map(([k, v]) => [k, bytes(v!)])),
  };
}

function outcome(text: string, c: HindcastConfig, plainRows: boolean): unknown {
  try {
    return canonical(readFixCsv(text, 'f.csv', c, { plainRows }));
  } catch (e) {
    return { error: (e as Error).constructor.name, message: (e as Error).message, where: (e as { where?: unknown }).where };
  }
}

function same(text: string, c: HindcastConfig = cfg()): void {
  expect(outcome(text, c, true)).toEqual(outcome(text, c, false));
}

describe('fast path = general path', () => {
  const csvs = readdirSync(AWKWARD).filter((f) => /\.(csv|txt)$/.test(f));
  test.each(csvs)('awkward fixture %s, every config', async (f) => {
    let text: string;
    try {
      text = decodeLogBytes(await readLogBytes(join(AWKWARD, f), f), f).text;
    } catch {
      return; // refused before the CSV reader (binary, empty, …): no path to compare
    }
    for (const c of CONFIGS) same(text, c);
  });

  const samples = readdirSync(join(ROOT, 'sample-data')).filter((f) => f.endsWith('.csv') && !f.endsWith('.imu.csv'));
  test.each(samples)('sample-data/%s', (f) => same(readFileSync(join(ROOT, 'sample-data', f), 'utf8')));

  // each rule of the fast path and each way out of it, between plain rows
  const EDGE_ROWS = [
    '2024-05-12T08:00:00Z,48.1173,11.5167,520.0,0.9,7',
    '2024-05-12T08:00:01.5Z,48.1173,11.5167,520,0.9,7',
    '2024-05-12T08:00:02.123456789012345678901Z,48.1,11.5,520,0.9,7', // 21 decimals of a second
    '2024-05-12T08:00:02.12345678901234567890123Z,48.1,11.5,520,0.9,7', // 23: general path
    '2024-05-12T08:00:03.Z,48.1,11.5,520,0.9,7', // no digit after the point
    '2024-05-12t08:00:04Z,48.1,11.5,520,0.9,7',
    '2024-05-12 08:00:05Z,48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:06z,48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:07+02:00,48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:08,48.1,11.5,520,0.9,7', // no zone
    '2024-02-30T08:00:09Z,48.1,11.5,520,0.9,7', // no such day
    '2024-02-29T08:00:10Z,48.1,11.5,520,0.9,7', // leap day
    '2023-02-29T08:00:11Z,48.1,11.5,520,0.9,7',
    '2024-05-12T23:59:60Z,48.1,11.5,520,0.9,7', // leap second
    '2024-05-12T08:59:60Z,48.1,11.5,520,0.9,7',
    '2024-05-12T24:00:00Z,48.1,11.5,520,0.9,7',
    '2024-13-12T08:00:12Z,48.1,11.5,520,0.9,7',
    '0050-05-12T08:00:13Z,48.1,11.5,520,0.9,7', // two-digit year rule of Date.UTC
    '6000-05-12T08:00:14Z,48.1,11.5,520,0.9,7', // out of range
    '2024-05-12T08:00:15Z,-0,-0.0,-0,-0,-0',
    '2024-05-12T08:00:16Z,.5,-.5,5.,0.,00007',
    '2024-05-12T08:00:17Z,+48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:18Z,48.1e0,11.5,520,0.9,7',
    '2024-05-12T08:00:19Z, 48.1,11.5 ,520,0.9,7',
    '2024-05-12T08:00:20Z,48.1\t,11.5,520,0.9,7',
    '2024-05-12T08:00:21Z,48.12345678901234567,11.5,520,0.9,7', // more digits than 2^53
    '2024-05-12T08:00:22Z,9007199254740993,11.5,520,0.9,7',
    '2024-05-12T08:00:23Z,90.0000000001,11.5,520,0.9,7',
    '2024-05-12T08:00:24Z,-90,180,520,0.9,7',
    '2024-05-12T08:00:25Z,48.1,-180.000001,520,0.9,7',
    '2024-05-12T08:00:26Z,48.1,11.5,,,',
    '2024-05-12T08:00:27Z,48.1,11.5,100001,0.9,7', // height out of range: dropped with a warning
    '2024-05-12T08:00:28Z,48.1,11.5,-12000,-1,7',
    '2024-05-12T08:00:29Z,48.1,11.5,520,abc,7',
    '2024-05-12T08:00:30Z,48.1,11.5,abc,0.9,7',
    '2024-05-12T08:00:31Z,,11.5,520,0.9,7',
    '2024-05-12T08:00:32Z,48.1,11.5,520,0.9', // a field short
    '2024-05-12T08:00:33Z,48.1,11.5,520,0.9,7,', // a trailing delimiter
    '2024-05-12T08:00:34Z,48.1,11.5,520,0.9,7,extra',
    '"2024-05-12T08:00:35Z",48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:36Z,"48,1",11.5,520,0.9,7',
    '2024-05-12T08:00:37Z,48..1,11.5,520,0.9,7',
    '2024-05-12T08:00:38Z,-,11.5,520,0.9,7',
    '2024-05-12T08:00:39Z,48.1,11.5,520,0.9,7',
    '2024-05-12T08:00:39Z,48.2,11.6,521,0.9,7', // duplicate time
    '2024-05-12T08:00:38.5Z,48.1,11.5,520,0.9,7', // out of order
    '1715500840,48.1,11.5,520,0.9,7', // Unix seconds
    '1715500841.25,48.1,11.5,520,0.9,7',
    '-1715500842,48.1,11.5,520,0.9,7',
    '1715500843000,48.1,11.5,520,0.9,7', // Unix milliseconds under "auto"
    '171550084e1,48.1,11.5,520,0.9,7',
    ',48.1,11.5,520,0.9,7',
    '# a comment,,,,,',
    '',
    '   ',
    '2024-05-12T08:00:44Z,48.1,11.5,520,0.9,7',
  ];
  const header = 'time,lat,lon,height,hdop,sats';
  test.each(CONFIGS.map((c, i) => [i, c] as const))('edge rows, config %i', (_i, c) => {
    for (const eol of ['\n', '\r\n', '\r'])
      for (const last of [eol, '']) {
        same([header, ...EDGE_ROWS].join(eol) + last, c);
        same([header, ...EDGE_ROWS, '2024-05-12T08:00:45Z,48.1'].join(eol) + last, c); // a short last line
      }
  });

  test.each([
    ['columns in another order, unused columns', 'sats,x,lon,note,lat,time\n7,a,11.5,hello,48.1,2024-05-12T08:00:00Z\n8,b,11.6,,48.2,2024-05-12T08:00:01Z\n'],
    ['GPS week and time of week', 'gps_week,tow,lat,lon\n2314,201600,48.1,11.5\n2314,201601,48.2,11.6\n'],
    ['time and week columns', 'time,gps_week,tow,lat,lon\n,2314,201600,48.1,11.5\n2024-05-12T08:00:01Z,2314,201601,48.2,11.6\n2024-05-12T08:00:02Z,,,48.2,11.6\n'],
    ['semicolons', 'time;lat;lon\n2024-05-12T08:00:00Z;48.1;11.5\n2024-05-12T08:00:01Z;48.2;11.6\n'],
    ['BOM and sep line', '\uFEFFsep=,\ntime,lat,lon\n2024-05-12T08:00:00Z,48.1,11.5\n2024-05-12T08:00:01Z,48.2,11.6\n'],
  ])('%s', (_n, text) => {
    for (const c of CONFIGS) same(text, c);
  });

  test('a column mapped to two roles takes the general path', () => {
    const text = 'time,lat,lon\n2024-05-12T08:00:00Z,48.1,11.5\n2024-05-12T08:00:01Z,48.2,11.6\n';
    same(text, cfg({ columns: { height: 'lat' } }));
  });

  test('mutated files (fast-check, seeded)', () => {
    const base = [header, ...EDGE_ROWS.slice(0, 3), ...Array.from({ length: 30 }, (_, i) => `2024-05-12T08:01:${String(i).padStart(2, '0')}.${i}Z,48.${1000 + i},-11.${2000 + i},${500 + i / 7},0.${i},${i}`)].join('\n') + '\n';
    const piece = fc.constantFrom('', '0', '9', '-', '.', ',', '"', ' ', 'e', 'Z', 'T', ':', '\n', '\r', '#', '+', '1e9', '99999999999999999');
    fc.assert(
      fc.property(fc.array(fc.tuple(fc.nat({ max: base.length }), fc.nat({ max: 3 }), piece), { minLength: 1, maxLength: 8 }), fc.nat({ max: CONFIGS.length - 1 }), (edits, ci) => {
        let t = base;
        for (const [at, del, s] of edits) t = t.slice(0, at) + s + t.slice(at + del);
        same(t, CONFIGS[ci]!);
      }),
      { seed: 8101, numRuns: 1500 },
    );
  });
});

describe('Lines = String.prototype.split(/\\r\\n|\\n|\\r/)', () => {
  test.each(['', 'a', 'a\n', '\n', '\n\n', 'a\r\nb', 'a\rb\n', 'a\n\rb', 'a\r\r\nb\r', '\r\n\r\n', 'x,y\r\n1,2\n3,4\r5,6'])('%j', (text) => {
    const l = new Lines(text);
    expect(Array.from({ length: l.length }, (_, j) => l.at(j))).toEqual(text.split(/\r\n|\n|\r/));
  });
  test('random texts (fast-check, seeded)', () => {
    fc.assert(
      fc.property(fc.array(fc.constantFrom('a', ',', '\r', '\n', '"'), { maxLength: 40 }), (cs) => {
        const text = cs.join('');
        const l = new Lines(text);
        expect(Array.from({ length: l.length }, (_, j) => l.at(j))).toEqual(text.split(/\r\n|\n|\r/));
      }),
      { seed: 8102, numRuns: 2000 },
    );
  });
});

describe('plain rows take the fast path', () => {
  const header = ['time', 'lat', 'lon', 'height', 'hdop', 'sats'];
  const reader = () => {
    const b = new FixSeriesBuilder('f.csv', ['hdop', 'sats']);
    const { index } = matchColumns(header);
    const r = plainRowReader(b, header.length, index, ['hdop', 'sats'], { rad: false, unitMs: false })!;
    return { b, read: (row: string, line: number) => r(row, 0, row.length, line) };
  };
  test('rows as the benchmark and the simulator write them are read without the general path', () => {
    const { b, read } = reader();
    expect(read('2026-05-13T09:30:00.000Z,52.519986305,13.405040652,39.965,1.0,12', 2)).toBe(true);
    expect(read('1778664600.1,52.5,13.4,,,', 3)).toBe(true);
    expect(b.count).toBe(2);
    const s = b.finish();
    expect(s.tSec[0]).toBe(Date.UTC(2026, 4, 13, 9, 30) / 1000);
    expect(s.latDeg[0]).toBe(52.519986305);
    expect(s.quality.sats![0]).toBe(12);
  });
  test.each(['2024-05-12T08:00:00+02:00,48.1,11.5,520,0.9,7', '2024-05-12T08:00:00Z, 48.1,11.5,520,0.9,7', '2024-05-12T08:00:00Z,48.1,11.5,100001,0.9,7', '2024-05-12T08:00:00Z,48.1,11.5,520,0.9', '"2024-05-12T08:00:00Z",48.1,11.5,520,0.9,7'])(
    'not plain (general path): %s',
    (row) => {
      const { b, read } = reader();
      expect(read(row, 2)).toBe(false);
      expect(b.count).toBe(0);
    },
  );
});
