/**
 * ISO 8601 and numeric time parsing (src/time/parse-time.ts).
 * Expected instants are computed by Date.UTC (exact) or stated beside the case; DST rules from the
 * IANA tz database (EU: last Sunday of March 01:00 UTC, last Sunday of October 01:00 UTC; US:
 * second Sunday of March 02:00 local) — common practice.
 */
import { describe, expect, it } from 'vitest';
import { formatIsoUtc, parseIsoToUnix, parseUnix } from '../../src/time/parse-time.js';

const utc = (y: number, mo: number, d: number, h = 0, mi = 0, s = 0) => Date.UTC(y, mo - 1, d, h, mi, s) / 1000;

describe('parseIsoToUnix with a zone or offset in the text', () => {
  it.each([
    ['2005-01-28T13:29:47Z', utc(2005, 1, 28, 13, 29, 47)],
    ['2005-01-28 13:29:47Z', utc(2005, 1, 28, 13, 29, 47)],
    ['2005-01-28T15:29:47+02:00', utc(2005, 1, 28, 13, 29, 47)],
    ['2005-01-28T08:29:47-0500', utc(2005, 1, 28, 13, 29, 47)],
    ['2005-01-28T19:29:47+05:30', utc(2005, 1, 28, 13, 59, 47)],
    ['2005-01-28T00:15:00+01:00', utc(2005, 1, 27, 23, 15, 0)],
    ['2005-01-28T13:29:47.125Z', utc(2005, 1, 28, 13, 29, 47) + 0.125],
    ['2005-01-28T13:29:47.5+00:00', utc(2005, 1, 28, 13, 29, 47) + 0.5],
    ['2024-02-29T12:00:00Z', utc(2024, 2, 29, 12)],
    ['1970-01-01T00:00:00Z', 0],
    ['1969-12-31T23:59:59Z', -1],
    ['2005-01-28T13:29:47+02', utc(2005, 1, 28, 11, 29, 47)],
    ['2005-01-28T13:29Z', utc(2005, 1, 28, 13, 29)],
    ['2005-01-28T13:29-05:00', utc(2005, 1, 28, 18, 29)],
  ])('%s → %f', (text, want) => {
    expect(Math.abs(parseIsoToUnix(text) - want)).toBeLessThan(1e-9);
  });
  it('a zone configured does not override an offset written in the text', () => {
    expect(parseIsoToUnix('2005-01-28T13:29:47Z', 'America/New_York')).toBe(utc(2005, 1, 28, 13, 29, 47));
    expect(parseIsoToUnix('2005-01-28T13:29:47+01:00', 'Asia/Tokyo')).toBe(utc(2005, 1, 28, 12, 29, 47));
  });
  it('microsecond fractions keep sub-millisecond resolution (tol 1e-6 s)', () => {
    expect(Math.abs(parseIsoToUnix('2021-06-01T00:00:00.123456Z') - (utc(2021, 6, 1) + 0.123456))).toBeLessThan(1e-6);
  });
});

describe('parseIsoToUnix refuses invalid text (NaN)', () => {
  it.each([
    ['2023-02-29T00:00:00Z', 'no Feb 29 in 2023'],
    ['2024-02-30T00:00:00Z', 'Feb 30'],
    ['2024-04-31T00:00:00Z', 'April 31'],
    ['2024-13-01T00:00:00Z', 'month 13'],
    ['2024-00-10T00:00:00Z', 'month 0'],
    ['2024-01-00T00:00:00Z', 'day 0'],
    ['2024-01-01T24:00:00Z', 'hour 24'],
    ['2024-01-01T12:60:00Z', 'minute 60'],
    ['2024-01-01T12:00:61Z', 'second 61'],
    ['not a time', 'garbage'],
    ['', 'empty'],
  ])('%s (%s)', (text) => {
    expect(parseIsoToUnix(text)).toBeNaN();
    expect(parseIsoToUnix(text, 'UTC')).toBeNaN();
  });
  it.each([
    ['2024-01-01T12:00:00', 'date-time'],
    ['2024-01-01 12:00:00.5', 'space separator, fraction'],
    ['2024-01-01T12:00', 'no seconds'],
    ['2024-01-01', 'date only'],
    ['2024-01', 'year-month'],
    ['2024-01-01T12:00:00.250', 'fraction'],
  ])('no zone in the text and none configured → NaN: %s (%s)', (text) => {
    expect(parseIsoToUnix(text)).toBeNaN();
  });
});

