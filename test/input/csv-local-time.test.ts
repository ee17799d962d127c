/**
 * CSV logs written in local time across clock changes (src/input/csv-fixes.ts with
 * src/time/local-time.ts). Each log is made as a logger would write it: UTC instants at 1 Hz, written
 * as the wall clock of the zone (luxon's IANA zone rules). Change instants (common practice, IANA
 * tz database): EU at 01:00 UTC on the last Sundays of March and October; US at 02:00 local on the
 * second Sunday of March and the first Sunday of November; Australia/Sydney forward on the first
 * Sunday of October, back on the first Sunday of April.
 */
import { describe, expect, test } from 'vitest';
import { DateTime } from 'luxon';
import { configSchema, type HindcastConfig } from '../../src/config/schema.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';

const cfg = (input: Record<string, unknown>): HindcastConfig => configSchema.parse({ input });
const U = (y: number, mo: number, d: number, h = 0, mi = 0, s = 0) => Date.UTC(y, mo - 1, d, h, mi, s) / 1000;

/** Rows at 1 Hz from t0 (UTC s) for n seconds; `wall(t)` writes the time column. */
function log(t0: number, n: number, wall: (tSec: number) => string): string {
  const lines = ['time,lat,lon,height'];
  for (let i = 0; i < n; i++) lines.push(`${wall(t0 + i)},${(52.5 + i * 1e-6).toFixed(7)},13.4,40.0`);
  return lines.join('\n') + '\n';
}
const inZone = (zone: string, fmt = 'yyyy-MM-dd HH:mm:ss') => (t: number) => DateTime.fromMillis(t * 1000, { zone }).toFormat(fmt);
const times = (text: string, c: HindcastConfig) => readFixCsv(text, 'log.csv', c);

describe('autumn: the hour that occurs twice', () => {
  test.each([
    // zone, first UTC instant: 5 min before the change and 5 min after it (10 min of log)
    { zone: 'Europe/Berlin', t0: U(2025, 10, 26, 0, 55) }, // 02:55–02:59:59 CEST, then 02:00–02:04:59 CET
    { zone: 'America/New_York', t0: U(2025, 11, 2, 5, 55) }, // 01:55 EDT, then 01:00 EST
    { zone: 'Australia/Sydney', t0: U(2025, 4, 5, 15, 55) }, // 02:55 AEDT, then 02:00 AEST
  ])('$zone: every row at its own UTC instant, the rows named in one warning', ({ zone, t0 }) => {
    const s = times(log(t0, 600, inZone(zone)), cfg({ timeZone: zone }));
    expect(s.n).toBe(600);
    for (let i = 0; i < 600; i++) expect(s.tSec[i]).toBe(t0 + i); // exact (whole seconds)
    const w = s.warnings.find((x) => x.code === 'local-time-ambiguous')!;
    expect(w.line).toBe(2);
    expect(w.message).toMatch(/600 row\(s\) at local times that occur twice/);
    expect(w.message).toMatch(/lines 2–301 as UTC[+-]\d\d:00, lines 302–601 as UTC/);
    expect(s.warnings.map((x) => x.code)).not.toContain('rows-sorted');
  });

  test('starting inside the repeated hour with nothing before it: the rows are skipped, not guessed', () => {
    // 02:00–02:04:59 CET only: as CEST it would be an hour earlier, also in order
    const t0 = U(2025, 10, 26, 1, 0);
    const text = log(t0, 300, inZone('Europe/Berlin')) + '2025-10-26 03:00:00,52.5,13.4,40\n2025-10-26 03:00:01,52.5,13.4,40\n';
    const s = times(text, cfg({ timeZone: 'Europe/Berlin' }));
    // the next row (03:00 CET = 02:00 UTC) follows both readings (CET ending 01:04:59 UTC, CEST
    // ending 00:04:59 UTC) in order, and both with a step over 60 s: the order does not decide
    expect(s.n).toBe(2);
    expect(s.tSec[0]).toBe(U(2025, 10, 26, 2, 0, 0));
    const w = s.warnings.find((x) => x.code === 'local-time-ambiguous-skipped')!;
    expect(w.message).toMatch(/300 row\(s\).*skipped.*lines 2–301/);
  });

  test('a log that runs on through the repeated hour from before it takes the continuous reading', () => {
    // 01:50 CEST to 02:10 CEST (00:10 UTC): every 02:xx row ambiguous; continuity keeps CEST
    const t0 = U(2025, 10, 25, 23, 50);
    const s = times(log(t0, 1200, inZone('Europe/Berlin')), cfg({ timeZone: 'Europe/Berlin' }));
    expect(s.n).toBe(1200);
    expect(s.tSec[1199]).toBe(t0 + 1199);
  });
});

