/**
 * The fast path of the fix CSV reader (input/csv-fixes.ts) for plain rows of a comma-delimited
 * file, read straight from the text without field strings or regular expressions.
 */
import type { ColumnRole } from './columns.js';
import type { FixSeriesBuilder, QualityColumn } from './fix-series.js';
import { HEIGHT_RANGE_M } from './nmea.js';

const DEG_PER_RAD = 180 / Math.PI;

/** Returned by plainNumber for a field that is not a plain decimal (no plain number is −∞). */
const NOT_PLAIN = -Infinity;
/** 10^k, exact for k ≤ 22. */
const POW10 = Array.from({ length: 23 }, (_, k) => 10 ** k);
const TWO_53 = 2 ** 53;

/**
 * A plain decimal `-?d*(.d*)?` with at least one digit between `start` and `end` of `s`, converted
 * as Number() does; NaN for an empty field; NOT_PLAIN for anything else (sign "+", exponent,
 * blanks, decimal comma, more than 2^53 in its digits or more than 22 decimals: the general path
 * reads those). The digits as an integer m < 2^53 and 10^k are exact doubles, so m / 10^k is the
 * correctly rounded value of the decimal, which is what Number() returns (Clinger, "How to read
 * floating point numbers accurately", PLDI 1990, the fast path; ECMA-262 §7.1.4.1.1).
 */
function plainNumber(s: string, start: number, end: number): number {
  if (start === end) return NaN;
  let i = start;
  const neg = s.charCodeAt(i) === 45;
  if (neg) i++;
  let m = 0;
  let digits = 0;
  let k = -1;
  for (; i < end; i++) {
    const c = s.charCodeAt(i) - 48;
    if (c >= 0 && c <= 9) {
      m = m * 10 + c;
      digits++;
      if (k >= 0) k++;
    } else if (c === -2 && k < 0) k = 0; // "."
    else return NOT_PLAIN;
  }
  if (digits === 0 || m > TWO_53 || k > 22) return NOT_PLAIN;
  const v = k > 0 ? m / POW10[k]! : m;
  return neg ? -v : v;
}

const d2 = (s: string, i: number): number => {
  const a = s.charCodeAt(i) - 48, b = s.charCodeAt(i + 1) - 48;
  return a >= 0 && a <= 9 && b >= 0 && b <= 9 ? a * 10 + b : -1;
};

export interface PlainContext {
  rad: boolean;
  /** input.timeUnit is "ms" (numeric times then take the general path). */
  unitMs: boolean;
}

/** Role of each field: 0 unused, 1 time, 2 lat, 3 lon, 4 height, 5 + i quality column i. */
const ROLE_TIME = 1, ROLE_LAT = 2, ROLE_LON = 3, ROLE_HEIGHT = 4, ROLE_QUALITY = 5;

/**
 * The fast path for plain rows of a comma-delimited file: no quotes, exactly the header's number of
 * fields, times as "YYYY-MM-DDTHH:MM:SS(.f+)Z" or plain Unix seconds, numbers plain decimals, every
 * value in range (nothing to warn about). Such a row is read straight from the line, without field
 * strings or regular expressions, into exactly what the general path would give (the same
 * conversions: Date.UTC for the day, cached per day; the fraction of a second as parseFloat gives
 * it, added to the whole seconds; the number rule above). Any other row, and any row the general
 * path would warn about, returns false and is read by the general path in its place, so warnings,
 * their lines and their order are unchanged. Tested against the general path in
 * test/input/csv-plain-path.test.ts.
 */
export function plainRowReader(
  b: FixSeriesBuilder,
  nFields: number,
  index: Record<ColumnRole, number>,
  quality: readonly QualityColumn[],
  ctx: PlainContext,
): ((text: string, start: number, end: number, line: number) => boolean) | null {
  const role = fieldRoles(nFields, index, quality);
  if (!role) return null;
  const row = new PlainRow(b, role, quality.length, ctx);
  return (s, lineStart, lineEnd, line) => row.read(s, lineStart, lineEnd, line);
}

/** The role of each field; null when there is no time column (GPS week + TOW) or one column has two roles. */
function fieldRoles(nFields: number, index: Record<ColumnRole, number>, quality: readonly QualityColumn[]): Int8Array | null {
  const used = [index.time, index.lat, index.lon, index.height, ...quality.map((q) => index[q as ColumnRole])];
  // no time column (GPS week + TOW) or one column in two roles: the general path reads every row
  if (index.time < 0 || new Set(used.filter((c) => c >= 0)).size !== used.filter((c) => c >= 0).length) return null;
  const role = new Int8Array(nFields);
  role[index.time] = ROLE_TIME;
  role[index.lat] = ROLE_LAT;
  role[index.lon] = ROLE_LON;
  if (index.height >= 0) role[index.height] = ROLE_HEIGHT;
  quality.forEach((q, i) => (role[index[q as ColumnRole]] = ROLE_QUALITY + i));
  return role;
}

/** UTC Unix seconds of plain ISO "…Z" times, with the day's Date.UTC cached. */
class IsoZClock {
  private dayKey = NaN;
  private daySec = NaN;

