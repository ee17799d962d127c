/** Text for HTML: escaping, and the number, time and duration formats of the report. */
import { DateTime } from 'luxon';
import { formatIsoUtc } from '../../time/parse-time.js';

/** Escape text for HTML element content and double-quoted attribute values. */
export function esc(s: string): string {
  return s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&#39;');
}

/** Fixed decimals, or an en dash for a missing value. */
export function num(v: number | undefined | null, decimals: number): string {
  return typeof v === 'number' && Number.isFinite(v) ? v.toFixed(decimals) : '–';
}

/** h:mm:ss of a duration in seconds. */
export function duration(sec: number | undefined): string {
  if (typeof sec !== 'number' || !Number.isFinite(sec)) return '–';
  const s = Math.round(sec);
  const h = Math.floor(s / 3600), m = Math.floor((s % 3600) / 60), r = s % 60;
  return `${h}:${String(m).padStart(2, '0')}:${String(r).padStart(2, '0')}`;
}

/** ISO 8601 UTC with milliseconds, as written in track.csv, outliers.csv and read from decisions files. */
export function isoTime(tSec: number): string {
  return Number.isFinite(tSec) ? formatIsoUtc(tSec) : '–';
}

/** A time in an IANA zone, "yyyy-MM-dd HH:mm:ss.SSS +hh:mm" (the offset in force then); '–' for a bad time or zone. */
export function localTime(tSec: number, zone: string): string {
  if (!Number.isFinite(tSec)) return '–';
  const d = DateTime.fromMillis(Math.round(tSec * 1000), { zone });
  return d.isValid ? d.toFormat('yyyy-MM-dd HH:mm:ss.SSS ZZ') : '–';
}

/** A value for a data-sort attribute: numbers as they are, missing as an empty string. */
export function sortKey(v: number | undefined | null): string {
  return typeof v === 'number' && Number.isFinite(v) ? String(v) : '';
}

/** A stable, HTML-id-safe anchor for the i-th session. */
export function sessionAnchor(i: number): string {
  return `session-${i + 1}`;
}