describe('spring: the hour that is skipped', () => {
  test.each([
    { zone: 'Europe/Berlin', t0: U(2025, 3, 30, 0, 55) }, // 01:55 CET, then 03:00 CEST
    { zone: 'America/New_York', t0: U(2025, 3, 9, 6, 55) }, // 01:55 EST, then 03:00 EDT
    { zone: 'Australia/Sydney', t0: U(2025, 10, 4, 15, 55) }, // 01:55 AEST, then 03:00 AEDT
  ])('$zone: a logger that changes its clock on time is read exactly, without a warning', ({ zone, t0 }) => {
    const s = times(log(t0, 600, inZone(zone)), cfg({ timeZone: zone }));
    for (let i = 0; i < 600; i++) expect(s.tSec[i]).toBe(t0 + i);
    expect(s.warnings.filter((x) => x.code.startsWith('local-time'))).toEqual([]);
  });

  test.each([
    { zone: 'Europe/Berlin', t0: U(2025, 3, 30, 0, 55), before: 60 },
    { zone: 'America/New_York', t0: U(2025, 3, 9, 6, 55), before: -300 },
  ])('$zone: a logger that changes its clock late writes times that do not exist; read with the old offset', ({ zone, t0, before }) => {
    // the clock keeps standard time for 10 minutes after the change
    const wall = (t: number) => DateTime.fromMillis(t * 1000, { zone: 'UTC' }).plus({ minutes: before }).toFormat('yyyy-MM-dd HH:mm:ss');
    const s = times(log(t0, 600, wall), cfg({ timeZone: zone }));
    for (let i = 0; i < 600; i++) expect(s.tSec[i]).toBe(t0 + i);
    const w = s.warnings.find((x) => x.code === 'local-time-nonexistent')!;
    expect(w.message).toMatch(/300 row\(s\) at local times that do not exist.*lines 302–601 as UTC/);
  });
});

describe('input.timeFormat', () => {
  test('day-first dates in a zone', () => {
    const text = 'time;lat;lon\n18.06.2025 14:05:00;52,5;13,4\n18.06.2025 14:05:01;52,5;13,4\n';
    const s = times(text, cfg({ timeZone: 'Europe/Berlin', timeFormat: 'dd.MM.yyyy HH:mm:ss' }));
    expect(Array.from(s.tSec)).toEqual([U(2025, 6, 18, 12, 5, 0), U(2025, 6, 18, 12, 5, 1)]);
  });
  test('a format with an offset token needs no zone; rows that do not match are skipped with the format named', () => {
    const text = 'time,lat,lon\n18/06/2025 14:05:00 +02:00,52.5,13.4\n18/06/2025 14:05:01 +02:00,52.5,13.4\n2025-06-18T12:05:02Z,52.5,13.4\n';
    const s = times(text, cfg({ timeFormat: 'dd/MM/yyyy HH:mm:ss ZZ' }));
    expect(Array.from(s.tSec)).toEqual([U(2025, 6, 18, 12, 5, 0), U(2025, 6, 18, 12, 5, 1)]);
    expect(s.warnings[0]!.line).toBe(4);
    expect(s.warnings[0]!.message).toMatch(/does not match input.timeFormat "dd\/MM\/yyyy HH:mm:ss ZZ"/);
  });
  test('compact numeric formats are read by the format, not as Unix seconds', () => {
    const text = 'time,lat,lon\n20250618140500,52.5,13.4\n20250618140501,52.5,13.4\n';
    const s = times(text, cfg({ timeZone: 'UTC', timeFormat: 'yyyyMMddHHmmss' }));
    expect(Array.from(s.tSec)).toEqual([U(2025, 6, 18, 14, 5, 0), U(2025, 6, 18, 14, 5, 1)]);
  });
});

describe('the autumn log through the whole session', () => {
  test('a 600 s drive written in Berlin local time: as long as its UTC copy, one segment, the same epochs', async () => {
    const { defaultSpec, scenarioCsv, simulate } = await import('../../src/simulate/scenario.js');
    const { processSession } = await import('../../src/session/process-session.js');
    const { loadConfig } = await import('../../src/config/load.js');
    // 02:55:00–02:59:59 CEST, then 02:00:00–02:04:59 CET (2025-10-26)
    const sc = simulate(defaultSpec('vehicle', 3, { durationSec: 600, startUnixSec: U(2025, 10, 26, 0, 55) }));
    const utcText = scenarioCsv(sc);
    const localText = utcText.replace(/^(\d{4}-\d{2}-\d{2}T[\d:.]+)Z/gm, (_m, iso: string) =>
      DateTime.fromISO(iso + 'Z').setZone('Europe/Berlin').toFormat("yyyy-MM-dd'T'HH:mm:ss.SSS"),
    );
    expect(localText).toContain('T02:59:59.000,');
    const c = loadConfig({ overrides: { input: { timeZone: 'Europe/Berlin' } } });
    const local = processSession(readFixCsv(localText, 'night.csv', c), c, 'night');
    const utc = processSession(readFixCsv(utcText, 'night.csv', c), c, 'night');
    expect(local.metrics.durationSec).toBe(utc.metrics.durationSec); // exact
    expect(local.metrics.durationSec).toBeLessThan(600);
    expect(local.metrics.segmentCount).toBe(1);
    expect(Array.from(local.tSec)).toEqual(Array.from(utc.tSec));
    expect(local.warnings.map((w) => w.code)).not.toContain('rows-sorted');
  });
});
