import { describe, expect, test } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { decisionsPathFor, fixAtTime, parseDecisions, readDecisions } from '../../src/input/decisions-csv.js';
import { FixSeriesBuilder } from '../../src/input/fix-series.js';
import { InputError, InputErrorList } from '../../src/errors.js';

// five fixes one second apart from 2026-05-13T09:30:00Z, the third at a fraction of a second
const T0 = Date.UTC(2026, 4, 13, 9, 30, 0) / 1000;
function series() {
  const b = new FixSeriesBuilder('log.csv');
  [0, 1, 2.25, 3, 4].forEach((dt, i) => b.add(T0 + dt, 52.5, 13.4, 40, i + 2));
  return b.finish();
}
const iso = (dt: number) => new Date(Math.round((T0 + dt) * 1000)).toISOString();

describe('decisions file', () => {
  test('rows are matched to fixes by time; note optional; columns in any order and case', () => {
    const text = `Decision,TIME,note\nreject,${iso(1)},multipath near the wall\nkeep,${iso(2.25)},\n`;
    expect(parseDecisions(text, 'log.decisions.csv', series())).toEqual(new Map([[1, 'reject'], [2, 'keep']]));
  });

  test('quoted notes with commas, a BOM, comments, blank lines, CRLF, semicolons', () => {
    const t1 = `\uFEFFtime,decision,note\r\n# reviewed by A.\r\n\r\n${iso(0)},KEEP,"under a bridge, kept"\r\n`;
    expect(parseDecisions(t1, 'd.csv', series())).toEqual(new Map([[0, 'keep']]));
    const t2 = `time;decision;note\n${iso(4)};reject;x\n`;
    expect(parseDecisions(t2, 'd.csv', series())).toEqual(new Map([[4, 'reject']]));
  });

  test('times within 1 ms match, and offsets other than Z are understood', () => {
    const s = series();
    const text = `time,decision\n2026-05-13T09:30:03.001Z,reject\n2026-05-13T11:30:04.000+02:00,keep\n`;
    expect(parseDecisions(text, 'd.csv', s)).toEqual(new Map([[3, 'reject'], [4, 'keep']]));
    expect(fixAtTime(s.tSec, T0 + 3.0015)).toBe(-1);
    expect(fixAtTime(s.tSec, T0 - 1)).toBe(-1);
    expect(fixAtTime(s.tSec, T0 + 4.0009)).toBe(4);
  });

  test('an empty file or a header alone decides nothing', () => {
    expect(parseDecisions('', 'd.csv', series()).size).toBe(0);
    expect(parseDecisions('time,decision,note\n', 'd.csv', series()).size).toBe(0);
  });

  test('the same decision twice is fine', () => {
    expect(parseDecisions(`time,decision\n${iso(1)},reject\n${iso(1)},reject\n`, 'd.csv', series())).toEqual(new Map([[1, 'reject']]));
  });

  test.each([
    { why: 'no time column', text: 'when,decision\nx,keep\n', line: 1, msg: /time and decision/ },
    { why: 'unknown column', text: `time,decision,colour\n${iso(0)},keep,red\n`, line: 1, msg: /unknown column/ },
    { why: 'unknown time', text: `time,decision\n${iso(0)},keep\n${iso(7)},reject\n`, line: 3, msg: /no fix of log\.csv/ },
    { why: 'time 2 ms off', text: `time,decision\n2026-05-13T09:30:01.002Z,keep\n`, line: 2, msg: /within 1 ms/ },
    { why: 'time without zone', text: `time,decision\n2026-05-13T09:30:01,keep\n`, line: 2, msg: /with a zone/ },
    { why: 'not a time', text: `time,decision\nyesterday,keep\n`, line: 2, msg: /not an ISO 8601 time/ },
    { why: 'empty time', text: `time,decision\n,keep\n`, line: 2, msg: /empty/ },
    { why: 'bad decision', text: `time,decision\n${iso(0)},maybe\n`, line: 2, msg: /keep or reject/ },
    { why: 'conflicting decisions', text: `time,decision\n${iso(1)},keep\n\n${iso(1)},reject\n`, line: 4, msg: /already decided "keep" on line 2/ },
    { why: 'unquoted comma in note', text: `time,decision,note\n${iso(1)},keep,a,b\n`, line: 2, msg: /quote a note/ },
  ])('$why → InputError naming file and line', ({ text, line, msg }) => {
    let err: unknown;
    try {
      parseDecisions(text, 'trip.decisions.csv', series());
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputError);
    const e = err as InputError;
    expect(e.file).toBe('trip.decisions.csv');
    expect(e.line).toBe(line);
    expect(e.message).toMatch(msg);
    expect(e.message.startsWith(`trip.decisions.csv:${line}`)).toBe(true);
  });

  test('readDecisions reads the file and names it in errors', () => {
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-dec-'));
    const p = join(dir, 'log.decisions.csv');
    writeFileSync(p, `time,decision,note\n${iso(3)},reject,\n`);
    expect(readDecisions(p, series())).toEqual(new Map([[3, 'reject']]));
    expect(() => readDecisions(join(dir, 'missing.decisions.csv'), series())).toThrow(/missing\.decisions\.csv: cannot read/);
  });

  test.each([
    ['logs/trip.csv', 'logs/trip.decisions.csv'],
    ['logs/trip.nmea.gz', 'logs/trip.decisions.csv'],
    ['/a/b/day1.gpx', '/a/b/day1.decisions.csv'],
  ])('decisionsPathFor(%s) = %s', (log, want) => expect(decisionsPathFor(log)).toBe(want));
});

