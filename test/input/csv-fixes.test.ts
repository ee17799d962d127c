/**
 * CSV reader pieces: line splitting (RFC 4180 quoting, Shafranovich 2005), delimiter detection,
 * numbers with a decimal comma (ISO 80000-1 allows comma or point as the decimal sign), and the
 * reader's row rules (documented in src/input/csv-fixes.ts and docs/formats.md).
 */
import { describe, expect, test } from 'vitest';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { InputError } from '../../src/errors.js';
import { degreesFromDm, detectDelimiter, parseCsvNumber, readFixCsv, splitCsvLine } from '../../src/input/csv-fixes.js';

const cfg = (input: Record<string, unknown> = {}): HindcastConfig => configSchema.parse({ input });

describe('splitCsvLine (RFC 4180 quoting within a line)', () => {
  // [line, delimiter, fields, unclosed quote]
  const table: Array<[string, string, string[], boolean]> = [
    ['a,b,c', ',', ['a', 'b', 'c'], false],
    ['a,,c', ',', ['a', '', 'c'], false],
    ['a,b,', ',', ['a', 'b', ''], false],
    ['"a,b",c', ',', ['a,b', 'c'], false],
    ['"say ""hi""",x', ',', ['say "hi"', 'x'], false], // RFC 4180 §2.7: "" inside quotes
    [' a ; "b" ;c', ';', ['a', 'b', 'c'], false],
    ['"48,1173";"11,5167"', ';', ['48,1173', '11,5167'], false],
    ['"open,b', ',', ['open,b'], true],
    ['a\tb\tc', '\t', ['a', 'b', 'c'], false],
    ['', ',', [''], false],
  ];
  test.each(table)('%j with %j', (line, d, fields, unclosed) => {
    expect(splitCsvLine(line, d)).toEqual({ fields, unclosedQuote: unclosed });
  });
});

describe('detectDelimiter', () => {
  // [header, sample rows, delimiter] — the one present in the header and consistent in the rows
  const table: Array<[string, string[], string]> = [
    ['time,lat,lon', ['1,2,3'], ','],
    ['time;lat;lon', ['1;48,1;11,5'], ';'], // decimal commas in rows do not confuse it
    ['time\tlat\tlon', ['1\t2\t3'], '\t'],
    ['time|lat|lon', ['1|2|3'], '|'],
    ['"lat (deg, WGS84)";"lon (deg, WGS84)";time', ['1;2;3'], ';'], // commas inside quotes ignored
    ['time,lat;lon', ['1,2;3', '1,2;3'], ','], // tie on consistency: the larger count (both 1): first
  ];
  test.each(table)('%j', (h, rows, want) => expect(detectDelimiter(h, rows)).toBe(want));
});

describe('parseCsvNumber', () => {
  // [text, decimal comma (delimiter not ","), value or NaN]
  const table: Array<[string, boolean, number]> = [
    ['48.1173', false, 48.1173],
    ['48,1173', true, 48.1173],
    ['48,1173', false, 48.1173], // a quoted "48,1173" in a comma file: one comma, no point
    ['-0,5', true, -0.5],
    ['1e3', false, 1000],
    [' 12 ', false, 12],
    ['1.234,5', true, NaN], // thousands separators are not supported
    ['1,2,3', true, NaN],
    ['0x1A', false, NaN], // no hexadecimal
    ['Infinity', false, NaN],
    ['', false, NaN],
    ['NaN', false, NaN],
  ];
  test.each(table)('%j (decimal comma %s) → %f', (t, dc, want) => {
    const v = parseCsvNumber(t, dc);
    if (Number.isNaN(want)) expect(v).toBeNaN();
    else expect(v).toBe(want);
  });
});

