/**
 * GPS week / time of week ⇄ UTC (src/time/gps-time.ts) and the leap-second table
 * (src/time/leap-seconds.ts).
 * Sources: IS-GPS-200 §3.3.4 (GPS time zero 1980-01-06T00:00:00 UTC, 604800 s a week, 10-bit
 * broadcast week); IERS Bulletin C (leap seconds; Bulletin C 52: GPS − UTC = 18 s from 2017-01-01).
 */
import { describe, expect, it } from 'vitest';
import { GPS_EPOCH_UNIX_SEC, gpsWeekTowToUnixUtc, resolveWeekRollover, SECONDS_PER_WEEK, unixUtcToGpsWeekTow } from '../../src/time/gps-time.js';
import { GPS_MINUS_UTC_TABLE, gpsMinusUtcAtGps, gpsMinusUtcAtUtc } from '../../src/time/leap-seconds.js';
import { Rng } from '../../src/simulate/rng.js';

const utc = (y: number, mo: number, d: number, h = 0, mi = 0, s = 0) => Date.UTC(y, mo - 1, d, h, mi, s) / 1000;

describe('GPS epoch and week (IS-GPS-200 §3.3.4)', () => {
  it('GPS epoch 1980-01-06T00:00:00 UTC = Unix 315964800 (IS-GPS-200 §3.3.4; exact)', () => {
    expect(GPS_EPOCH_UNIX_SEC).toBe(315964800);
    expect(utc(1980, 1, 6)).toBe(315964800);
    expect(SECONDS_PER_WEEK).toBe(604800);
    expect(unixUtcToGpsWeekTow(315964800)).toEqual({ week: 0, towSec: 0 });
    expect(gpsWeekTowToUnixUtc(0, 0)).toBe(315964800);
  });
  it('week 1307, TOW 480600 s = 2005-01-28 13:30:00 GPS (derived) = 13:29:47 UTC (GPS − UTC = 13 s, IERS Bulletin C; exact)', () => {
    expect(GPS_EPOCH_UNIX_SEC + 1307 * 604800 + 480600).toBe(utc(2005, 1, 28, 13, 30, 0));
    expect(gpsWeekTowToUnixUtc(1307, 480600)).toBe(utc(2005, 1, 28, 13, 29, 47));
    expect(unixUtcToGpsWeekTow(utc(2005, 1, 28, 13, 29, 47))).toEqual({ week: 1307, towSec: 480600 });
  });
  it('fractional time of week survives (tol 1e-6 s)', () => {
    const t = gpsWeekTowToUnixUtc(2300, 123456.789);
    const back = unixUtcToGpsWeekTow(t);
    expect(back.week).toBe(2300);
    expect(Math.abs(back.towSec - 123456.789)).toBeLessThan(1e-6);
  });
  it('week rollovers: week 1024 starts 1999-08-22 00:00 GPS, week 2048 starts 2019-04-07 00:00 GPS (IS-GPS-200; exact)', () => {
    expect(gpsWeekTowToUnixUtc(1024, 0)).toBe(utc(1999, 8, 22) - 13);
    expect(gpsWeekTowToUnixUtc(2048, 0)).toBe(utc(2019, 4, 7) - 18);
    expect(unixUtcToGpsWeekTow(utc(2019, 4, 7) - 18)).toEqual({ week: 2048, towSec: 0 });
    expect(unixUtcToGpsWeekTow(utc(2019, 4, 7) - 19)).toEqual({ week: 2047, towSec: 604799 });
  });
});

