/**
 * GPS − UTC offset (leap seconds accumulated since the GPS epoch).
 * Sources: IS-GPS-200 §3.3.4 (GPS time zero 1980-01-06T00:00:00 UTC, no leap seconds in GPS time);
 * IERS Bulletin C (UTC − TAI history; TAI − GPS = 19 s). Bulletin C 52 keeps GPS − UTC = 18 s
 * from 2017-01-01. Update this table when IERS announces a new leap second.
 */

/** [Unix seconds (UTC) from which the offset holds, GPS − UTC in seconds]. */
export const GPS_MINUS_UTC_TABLE: ReadonlyArray<readonly [number, number]> = [
  [Date.UTC(1981, 6, 1) / 1000, 1],
  [Date.UTC(1982, 6, 1) / 1000, 2],
  [Date.UTC(1983, 6, 1) / 1000, 3],
  [Date.UTC(1985, 6, 1) / 1000, 4],
  [Date.UTC(1988, 0, 1) / 1000, 5],
  [Date.UTC(1990, 0, 1) / 1000, 6],
  [Date.UTC(1991, 0, 1) / 1000, 7],
  [Date.UTC(1992, 6, 1) / 1000, 8],
  [Date.UTC(1993, 6, 1) / 1000, 9],
  [Date.UTC(1994, 6, 1) / 1000, 10],
  [Date.UTC(1996, 0, 1) / 1000, 11],
  [Date.UTC(1997, 6, 1) / 1000, 12],
  [Date.UTC(1999, 0, 1) / 1000, 13],
  [Date.UTC(2006, 0, 1) / 1000, 14],
  [Date.UTC(2009, 0, 1) / 1000, 15],
  [Date.UTC(2012, 6, 1) / 1000, 16],
  [Date.UTC(2015, 6, 1) / 1000, 17],
  [Date.UTC(2017, 0, 1) / 1000, 18],
];

/** GPS − UTC (s) in force at a UTC instant given as Unix seconds. */
export function gpsMinusUtcAtUtc(unixUtcSec: number): number {
  let off = 0;
  for (const [from, value] of GPS_MINUS_UTC_TABLE) {
    if (unixUtcSec >= from) off = value;
    else break;
  }
  return off;
}

/**
 * GPS − UTC (s) for an instant given on the GPS time scale, expressed as "Unix-like" seconds
 * (seconds since 1970 counted without leap seconds, offset so that the GPS epoch maps to 315964800).
 */
export function gpsMinusUtcAtGps(gpsAsUnixSec: number): number {
  let off = 0;
  for (const [from, value] of GPS_MINUS_UTC_TABLE) {
    // the step happens when GPS time reaches from + value (GPS runs ahead by the new offset)
    if (gpsAsUnixSec >= from + value) off = value;
    else break;
  }
  return off;
}
