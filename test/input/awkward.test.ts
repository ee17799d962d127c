/**
 * The awkward-files folder (test/fixtures/awkward/, made by make-fixtures.mjs there): each file with
 * its expected outcome through readFixLog — read (fix count, warnings by code and line) or refused
 * (InputError naming the file, with the reason and line). The rules are those of the reader file
 * headers and docs/formats.md; the values are invented (see make-fixtures.mjs).
 */
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { InputError } from '../../src/errors.js';
import { readFixLog } from '../../src/input/read-log.js';
import type { FixSeries } from '../../src/input/fix-series.js';

const DIR = join(import.meta.dirname, '../fixtures/awkward');
const cfg = (input: Record<string, unknown> = {}): HindcastConfig => configSchema.parse({ input });

interface Ok {
  n: number;
  /** [code, line] of warnings that must be there (line undefined: any or none). */
  warn?: Array<[string, number?]>;
  /** Codes that must not be there. */
  noWarn?: string[];
  format?: string;
  check?: (s: FixSeries) => void;
}
interface Fails {
  error: RegExp;
  line?: number;
}
type Case = [file: string, why: string, input: Record<string, unknown>, expected: Ok | Fails];

const t0 = Date.UTC(2024, 4, 12, 8, 0, 0) / 1000;

