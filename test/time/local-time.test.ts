/**
 * Local times across clock changes (src/time/local-time.ts). The change instants are those of the
 * IANA tz database (common practice): EU zones at 01:00 UTC on the last Sunday of March and of
 * October; US zones at 02:00 local standard time on the second Sunday of March and 02:00 local
 * daylight time on the first Sunday of November; Australia/Sydney (southern hemisphere) forward at
 * 02:00 standard time on the first Sunday of October and back at 03:00 daylight time on the first
 * Sunday of April. Expected instants by Date.UTC (exact).
 */
import { describe, expect, it } from 'vitest';
import { IANAZone } from 'luxon';
import { LocalTimeReader, lineRanges, localCandidates, offsetText, resolveByOrder, type PendingRow } from '../../src/time/local-time.js';

const U = (y: number, mo: number, d: number, h = 0, mi = 0, s = 0) => Date.UTC(y, mo - 1, d, h, mi, s);

describe('localCandidates', () => {
  it.each([
    // zone, wall clock, kind, UTC candidates
    { zone: 'Europe/Berlin', wall: U(2025, 10, 26, 2, 30), kind: 'ambiguous', utc: [U(2025, 10, 26, 0, 30), U(2025, 10, 26, 1, 30)] },
    { zone: 'Europe/Berlin', wall: U(2025, 10, 26, 1, 59, 59), kind: 'unique', utc: [U(2025, 10, 25, 23, 59, 59)] },
    { zone: 'Europe/Berlin', wall: U(2025, 10, 26, 3, 0), kind: 'unique', utc: [U(2025, 10, 26, 2, 0)] },
    { zone: 'Europe/Berlin', wall: U(2025, 3, 30, 2, 30), kind: 'nonexistent', utc: [U(2025, 3, 30, 0, 30), U(2025, 3, 30, 1, 30)] },
    { zone: 'Europe/Berlin', wall: U(2025, 3, 30, 3, 0), kind: 'unique', utc: [U(2025, 3, 30, 1, 0)] },
    { zone: 'America/New_York', wall: U(2025, 11, 2, 1, 30), kind: 'ambiguous', utc: [U(2025, 11, 2, 5, 30), U(2025, 11, 2, 6, 30)] },
    { zone: 'America/New_York', wall: U(2025, 3, 9, 2, 30), kind: 'nonexistent', utc: [U(2025, 3, 9, 6, 30), U(2025, 3, 9, 7, 30)] },
    { zone: 'America/New_York', wall: U(2025, 6, 18, 14, 5), kind: 'unique', utc: [U(2025, 6, 18, 18, 5)] },
    { zone: 'Australia/Sydney', wall: U(2025, 4, 6, 2, 30), kind: 'ambiguous', utc: [U(2025, 4, 5, 15, 30), U(2025, 4, 5, 16, 30)] },
    { zone: 'Australia/Sydney', wall: U(2025, 10, 5, 2, 30), kind: 'nonexistent', utc: [U(2025, 10, 4, 15, 30), U(2025, 10, 4, 16, 30)] },
  ])('$zone $kind', ({ zone, wall, kind, utc }) => {
    const c = localCandidates(wall, IANAZone.create(zone));
    expect(c.kind).toBe(kind);
    expect(c.utcMs).toEqual(utc); // exact (ms)
  });
});

/** Pending rows for a list of [index, c0, c1] in seconds. */
const rows = (list: Array<[number, number, number]>): PendingRow[] =>
  list.map(([index, a, b]) => ({ index, tSec: [a, b], offsetMin: [0, 0], kind: 'ambiguous', line: index + 2 }));

describe('resolveByOrder', () => {
  it('a backward jump of the wall clock inside the run splits earlier from later readings', () => {
    // wall clock 10, 11, 12, then 1, 2 with a 12 s shift: earlier readings 10,11,12,1,2, later 22,23,24,13,14
    const p = rows([[0, 10, 22], [1, 11, 23], [2, 12, 24], [3, 1, 13], [4, 2, 14]]);
    const r = resolveByOrder(p, () => NaN, 5, 60);
    expect(Array.from(r.choice)).toEqual([0, 0, 0, 1, 1]);
    expect(Array.from(r.tSec)).toEqual([10, 11, 12, 13, 14]);
  });
  it('neighbours decide a run without a jump; continuity decides between two ordered choices', () => {
    const times = [0, 1, NaN, NaN, 104]; // rows 2, 3 pending
    const p = rows([[2, 2, 102], [3, 3, 103]]);
    // every split is in order between 1 and 104, and every one has a step of 101 s > 60 s: undecided
    expect(Array.from(resolveByOrder(p, (i) => times[i]!, 5, 60).choice)).toEqual([-1, -1]);
    // with the next row at 4 only the earlier readings are in order
    const t2 = [0, 1, NaN, NaN, 4];
    expect(Array.from(resolveByOrder(p, (i) => t2[i]!, 5, 60).tSec)).toEqual([2, 3]);
    // no row after: both in order, only the earlier readings continuous
    expect(Array.from(resolveByOrder(p, (i) => times[i]!, 4, 60).tSec)).toEqual([2, 3]);
  });
  it('a run alone (no neighbours, no jump) is undecided', () => {
    const p = rows([[0, 2, 102], [1, 3, 103]]);
    expect(Array.from(resolveByOrder(p, () => NaN, 2, 60).choice)).toEqual([-1, -1]);
  });
  it('rows out of order around the run leave it undecided', () => {
    const times = [500, NaN, 0];
    expect(Array.from(resolveByOrder(rows([[1, 2, 102]]), (i) => times[i]!, 3, 60).choice)).toEqual([-1]);
  });
});

describe('LocalTimeReader', () => {
  it('reads a day-first format in a zone, and ISO text with an offset as it is', () => {
    const r = new LocalTimeReader('Europe/Berlin', 'dd.MM.yyyy HH:mm:ss');
    expect(r.read('18.06.2025 14:05:00')).toEqual({ kind: 'unique', utcMs: [U(2025, 6, 18, 12, 5)], offsetMin: [120] });
    expect(r.read('2025-06-18 14:05:00')).toBeNull();
    const iso = new LocalTimeReader('Europe/Berlin');
    expect(iso.read('2025-06-18T14:05:00+00:00')).toEqual({ utcMs: U(2025, 6, 18, 14, 5) });
    expect(iso.read('2025-06-18T14:05:00.5')).toEqual({ kind: 'unique', utcMs: [U(2025, 6, 18, 12, 5) + 500], offsetMin: [120] });
    expect(new LocalTimeReader(undefined).read('2025-06-18T14:05:00')).toBeNull();
    expect(new LocalTimeReader('UTC', 'dd.MM.yyyy HH:mm')?.read('18.06.2025 14:05')).toEqual({ utcMs: U(2025, 6, 18, 14, 5) });
  });
  it('formats the warnings use', () => {
    expect(lineRanges([2, 3, 4, 7, 9, 10])).toBe('2–4, 7, 9–10');
    expect(offsetText(120)).toBe('UTC+02:00');
    expect(offsetText(-270)).toBe('UTC-04:30');
  });
});
