/**
 * GPS week / time-of-week ⇄ UTC.
 * Source: IS-GPS-200 §3.3.4 (GPS time zero 1980-01-06T00:00:00 UTC; a week is 604800 s; the legacy
 * broadcast week number is modulo 1024). Leap seconds from ./leap-seconds.ts (IERS Bulletin C).
 */
import { gpsMinusUtcAtGps, gpsMinusUtcAtUtc } from './leap-seconds.js';

/** GPS epoch 1980-01-06T00:00:00 as Unix seconds. */
export const GPS_EPOCH_UNIX_SEC = 315964800;
export const SECONDS_PER_WEEK = 604800;

/** UTC Unix seconds of a GPS week number (full, not modulo 1024) and time of week in seconds. */
export function gpsWeekTowToUnixUtc(week: number, towSec: number): number {
  const gpsAsUnix = GPS_EPOCH_UNIX_SEC + week * SECONDS_PER_WEEK + towSec;
  return gpsAsUnix - gpsMinusUtcAtGps(gpsAsUnix);
}

/** GPS week and time of week for a UTC instant in Unix seconds. */
export function unixUtcToGpsWeekTow(unixUtcSec: number): { week: number; towSec: number } {
  const gpsAsUnix = unixUtcSec + gpsMinusUtcAtUtc(unixUtcSec);
  const sinceEpoch = gpsAsUnix - GPS_EPOCH_UNIX_SEC;
  const week = Math.floor(sinceEpoch / SECONDS_PER_WEEK);
  return { week, towSec: sinceEpoch - week * SECONDS_PER_WEEK };
}

/**
 * Resolve a legacy 10-bit week (0..1023) to a full week number, taking the rollover period closest
 * to a reference instant (by default the present), as receivers do (common practice).
 */
export function resolveWeekRollover(week10: number, referenceUnixSec: number = Date.now() / 1000): number {
  const refWeek = unixUtcToGpsWeekTow(referenceUnixSec).week;
  const cycle = Math.round((refWeek - week10) / 1024);
  return week10 + Math.max(0, cycle) * 1024;
}