  /** The time in s[i, end) as parseIsoToUnix gives it; NaN when not plain or not valid. */
  seconds(s: string, i: number, end: number): number {
    if (end - i < 20 || s.charCodeAt(end - 1) !== 90) return NaN; // "Z"
    if (s.charCodeAt(i + 4) !== 45 || s.charCodeAt(i + 7) !== 45 || s.charCodeAt(i + 10) !== 84 || s.charCodeAt(i + 13) !== 58 || s.charCodeAt(i + 16) !== 58) return NaN;
    const y1 = d2(s, i), y2 = d2(s, i + 2), mo = d2(s, i + 5), d = d2(s, i + 8), h = d2(s, i + 11), mi = d2(s, i + 14), sec = d2(s, i + 17);
    if (y1 < 0 || y2 < 0 || mo < 1 || mo > 12 || d < 1 || d > 31 || h < 0 || h > 23 || mi < 0 || mi > 59 || sec < 0 || sec > 59) return NaN;
    const key = (y1 * 100 + y2) * 10000 + mo * 100 + d;
    if (key !== this.dayKey) {
      const t = Date.UTC(y1 * 100 + y2, mo - 1, d) / 1000;
      // Date.UTC rolls an invalid day over (Feb 30): refused as parseIsoToUnix refuses it
      if (new Date(t * 1000).getUTCDate() !== d) return NaN;
      this.dayKey = key;
      this.daySec = t;
    }
    let t = this.daySec + h * 3600 + mi * 60 + sec;
    if (end - i > 20) {
      if (s.charCodeAt(i + 19) !== 46) return NaN; // "."
      const f = plainNumber(s, i + 19, end - 1);
      if (!(f >= 0)) return NaN; // no digit after the point, or too many
      t += f;
    } else if (end - i !== 20) return NaN;
    return t;
  }
}

const NONE = Infinity;

/** Reads plain rows of one text into the builder. */
class PlainRow {
  private readonly qv: Float64Array;
  private readonly clock = new IsoZClock();
  // the next quote and the next comma at or after the place being read (rows come in text order,
  // so each is one scan of the text in all, however long a stretch without them); NONE for none
  private text = '';
  private quote = -1;
  private comma = -1;

  constructor(private readonly b: FixSeriesBuilder, private readonly role: Int8Array, nQuality: number, private readonly ctx: PlainContext) {
    this.qv = new Float64Array(nQuality);
  }

  /** Read the line s[lineStart, lineEnd) (line `line`) when it is plain; false when the general path must. */
  read(s: string, lineStart: number, lineEnd: number, line: number): boolean {
    if (s !== this.text) {
      this.text = s;
      this.quote = this.comma = -1;
    }
    if (this.quote < lineStart) {
      this.quote = s.indexOf('"', lineStart);
      if (this.quote < 0) this.quote = NONE;
    }
    if (this.quote < lineEnd) return false;
    const role = this.role;
    const nFields = role.length;
    const qv = this.qv;
    let t = NaN, lat = NaN, lon = NaN, h = NaN;
    let start = lineStart;
    const n = lineEnd;
    for (let f = 0; f < nFields; f++) {
      if (start > n) return false; // fewer fields than the header
      if (this.comma < start) {
        this.comma = s.indexOf(',', start);
        if (this.comma < 0) this.comma = NONE;
      }
      let end = this.comma;
      if (end > n) end = n;
      else if (f === nFields - 1) return false; // more fields than the header
      const r = role[f]!;
      if (r === ROLE_TIME) {
        t = this.time(s, start, end);
        // not plain, not valid, or out of range; also Unix milliseconds (> 1e11), noted by the general path
        if (!(Math.abs(t) <= 1e11)) return false;
      } else if (r !== 0) {
        const v = plainNumber(s, start, end);
        if (v === NOT_PLAIN) return false;
        if (r === ROLE_LAT) lat = v;
        else if (r === ROLE_LON) lon = v;
        else if (r === ROLE_HEIGHT) h = v;
        else qv[r - ROLE_QUALITY] = v >= 0 ? v : NaN;
      }
      start = end + 1;
    }
    if (start <= n) return false; // a delimiter after the last field
    if (this.ctx.rad) {
      lat *= DEG_PER_RAD;
      lon *= DEG_PER_RAD;
    }
    if (!(Math.abs(lat) <= 90 && Math.abs(lon) <= 180)) return false;
    if (h < HEIGHT_RANGE_M[0] || h > HEIGHT_RANGE_M[1]) return false;
    this.b.add(t, lat, lon, h, line, qv);
    return true;
  }

  /** The time field s[start, end): ISO "…Z" or plain Unix seconds; NaN (or out of range) when not plain. */
  private time(s: string, start: number, end: number): number {
    if (end - start >= 20 && s.charCodeAt(start + 4) === 45) return this.clock.seconds(s, start, end);
    if (!this.ctx.unitMs && s.charCodeAt(start) !== 45) return plainNumber(s, start, end);
    return NaN;
  }
}