describe('parseIsoToUnix with a configured IANA zone (luxon), incl. DST', () => {
  it.each([
    ['2024-07-01T12:00:00', 'Europe/Berlin', utc(2024, 7, 1, 10), 'CEST = UTC+2'],
    ['2024-01-15T12:00:00', 'Europe/Berlin', utc(2024, 1, 15, 11), 'CET = UTC+1'],
    ['2024-03-31T01:59:59', 'Europe/Berlin', utc(2024, 3, 31, 0, 59, 59), 'last second of CET'],
    ['2024-03-31T03:00:00', 'Europe/Berlin', utc(2024, 3, 31, 1), 'first second of CEST (02:00–03:00 local does not exist)'],
    ['2024-10-27T04:00:00', 'Europe/Berlin', utc(2024, 10, 27, 3), 'after the autumn change, CET again'],
    ['2024-03-10T01:30:00', 'America/New_York', utc(2024, 3, 10, 6, 30), 'EST = UTC−5'],
    ['2024-03-10T03:30:00', 'America/New_York', utc(2024, 3, 10, 7, 30), 'EDT = UTC−4'],
    ['2024-06-01T08:00:00.250', 'Asia/Kolkata', utc(2024, 6, 1, 2, 30) + 0.25, 'IST = UTC+5:30, fraction'],
    ['2024-06-01T08:00:00', 'UTC', utc(2024, 6, 1, 8), 'UTC named'],
    ['2024-06-01 08:00:00', 'UTC', utc(2024, 6, 1, 8), 'UTC named, space separator'],
  ])('%s in %s → %d (%s)', (text, zone, want) => {
    expect(Math.abs(parseIsoToUnix(text, zone) - want)).toBeLessThan(1e-9);
  });
  it('an invalid date is refused in a zone too', () => {
    expect(parseIsoToUnix('2023-02-29T12:00:00', 'Europe/Berlin')).toBeNaN();
  });
});

describe('parseUnix', () => {
  it.each([
    ['1106918987', 's', 1106918987],
    ['1106918987.25', 's', 1106918987.25],
    ['1106918987250', 'ms', 1106918987.25],
    ['-1', 's', -1],
  ] as const)('%s (%s) → %f', (text, unit, want) => {
    expect(parseUnix(text, unit)).toBe(want);
  });
  it.each(['', '  ', 'abc', 'NaN', 'Infinity', '12:00'])('%j → NaN', (text) => {
    expect(parseUnix(text)).toBeNaN();
  });
});

describe('formatIsoUtc', () => {
  it.each([
    [utc(2005, 1, 28, 13, 29, 47) + 0.125, '2005-01-28T13:29:47.125Z'],
    [0, '1970-01-01T00:00:00.000Z'],
    [315964800, '1980-01-06T00:00:00.000Z'],
    [utc(2016, 12, 31, 23, 59, 59) + 0.9996, '2017-01-01T00:00:00.000Z'],
    [-0.5, '1969-12-31T23:59:59.500Z'],
  ])('%f → %s (milliseconds, rounded)', (t, want) => {
    expect(formatIsoUtc(t)).toBe(want);
  });
  it('parse ∘ format is the identity at millisecond resolution', () => {
    for (const t of [1106918987.125, 1700000000.001, 1483228799.999]) expect(parseIsoToUnix(formatIsoUtc(t))).toBeCloseTo(t, 6);
  });
});