const CASES: Case[] = [
  ['bom-utf8.csv', 'UTF-8 byte-order mark before the header', {}, { n: 5, noWarn: ['row-skipped'], check: (s) => expect(s.tSec[0]).toBe(t0) }],
  ['crlf.csv', 'CRLF line endings (RFC 4180 records)', {}, { n: 5, check: (s) => expect(Array.from(s.line)).toEqual([2, 3, 4, 5, 6]) }],
  ['semicolon-decimal-comma.csv', 'European export: ";" delimiter, "," decimal sign', {}, { n: 5, check: (s) => (expect(s.latDeg[0]).toBe(48.1173), expect(s.heightM![1]).toBe(520.1), expect(s.meta.decimalComma).toBe(true)) }],
  ['excel-sep-line.csv', 'spreadsheet "sep=;" first line', {}, { n: 4, check: (s) => (expect(s.meta.delimiter).toBe(';'), expect(s.line[0]).toBe(3)) }],
  ['truncated-last-line.csv', 'last line cut mid-row, no line ending: skipped', {}, { n: 4, warn: [['truncated-last-line', 6]] }],
  ['out-of-order.csv', 'rows out of time order: sorted', {}, { n: 6, warn: [['rows-sorted']], check: (s) => expect(Array.from(s.tSec).map((t) => t - t0)).toEqual([0, 1, 2, 3, 4, 5]) }],
  ['duplicates.csv', 'repeated times: the first kept', {}, { n: 5, warn: [['duplicate-time', 4]], check: (s) => expect(Array.from(s.line)).toEqual([2, 3, 5, 6, 8]) }],
  ['utf16le-bom.csv', 'UTF-16 LE with BOM: decoded', {}, { n: 4 }],
  ['utf16be-bom.csv', 'UTF-16 BE with BOM: decoded', {}, { n: 4 }],
  ['binary.csv', 'binary content', {}, { error: /binary content/ }],
  ['empty.csv', 'zero bytes', {}, { error: /empty file/ }],
  ['header-only.csv', 'a header and no rows', {}, { error: /header only/, line: 1 }],
  ['no-position-columns.csv', 'no lat/lon columns', {}, { error: /no lat, lon column/, line: 1 }],
  ['one-fix.csv', 'one fix cannot be a session', {}, { error: /only 1 fix/, line: 2 }],
  [
    'bad-values.csv',
    'unparsable and out-of-range values skipped by line; (0, 0) kept; absurd height dropped',
    {},
    {
      n: 6,
      warn: [['row-skipped', 4], ['row-skipped', 5], ['row-skipped', 6], ['height-out-of-range', 8]],
      check: (s) => {
        expect(Array.from(s.line)).toEqual([2, 3, 7, 8, 9, 10]);
        expect([s.latDeg[2], s.lonDeg[2]]).toEqual([0, 0]); // null island kept for the session to flag
        expect(s.heightM![3]).toBeNaN();
      },
    },
  ],
  ['quoted-fields.csv', 'quoted header names holding commas, quoted decimal-comma values', {}, { n: 3, check: (s) => (expect(s.meta.delimiter).toBe(';'), expect(s.latDeg[0]).toBe(48.1173), expect(s.heightM![0]).toBe(520.5)) }],
  ['local-time.csv', 'times without an offset and no input.timeZone: read as UTC, with a note naming the setting', {}, { n: 3, warn: [['time-zone-assumed']], check: (s) => (expect(s.tSec[0]).toBe(t0 + 7200), expect(s.warnings.find((w) => w.code === 'time-zone-assumed')!.message).toMatch(/input\.timeZone/)) }],
  ['date-and-time-columns.csv', 'a date column (dd.mm.yyyy: day first) beside a time-of-day column, one-digit hours', {}, { n: 3, warn: [['time-zone-assumed']], check: (s) => (expect(s.tSec[0]).toBe(t0), expect(s.latDeg[0]).toBe(48.1173)) }],
  ['us-dates.csv', 'slashed dates whose second field exceeds 12: month first', {}, { n: 3, check: (s) => expect(s.tSec[0]).toBe(t0) }],
  ['slashed-either-way.csv', 'slashed dates no field of which exceeds 12: refused, naming input.timeFormat', {}, { error: /either way.*input\.timeFormat/, line: 2 }],
  ['slashed-either-way.csv', 'the same with input.timeFormat and input.timeZone', { timeFormat: 'MM/dd/yyyy HH:mm:ss', timeZone: 'UTC' }, { n: 3, check: (s) => expect(s.tSec[0]).toBe(Date.UTC(2024, 4, 12, 8, 0, 0) / 1000) }],
  ['hemisphere-letters.csv', 'unsigned angles with N/S and E/W letter columns: S and W negative', {}, { n: 3, check: (s) => (expect(s.latDeg[0]).toBe(-48.1173), expect(s.lonDeg[0]).toBe(-11.5167)) }],
  [
    'degrees-minutes.csv',
    'degrees and decimal minutes (DDMM.mmmm) beside hemisphere columns: read so, with a note',
    {},
    // 48° 07.038′ = 48.1173°, 11° 31.000′ = 11.516667° (the NMEA 0183 GGA example's position; ±1e-9°)
    { n: 3, warn: [['angle-unit']], check: (s) => (expect(Math.abs(s.latDeg[0]! - (48 + 7.038 / 60))).toBeLessThan(1e-9), expect(Math.abs(s.lonDeg[0]! - (11 + 31 / 60))).toBeLessThan(1e-9)) },
  ],
  ['time-of-day.csv', 'times of day without a date and no input.date: refused, naming input.date (a date is not guessed)', {}, { error: /time of day without a date.*input\.date/, line: 2 }],
  [
    'time-of-day.csv',
    'the same with input.date: on that date, a day later past midnight',
    { date: '2024-05-11' },
    { n: 3, check: (s) => (expect(s.tSec[0]).toBe(Date.UTC(2024, 4, 11, 23, 59, 59) / 1000), expect(s.tSec[2]).toBe(Date.UTC(2024, 4, 12, 0, 0, 1) / 1000)) },
  ],
  ['tabs.tsv', 'a .tsv file with a unix_ms column', {}, { n: 3, format: 'csv', warn: [['time-unit']], check: (s) => expect(s.tSec[0]).toBe(t0) }],
  ['local-time.csv', 'times without an offset read in input.timeZone (CEST = UTC+2 on 12 May 2024)', { timeZone: 'Europe/Berlin' }, { n: 3, check: (s) => expect(s.tSec[0]).toBe(t0) }],
  ['radians.csv', 'radians without input.angleUnit are in range as degrees: read as degrees (the option is needed)', {}, { n: 3, check: (s) => expect(s.latDeg[0]).toBeCloseTo(0.839808, 5) }],
  ['radians.csv', 'radians with input.angleUnit "rad"', { angleUnit: 'rad' }, { n: 3, check: (s) => expect(s.latDeg[0]).toBeCloseTo(48.1173, 9) }],
  ['unix-ms.csv', 'Unix milliseconds (auto unit, noted)', {}, { n: 3, warn: [['time-unit']], check: (s) => expect(s.tSec[0]).toBe(t0) }],
  ['tabs.txt', 'tab-delimited CSV in a .txt', {}, { n: 3, format: 'csv', check: (s) => expect(s.meta.delimiter).toBe('tab') }],
  [
    'bad-checksums.nmea',
    'NMEA with two damaged sentences: skipped and listed',
    {},
    { n: 6, format: 'nmea', warn: [['nmea-checksum', 3], ['nmea-checksum', 8]], check: (s) => (expect(s.meta.badChecksums).toBe(2), expect(s.heightM![1]).toBeNaN()) },
  ],
  ['all-bad-checksums.nmea', 'every sentence fails its checksum', {}, { error: /failed the checksum/, line: 1 }],
  ['gga-only.nmea', 'GGA without RMC and no input.date', {}, { error: /input\.date/, line: 1 }],
  [
    'gga-only.nmea',
    'GGA only with input.date: rollover at UTC midnight',
    { date: '2024-12-31' },
    { n: 5, warn: [['date-from-config', 1]], check: (s) => expect(s.tSec[4]).toBe(Date.UTC(2025, 0, 1, 0, 0, 1) / 1000) },
  ],
  ['nmea-in.txt', 'NMEA in a .txt with a comment line: sniffed', {}, { n: 3, format: 'nmea', warn: [['nmea-malformed', 1]] }],
  ['talkers.nmea.gz', 'gzip NMEA, BOM, CRLF, mixed talkers GN/GL/GA/BD', {}, { n: 4, format: 'nmea', check: (s) => expect(s.meta.talkers).toBe('BD,GA,GL,GN') }],
  ['gpx-no-times.gpx', 'GPX track points without <time>', {}, { error: /has a <time>/, line: 4 }],
  ['gpx-truncated.gpx', 'GPX cut short inside a point: completed points read', {}, { n: 4, format: 'gpx', warn: [['truncated', 8]] }],
  ['track.gpx.gz', 'gzip GPX; ele marked above mean sea level', {}, { n: 5, format: 'gpx', warn: [['height-reference']], check: (s) => (expect(s.meta.heightReference).toBe('msl'), expect(s.heightM![0]).toBe(473)) }],
  ['track.gpx.gz', 'GPX declared ellipsoidal: no note', { heightReference: 'ellipsoidal' }, { n: 5, noWarn: ['height-reference'], check: (s) => expect(s.meta.heightReference).toBe('ellipsoidal') }],
  ['waypoints-only.gpx', 'GPX with waypoints and no track', {}, { error: /no track points/ }],
  ['truncated.csv.gz', 'gzip stream cut short', {}, { error: /gzip/ }],
  ['not-gzip.csv.gz', 'named .gz but plain text: read by content (magic bytes 1F 8B absent)', {}, { n: 3 }],
];