describe('the whole decisions file is checked at once', () => {
  test('every bad row is reported in one error, each with its file, line and column', () => {
    const text = `time,decision,note\n${iso(0)},keep,\n2026-05-13T09:30:01.5Z,reject,no such fix\n${iso(2.25)},rejcet,typo\nyesterday,maybe,two problems\n${iso(3)},keep,\n`;
    let err: unknown;
    try {
      parseDecisions(text, 'trip.decisions.csv', series());
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(InputErrorList);
    const list = (err as InputErrorList).errors.map((e) => [e.line, e.column]);
    expect(list).toEqual([
      [3, 'time'],
      [4, 'decision'],
      [5, 'time'],
      [5, 'decision'],
    ]);
    const msg = (err as Error).message;
    expect(msg).toMatch(/^trip\.decisions\.csv: 4 rows cannot be applied/);
    for (const l of [3, 4, 5]) expect(msg).toContain(`trip.decisions.csv:${l} (column`);
  });
});

describe('decision times written as the log writes them', () => {
  // the series' times are 09:30:00Z…; in Europe/Berlin (CEST, UTC+02:00 in May) 11:30:00
  test.each([
    { why: 'local ISO in the log zone', settings: { timeZone: 'Europe/Berlin' }, text: '2026-05-13T11:30:01', want: 1 },
    { why: 'local with a space', settings: { timeZone: 'Europe/Berlin' }, text: '2026-05-13 11:30:03', want: 3 },
    { why: 'the log format', settings: { timeZone: 'Europe/Berlin', timeFormat: 'dd.MM.yyyy HH:mm:ss.SSS' }, text: '13.05.2026 11:30:02.250', want: 2 },
    { why: 'UTC still accepted with a format', settings: { timeZone: 'Europe/Berlin', timeFormat: 'dd.MM.yyyy HH:mm:ss' }, text: iso(4), want: 4 },
  ])('$why', ({ settings, text, want }) => {
    expect(parseDecisions(`time,decision\n${text},reject\n`, 'd.csv', series(), settings)).toEqual(new Map([[want, 'reject']]));
  });

  test('a local time that occurs twice matches the one reading that is a fix; both fixes → error asking for an offset', () => {
    // fixes at 00:30:00Z and 01:30:00Z on 2025-10-26 are both 02:30:00 in Europe/Berlin
    const t0 = Date.UTC(2025, 9, 26, 0, 30) / 1000;
    const b = new FixSeriesBuilder('log.csv');
    b.add(t0, 52.5, 13.4, 40, 2);
    b.add(t0 + 1, 52.5, 13.4, 40, 3);
    const one = b.finish();
    expect(parseDecisions('time,decision\n2025-10-26 02:30:00,reject\n', 'd.csv', one, { timeZone: 'Europe/Berlin' })).toEqual(new Map([[0, 'reject']]));
    const b2 = new FixSeriesBuilder('log.csv');
    b2.add(t0, 52.5, 13.4, 40, 2);
    b2.add(t0 + 3600, 52.5, 13.4, 40, 3);
    expect(() => parseDecisions('time,decision\n2025-10-26 02:30:00,reject\n', 'd.csv', b2.finish(), { timeZone: 'Europe/Berlin' })).toThrow(
      /occurs twice in Europe\/Berlin.*2025-10-26T00:30:00.000Z or 2025-10-26T01:30:00.000Z/,
    );
  });

  test('a local time without a zone setting is still refused', () => {
    expect(() => parseDecisions('time,decision\n2026-05-13 11:30:01,reject\n', 'd.csv', series())).toThrow(/with a zone/);
  });
});
