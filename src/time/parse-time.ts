/**
 * Parsing of time values found in logs, to UTC Unix seconds (float, millisecond resolution or better).
 * ISO 8601 text with a zone or offset (luxon), or without one when the config names an IANA zone;
 * numeric Unix seconds (or milliseconds, by unit option).
 */
import { DateTime } from 'luxon';

export type TimeUnit = 's' | 'ms';

/** Fast path for the common "YYYY-MM-DDTHH:MM:SS(.fff)(Z|±HH:MM)" shape; null when it does not match. */
const ISO_FAST = /^(\d{4})-(\d{2})-(\d{2})[T ](\d{2}):(\d{2}):(\d{2})(\.\d+)?(Z|[+-]\d{2}:?\d{2})?$/;

/**
 * Parse an ISO 8601 date-time. Text without a zone is read in `zone` (an IANA name); with no zone
 * given it is refused, since a log written in local time would otherwise shift silently.
 * Returns NaN when the text is not a valid date-time.
 */
export function parseIsoToUnix(text: string, zone?: string): number {
  const m = ISO_FAST.exec(text);
  if (m && (m[8] !== undefined || zone === undefined || zone === 'UTC')) {
    const [, y, mo, d, h, mi, s, frac, off] = m;
    const month = +mo!;
    const day = +d!;
    const hour = +h!;
    const minute = +mi!;
    const sec = +s!;
    if (month < 1 || month > 12 || day < 1 || day > 31 || hour > 23 || minute > 59 || sec > 60) return NaN;
    if (off === undefined && zone === undefined) return NaN;
    let t = Date.UTC(+y!, month - 1, day, hour, minute, sec) / 1000;
    // Date.UTC rolls over invalid days (Feb 30); check the day survived
    const back = new Date(t * 1000);
    if (back.getUTCDate() !== day) return NaN;
    if (frac) t += parseFloat(frac);
    if (off && off !== 'Z') {
      const sign = off[0] === '-' ? -1 : 1;
      const digits = off.slice(1).replace(':', '');
      t -= sign * (parseInt(digits.slice(0, 2), 10) * 3600 + parseInt(digits.slice(2, 4), 10) * 60);
    }
    return t;
  }
  const dt = DateTime.fromISO(text, { zone: zone ?? 'UTC', setZone: false });
  if (!dt.isValid) return NaN;
  // without an explicit zone in the text and no zone configured, refuse
  if (zone === undefined && !/T.*(Z|[+-]\d{2}(:?\d{2})?)$/.test(text)) return NaN;
  return dt.toMillis() / 1000;
}

/** Parse a numeric Unix time; NaN if the text is not a finite number. */
export function parseUnix(text: string, unit: TimeUnit = 's'): number {
  const v = Number(text);
  if (!Number.isFinite(v) || text.trim() === '') return NaN;
  return unit === 'ms' ? v / 1000 : v;
}

/** Format UTC Unix seconds as ISO 8601 with milliseconds and Z. */
export function formatIsoUtc(unixSec: number): string {
  return new Date(Math.round(unixSec * 1000)).toISOString();
}