describe('GPS − UTC (IERS Bulletin C)', () => {
  // [UTC instant, GPS − UTC]; IERS Bulletin C history (TAI − GPS = 19 s); exact
  it.each([
    [utc(1980, 6, 1), 0, 'before the first leap second after the GPS epoch'],
    [utc(1981, 7, 1), 1, '1981-07-01'],
    [utc(1999, 1, 1), 13, '1999-01-01'],
    [utc(2005, 1, 28), 13, 'in 2005'],
    [utc(2006, 1, 1), 14, '2006-01-01'],
    [utc(2016, 6, 1), 17, 'in 2016'],
    [utc(2017, 1, 1), 18, '2017-01-01 (Bulletin C 52)'],
    [utc(2025, 6, 1), 18, 'since 2017 (Bulletin C 52 onward)'],
  ])('at %d: %d s (%s)', (t, off) => {
    expect(gpsMinusUtcAtUtc(t)).toBe(off);
  });
  it('the step at 2017-01-01: 23:59:59 → 17 s, 00:00:00 → 18 s (exact)', () => {
    expect(gpsMinusUtcAtUtc(utc(2016, 12, 31, 23, 59, 59))).toBe(17);
    expect(gpsMinusUtcAtUtc(utc(2016, 12, 31, 23, 59, 59) + 0.999)).toBe(17);
    expect(gpsMinusUtcAtUtc(utc(2017, 1, 1))).toBe(18);
    // on the GPS scale the step is when GPS reaches 2017-01-01T00:00:18
    expect(gpsMinusUtcAtGps(utc(2017, 1, 1) + 17)).toBe(17);
    expect(gpsMinusUtcAtGps(utc(2017, 1, 1) + 18)).toBe(18);
  });
  it('UTC 2016-12-31T23:59:59 and 2017-01-01T00:00:00 are 2 GPS seconds apart (the leap second 23:59:60 between; exact)', () => {
    const a = unixUtcToGpsWeekTow(utc(2016, 12, 31, 23, 59, 59));
    const b = unixUtcToGpsWeekTow(utc(2017, 1, 1));
    expect(b.week).toBe(a.week);
    expect(b.towSec - a.towSec).toBe(2);
  });
  it('the table is increasing by one second at a time, starting at 1 in 1981 (IERS Bulletin C)', () => {
    expect(GPS_MINUS_UTC_TABLE.length).toBe(18);
    GPS_MINUS_UTC_TABLE.forEach(([from, v], i) => {
      expect(v).toBe(i + 1);
      if (i > 0) expect(from).toBeGreaterThan(GPS_MINUS_UTC_TABLE[i - 1]![0]);
      // leap seconds are inserted at the end of June or December
      const d = new Date(from * 1000);
      expect(d.getUTCDate()).toBe(1);
      expect([0, 6]).toContain(d.getUTCMonth());
    });
  });
});

describe('round trip UTC → week/TOW → UTC', () => {
  it('1 s either side of every leap second (exact)', () => {
    for (const [from] of GPS_MINUS_UTC_TABLE)
      for (const t of [from - 1, from, from + 1]) {
        const { week, towSec } = unixUtcToGpsWeekTow(t);
        expect(gpsWeekTowToUnixUtc(week, towSec)).toBe(t);
      }
  });
  it('2000 seeded instants 1980–2035 (tol 1e-6 s) with 0 ≤ TOW < 604800', () => {
    const rng = new Rng(1980);
    for (let i = 0; i < 2000; i++) {
      const t = rng.uniform(utc(1980, 1, 6), utc(2035, 1, 1));
      const { week, towSec } = unixUtcToGpsWeekTow(t);
      expect(towSec).toBeGreaterThanOrEqual(0);
      expect(towSec).toBeLessThan(604800);
      expect(Math.abs(gpsWeekTowToUnixUtc(week, towSec) - t)).toBeLessThan(1e-6);
    }
  });
});

describe('resolveWeekRollover (closest 1024-week period to a reference; common practice)', () => {
  it.each([
    [1307 % 1024, utc(2005, 1, 28), 1307, '2005 reference'],
    [283, utc(2001, 1, 1), 1307, 'reference 4 years earlier still picks the closest period'],
    [0, utc(2019, 4, 10), 2048, 'just after the 2019-04-07 rollover'],
    [1023, utc(2019, 4, 10), 2047, 'the last week before the 2019 rollover'],
    [0, utc(1999, 8, 25), 1024, 'just after the 1999-08-22 rollover'],
    [1023, utc(1999, 8, 25), 1023, 'the last week of the first period'],
    [300, utc(1985, 1, 1), 300, 'first period: never negative'],
    [500, utc(2026, 1, 1), 2548, 'present-day period (third)'],
  ])('week10 %d, reference %d → %d (%s)', (w10, ref, want) => {
    expect(resolveWeekRollover(w10, ref)).toBe(want);
  });
});