describe('readFixCsv rules', () => {
  test('GPS week + time of week columns: week 2314, TOW 28818 s → 2024-05-12T08:00:00Z', () => {
    // GPS time = UTC + 18 s since 2017 (IERS Bulletin C); week 2314 starts Sunday 2024-05-12T00:00:00 GPS
    // (GPS epoch 1980-01-06, IS-GPS-200 §20.3.3.5.2.4 week count)
    const text = 'gps_week,tow,lat,lon\n2314,28818,48.1,11.5\n2314,28819,48.1,11.5\n';
    const s = readFixCsv(text, 'w.csv', cfg());
    expect(s.tSec[0]).toBe(Date.UTC(2024, 4, 12, 8, 0, 0) / 1000);
  });
  test('comment lines (#) and blank lines are ignored; line numbers stay those of the file', () => {
    const text = '# exported by a logger\n\ntime,lat,lon\n# pause\n2024-05-12T08:00:00Z,48.1,11.5\n\n2024-05-12T08:00:01Z,48.1,11.5\n';
    const s = readFixCsv(text, 'c.csv', cfg());
    expect(Array.from(s.line)).toEqual([5, 7]);
  });
  test('columns named in input.columns win over aliases', () => {
    const text = 'zeit;breite;länge;lat\n2024-05-12T08:00:00Z;48,1;11,5;0\n2024-05-12T08:00:01Z;48,2;11,6;0\n';
    const s = readFixCsv(text, 'd.csv', cfg({ columns: { time: 'zeit', lat: 'breite', lon: 'länge' } }));
    expect(Array.from(s.latDeg)).toEqual([48.1, 48.2]);
  });
  test('ISO times with a decimal comma before the fraction (ISO 8601) and a space for the T', () => {
    const text = 'time;lat;lon\n2024-05-12 08:00:00,5Z;48,1;11,5\n2024-05-12 08:00:01,5Z;48,1;11,5\n';
    const s = readFixCsv(text, 'i.csv', cfg());
    expect(s.tSec[0]).toBe(Date.UTC(2024, 4, 12, 8, 0, 0) / 1000 + 0.5);
  });
  test('MSL-like height column names are noted; input.heightReference silences the note and is recorded', () => {
    const text = 'time,lat,lon,altitude\n2024-05-12T08:00:00Z,48.1,11.5,500\n2024-05-12T08:00:01Z,48.1,11.5,501\n';
    const a = readFixCsv(text, 'h.csv', cfg());
    expect(a.warnings.some((w) => w.code === 'height-reference')).toBe(true);
    expect(a.meta.heightReference).toBe('assumed-ellipsoidal');
    const b = readFixCsv(text, 'h.csv', cfg({ heightReference: 'msl' }));
    expect(b.warnings.some((w) => w.code === 'height-reference')).toBe(false);
    expect(b.meta.heightReference).toBe('msl');
  });
  test('many bad rows: 20 listed by line, the rest counted in one warning', () => {
    const rows = ['time,lat,lon', '2024-05-12T08:00:00Z,48.1,11.5', '2024-05-12T08:00:01Z,48.1,11.5'];
    for (let i = 0; i < 50; i++) rows.push(`2024-05-12T08:01:${String(i).padStart(2, '0')}Z,x,11.5`);
    const s = readFixCsv(rows.join('\n') + '\n', 'm.csv', cfg());
    const w = s.warnings.filter((x) => x.code === 'row-skipped');
    expect(w).toHaveLength(21);
    expect(w[0]!.line).toBe(4);
    expect(w[20]!.message).toMatch(/30 more row\(s\).*50 in all/);
  });
  test('a quote left open spoils only its row', () => {
    const text = 'time,lat,lon\n2024-05-12T08:00:00Z,48.1,11.5\n"2024-05-12T08:00:01Z,48.1,11.5\n2024-05-12T08:00:02Z,48.1,11.5\n';
    const s = readFixCsv(text, 'q.csv', cfg());
    expect(s.n).toBe(2);
    expect(s.warnings.find((w) => w.code === 'row-skipped')?.line).toBe(3);
  });
  test('errors name the file and line and carry no stack text', () => {
    try {
      readFixCsv('speed,course\n1,2\n', 'x.csv', cfg());
      expect.unreachable();
    } catch (e) {
      expect(e).toBeInstanceOf(InputError);
      expect((e as Error).message).toMatch(/^x\.csv:1: no time \(or gps_week \+ tow\), lat, lon column/);
    }
  });
});