describe('awkward files: expected outcome of each', () => {
  test.each(CASES)('%s — %s', async (file, _why, input, want) => {
    let s: FixSeries | undefined;
    let err: unknown;
    try {
      s = await readFixLog(join(DIR, file), file, cfg(input));
    } catch (e) {
      err = e;
    }
    if ('error' in want) {
      expect(err, `expected ${file} to be refused`).toBeInstanceOf(InputError);
      const ie = err as InputError;
      expect(ie.file).toBe(file);
      expect(ie.message).toMatch(want.error);
      expect(ie.message.startsWith(file)).toBe(true);
      if (want.line !== undefined) expect(ie.line).toBe(want.line);
      return;
    }
    if (err) throw err;
    expect(s!.n).toBe(want.n);
    if (want.format) expect(s!.meta.format).toBe(want.format);
    for (const [code, line] of want.warn ?? []) {
      const hit = s!.warnings.find((w) => w.code === code && (line === undefined || w.line === line));
      expect(hit, `warning ${code}${line !== undefined ? ` at line ${line}` : ''} in ${JSON.stringify(s!.warnings)}`).toBeDefined();
      expect(hit!.file).toBe(file);
    }
    for (const code of want.noWarn ?? []) expect(s!.warnings.some((w) => w.code === code), code).toBe(false);
    want.check?.(s!);
  });
});

describe('input.strict', () => {
  // [file, fails under strict?] — interpretation notes (height-reference, time-unit) do not fail
  const table: Array<[string, boolean]> = [
    ['bom-utf8.csv', false],
    ['duplicates.csv', true],
    ['out-of-order.csv', true],
    ['bad-checksums.nmea', true],
    ['track.gpx.gz', false],
    ['unix-ms.csv', false],
    ['gga-only.nmea', false], // the date taken from input.date is a note, not a problem
    ['truncated-last-line.csv', true],
  ];
  test.each(table)('%s fails: %s', async (file, fails) => {
    const p = readFixLog(join(DIR, file), file, cfg({ strict: true, ...(file === 'gga-only.nmea' ? { date: '2024-12-31' } : {}) }));
    if (fails) await expect(p).rejects.toThrow(/strict mode: \d+ warning/);
    else await expect(p).resolves.toBeDefined();
  });
  test('the strict message names the first warning line', async () => {
    const e = await readFixLog(join(DIR, 'bad-checksums.nmea'), 'bad-checksums.nmea', cfg({ strict: true })).catch((x: unknown) => x);
    expect(e).toBeInstanceOf(InputError);
    expect((e as InputError).line).toBe(3);
    expect((e as Error).message).toMatch(/^bad-checksums\.nmea:3: strict mode/);
  });
  test('a missing file is an InputError, not a crash', async () => {
    await expect(readFixLog(join(DIR, 'no-such-file.csv'), 'no-such-file.csv', cfg())).rejects.toThrow(/cannot read: ENOENT/);
  });
});