describe('degrees and decimal minutes (DDMM.mmmm, as NMEA 0183 writes angles; common practice)', () => {
  // [written, degrees, tolerance]
  test.each([
    [4807.038, 48 + 7.038 / 60, 1e-12],
    [1131.0, 11 + 31 / 60, 1e-12],
    [-3352.1287, -(33 + 52.1287 / 60), 1e-12],
    [15112.561, 151 + 12.561 / 60, 1e-12],
    [30.5, 0 + 30.5 / 60, 1e-12],
  ])('%d → %d (± %d)', (v, deg, tol) => {
    expect(Math.abs(degreesFromDm(v) - deg)).toBeLessThan(tol);
  });
  test('minutes of 60 or more are no angle', () => {
    expect(degreesFromDm(4860.5)).toBeNaN();
  });
  test('input.angleUnit "dm" reads signed angles without hemisphere columns (not through the plain-row path)', () => {
    const s = readFixCsv('time,lat,lon\n2024-05-12T08:00:00Z,4807.038,-01131.000\n2024-05-12T08:00:01Z,4807.039,-01131.001\n', 'dm.csv', cfg({ angleUnit: 'dm' }));
    expect(Math.abs(s.latDeg[0]! - (48 + 7.038 / 60))).toBeLessThan(1e-9);
    expect(Math.abs(s.lonDeg[0]! + (11 + 31 / 60))).toBeLessThan(1e-9);
  });
  test('hemisphere columns beside angles within ±90° / ±180° stay decimal degrees (no note)', () => {
    const s = readFixCsv('time,lat,ns,lon,ew\n2024-05-12T08:00:00Z,48.1173,N,11.5167,E\n2024-05-12T08:00:01Z,48.1174,N,11.5168,E\n', 'deg.csv', cfg());
    expect(s.latDeg[0]).toBe(48.1173);
    expect(s.warnings.some((w) => w.code === 'angle-unit')).toBe(false);
  });
});

describe('a horizontal accuracy column (phones: the 68% radius, m)', () => {
  test('read as reported sigmas where there are no sd columns: sd per axis = accuracy / √(−2 ln 0.32) (1e-12), with a note', () => {
    const s = readFixCsv('time,lat,lon,accuracy\n2024-05-12T08:00:00Z,48.1,11.5,3.0\n2024-05-12T08:00:01Z,48.1,11.5,6.0\n', 'acc.csv', cfg());
    // √(−2 ln 0.32) = 1.50959…: the radius holding 68% of a circular Gaussian (common practice)
    expect(Math.abs(s.quality.sdEast![0]! - 3.0 / Math.sqrt(-2 * Math.log(0.32)))).toBeLessThan(1e-12);
    expect(s.quality.sdNorth![1]).toBe(s.quality.sdEast![1]);
    expect(s.quality.hAccuracy).toBeUndefined();
    expect(s.warnings.some((w) => w.code === 'accuracy-column')).toBe(true);
  });
  test('sd columns win over it', () => {
    const s = readFixCsv('time,lat,lon,sd_east,sd_north,accuracy\n2024-05-12T08:00:00Z,48.1,11.5,0.5,0.6,3.0\n2024-05-12T08:00:01Z,48.1,11.5,0.5,0.6,6.0\n', 'acc.csv', cfg());
    expect(s.quality.sdEast![0]).toBe(0.5);
    expect(s.warnings.some((w) => w.code === 'accuracy-column')).toBe(false);
  });
});
