/**
 * Reader for fix logs in CSV (delimited text after RFC 4180): a header row, then one fix per row.
 * Times as ISO 8601 (with an offset, or in the configured IANA zone), Unix seconds/milliseconds, or
 * GPS week + time of week columns. Positions in decimal degrees (or radians with
 * `input.angleUnit: "rad"`), WGS84; height ellipsoidal (m) when present.
 *
 * Rules (documented in docs/formats.md):
 * - delimiter: `input.delimiter`, else an Excel "sep=X" first line, else the one of , ; tab | that
 *   occurs (outside quotes) in the header and the same number of times in most of the next rows;
 * - decimal comma: with a delimiter other than ",", a "," inside a number is its decimal sign; with
 *   "," as delimiter a quoted number with one "," and no "." is read the same way (no thousands
 *   separators); ISO times may use "," before the fraction of a second (ISO 8601 §4.2.2.4);
 * - quoted fields ("…", "" for a quote) may hold delimiters but not line breaks: a quote still
 *   open at the end of a line spoils that row only;
 * - lines starting with "#" and blank lines are ignored;
 * - a row with an unparsable or out-of-range time or position is skipped with a warning; a last
 *   line without a line ending and with fewer fields than the header is a truncated write, skipped;
 *   (0, 0) positions are kept (the session flags them invalid); heights outside −12 000…100 000 m are
 *   dropped from the row (row kept).
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { gpsWeekTowToUnixUtc } from '../time/gps-time.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { dateOrderOf, separatedToIso, TIME_OF_DAY, type DateOrder } from '../time/calendar-text.js';
import { LocalTimeReader, lineRanges, offsetText, resolveByOrder, type PendingRow } from '../time/local-time.js';
import { matchColumns, MSL_HEIGHT_ALIASES, type ColumnRole } from './columns.js';
import { FixSeriesBuilder, type FixSeries, type QualityColumn } from './fix-series.js';
import { HEIGHT_RANGE_M } from './nmea.js';
import { RowWarnings } from './row-warnings.js';

const QUALITY_ROLES: QualityColumn[] = ['hdop', 'vdop', 'sats', 'fixQuality', 'sdEast', 'sdNorth', 'sdUp'];
const DELIMITERS = [',', ';', '\t', '|'] as const;
/** ISO text that carries its own offset (read as it is, whatever input.timeZone says). */
const ISO_WITH_OFFSET = /T.*(Z|[+-]\d{2}(:?\d{2})?)$/;

export interface CsvRow {
  fields: string[];
  /** 1-based line of the row. */
  line: number;
  /** A quote was still open at the end of the line. */
  unclosedQuote: boolean;
  /** The row ended with a line break (false only for a last line without one). */
  terminated: boolean;
}

/** Split one line into fields (RFC 4180 quoting within the line; fields trimmed). */
export function splitCsvLine(s: string, delimiter: string): { fields: string[]; unclosedQuote: boolean } {
  const fields: string[] = [];
  const d = delimiter.charCodeAt(0);
  let i = 0;
  const n = s.length;
  let unclosedQuote = false;
  for (;;) {
    // skip leading blanks of a field
    while (i < n && (s.charCodeAt(i) === 32 || (s.charCodeAt(i) === 9 && d !== 9))) i++;
    let v = '';
    if (i < n && s.charCodeAt(i) === 34) {
      i++;
      let closed = false;
      let start = i;
      while (i < n) {
        const c = s.charCodeAt(i);
        if (c === 34) {
          if (s.charCodeAt(i + 1) === 34) {
            v += s.slice(start, i + 1);
            i += 2;
            start = i;
            continue;
          }
          v += s.slice(start, i);
          i++;
          closed = true;
          break;
        }
        i++;
      }
      if (!closed) {
        v += s.slice(start, i);
        unclosedQuote = true;
      }
      // text after the closing quote up to the delimiter is kept (lenient)
      const next = s.indexOf(delimiter, i);
      const tail = next < 0 ? s.slice(i) : s.slice(i, next);
      v += tail;
      i = next < 0 ? n : next;
    } else {
      const next = s.indexOf(delimiter, i);
      v = next < 0 ? s.slice(i) : s.slice(i, next);
      i = next < 0 ? n : next;
    }
    fields.push(v.trim());
    if (i >= n) break;
    i++; // past the delimiter
    if (i === n) {
      fields.push('');
      break;
    }
  }
  return { fields, unclosedQuote };
}

/** Count `ch` outside double quotes. */
function countOutsideQuotes(s: string, ch: string): number {
  let q = false;
  let c = 0;
  for (let i = 0; i < s.length; i++) {
    const x = s[i];
    if (x === '"') q = !q;
    else if (!q && x === ch) c++;
  }
  return c;
}

/**
 * Choose the delimiter from the header and up to 20 following lines: among , ; tab | present in the
 * header, the one whose count per line matches the header's in most rows (ties: the larger count).
 */
export function detectDelimiter(headerLine: string, sampleLines: readonly string[] = []): string {
  let best = ',';
  let bestScore = -1;
  let bestCount = 0;
  for (const d of DELIMITERS) {
    const hc = countOutsideQuotes(headerLine, d);
    if (hc === 0) continue;
    let agree = 0;
    for (const l of sampleLines) if (countOutsideQuotes(l, d) === hc) agree++;
    const score = sampleLines.length ? agree / sampleLines.length : 1;
    if (score > bestScore || (score === bestScore && hc > bestCount)) {
      best = d;
      bestScore = score;
      bestCount = hc;
    }
  }
  return best;
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

/** Parse a plain decimal number; a decimal comma is accepted as described in the file header. */
export function parseCsvNumber(text: string | undefined, decimalComma: boolean): number {
  if (text === undefined) return NaN;
  let s = text.trim();
  if (s === '') return NaN;
  const comma = s.indexOf(',');
  if (comma >= 0 && (decimalComma || (s.indexOf('.') < 0 && s.indexOf(',', comma + 1) < 0))) {
    if (s.indexOf('.') >= 0 || s.indexOf(',', comma + 1) >= 0) return NaN;
    s = s.slice(0, comma) + '.' + s.slice(comma + 1);
  }
  return DECIMAL.test(s) ? Number(s) : NaN;
}

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

interface PlainContext {
  rad: boolean;
  /** input.timeUnit is "ms" (numeric times then take the general path). */
  unitMs: boolean;
}

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
  // role of each field: 0 unused, 1 time, 2 lat, 3 lon, 4 height, 5 + i quality column i
  const used = [index.time, index.lat, index.lon, index.height, ...quality.map((q) => index[q as ColumnRole])];
  // no time column (GPS week + TOW) or one column in two roles: the general path reads every row
  if (index.time < 0 || new Set(used.filter((c) => c >= 0)).size !== used.filter((c) => c >= 0).length) return null;
  const role = new Int8Array(nFields);
  role[index.time] = 1;
  role[index.lat] = 2;
  role[index.lon] = 3;
  if (index.height >= 0) role[index.height] = 4;
  quality.forEach((q, i) => (role[index[q as ColumnRole]] = 5 + i));
  const qv = new Float64Array(quality.length);
  const [hMin, hMax] = HEIGHT_RANGE_M;
  let dayKey = NaN;
  let daySec = NaN;

  /** UTC Unix seconds of an ISO "…Z" time as parseIsoToUnix gives them; NaN when not plain or not valid. */
  const isoZ = (s: string, i: number, end: number): number => {
    if (end - i < 20 || s.charCodeAt(end - 1) !== 90) return NaN; // "Z"
    if (s.charCodeAt(i + 4) !== 45 || s.charCodeAt(i + 7) !== 45 || s.charCodeAt(i + 10) !== 84 || s.charCodeAt(i + 13) !== 58 || s.charCodeAt(i + 16) !== 58) return NaN;
    const y1 = d2(s, i), y2 = d2(s, i + 2), mo = d2(s, i + 5), d = d2(s, i + 8), h = d2(s, i + 11), mi = d2(s, i + 14), sec = d2(s, i + 17);
    if (y1 < 0 || y2 < 0 || mo < 1 || mo > 12 || d < 1 || d > 31 || h < 0 || h > 23 || mi < 0 || mi > 59 || sec < 0 || sec > 59) return NaN;
    const key = (y1 * 100 + y2) * 10000 + mo * 100 + d;
    if (key !== dayKey) {
      const t = Date.UTC(y1 * 100 + y2, mo - 1, d) / 1000;
      // Date.UTC rolls an invalid day over (Feb 30): refused as parseIsoToUnix refuses it
      if (new Date(t * 1000).getUTCDate() !== d) return NaN;
      dayKey = key;
      daySec = t;
    }
    let t = daySec + h * 3600 + mi * 60 + sec;
    if (end - i > 20) {
      if (s.charCodeAt(i + 19) !== 46) return NaN; // "."
      const f = plainNumber(s, i + 19, end - 1);
      if (!(f >= 0)) return NaN; // no digit after the point, or too many
      t += f;
    } else if (end - i !== 20) return NaN;
    return t;
  };

  // the next quote and the next comma at or after the place being read (rows come in text order,
  // so each is one scan of the text in all, however long a stretch without them); NONE for none
  let text = '';
  let quote = -1;
  let comma = -1;
  const NONE = Infinity;
  return (s: string, lineStart: number, lineEnd: number, line: number): boolean => {
    if (s !== text) {
      text = s;
      quote = comma = -1;
    }
    if (quote < lineStart) {
      quote = s.indexOf('"', lineStart);
      if (quote < 0) quote = NONE;
    }
    if (quote < lineEnd) return false;
    let t = NaN, lat = NaN, lon = NaN, h = NaN;
    let start = lineStart;
    const n = lineEnd;
    for (let f = 0; f < nFields; f++) {
      if (start > n) return false; // fewer fields than the header
      if (comma < start) {
        comma = s.indexOf(',', start);
        if (comma < 0) comma = NONE;
      }
      let end = comma;
      if (end > n) end = n;
      else if (f === nFields - 1) return false; // more fields than the header
      const r = role[f]!;
      if (r === 1) {
        if (end - start >= 20 && s.charCodeAt(start + 4) === 45) t = isoZ(s, start, end);
        else if (!ctx.unitMs && s.charCodeAt(start) !== 45) {
          t = plainNumber(s, start, end);
        }
        // not plain, not valid, or out of range; also Unix milliseconds (> 1e11), noted by the general path
        if (!(Math.abs(t) <= 1e11)) return false;
      } else if (r !== 0) {
        const v = plainNumber(s, start, end);
        if (v === NOT_PLAIN) return false;
        if (r === 2) lat = v;
        else if (r === 3) lon = v;
        else if (r === 4) h = v;
        else qv[r - 5] = v >= 0 ? v : NaN;
      }
      start = end + 1;
    }
    if (start <= n) return false; // a delimiter after the last field
    if (ctx.rad) {
      lat *= DEG_PER_RAD;
      lon *= DEG_PER_RAD;
    }
    if (!(Math.abs(lat) <= 90 && Math.abs(lon) <= 180)) return false;
    if (h < hMin || h > hMax) return false;
    b.add(t, lat, lon, h, line, qv);
    return true;
  };
}

/**
 * The lines of a text as offsets, split as `text.split(/\r\n|\n|\r/)` splits it (the last line
 * empty when the text ends with a line break), without making a string per line: the plain-row
 * path reads straight from the text, and only the other rows are cut out (`at`). The offsets live in
 * Int32Arrays grown by doubling (a text is at most MAX_LOG_BYTES = 2^29 characters, below 2^31):
 * a million-line file grew two plain arrays by repeated reallocation, 0.24 s against 0.04 s.
 */
export class Lines {
  start: Int32Array;
  end: Int32Array;
  length = 0;

  constructor(private readonly text: string) {
    const s = text;
    let start = new Int32Array(4096);
    let end = new Int32Array(4096);
    let m = 0;
    let pos = 0;
    let lf = s.indexOf('\n');
    let cr = s.indexOf('\r');
    for (;;) {
      let b: number, len: number;
      if (cr >= 0 && (lf < 0 || cr < lf)) {
        b = cr;
        len = s.charCodeAt(cr + 1) === 10 ? 2 : 1; // "\r\n" or a lone "\r"
      } else if (lf >= 0) {
        b = lf;
        len = 1;
      } else b = len = -1;
      if (m === start.length) {
        const s2 = new Int32Array(2 * m);
        s2.set(start);
        start = s2;
        const e2 = new Int32Array(2 * m);
        e2.set(end);
        end = e2;
      }
      start[m] = pos;
      if (b < 0) {
        end[m++] = s.length; // the last line
        break;
      }
      end[m++] = b;
      pos = b + len;
      if (lf >= 0 && lf < pos) lf = s.indexOf('\n', pos);
      if (cr >= 0 && cr < pos) cr = s.indexOf('\r', pos);
    }
    this.start = start;
    this.end = end;
    this.length = m;
  }

  at(j: number): string {
    return this.text.slice(this.start[j]!, this.end[j]!);
  }

  isEmpty(j: number): boolean {
    return this.start[j] === this.end[j];
  }

  pop(): void {
    this.length--;
  }
}

export interface CsvReadOptions {
  /**
   * Read plain rows by the fast path (plainRowReader); default true. Off, every row takes the general
   * path: the result is the same (test/input/csv-plain-path.test.ts), only slower.
   */
  plainRows?: boolean;
}

export function readFixCsv(text: string, file: string, cfg: HindcastConfig, opt: CsvReadOptions = {}): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  const lines = new Lines(body);
  // a final line break leaves an empty last line: the last real line was terminated
  const lastTerminated = lines.length > 1 && lines.isEmpty(lines.length - 1);
  if (lastTerminated) lines.pop();
  let li = 0;
  let delimiter = cfg.input.delimiter;
  const isSkippable = (l: string) => l.trim() === '' || l.trimStart().startsWith('#');
  while (li < lines.length && isSkippable(lines.at(li))) li++;
  const sep = li < lines.length ? /^\s*"?sep=(.)"?\s*$/i.exec(lines.at(li)) : null;
  if (sep) {
    delimiter ??= sep[1] === 't' ? '\t' : sep[1]!;
    li++;
    while (li < lines.length && isSkippable(lines.at(li))) li++;
  }
  if (li >= lines.length) throw new InputError({ file, line: 1 }, 'no header row: the file holds only blank or comment lines');
  const headerLineNo = li + 1;
  const headerLine = lines.at(li);
  if (!delimiter) {
    const sample: string[] = [];
    for (let j = li + 1; j < lines.length && sample.length < 20; j++) if (!isSkippable(lines.at(j))) sample.push(lines.at(j));
    delimiter = detectDelimiter(headerLine, sample);
  }
  const decimalComma = delimiter !== ',';
  const header = splitCsvLine(headerLine, delimiter).fields;
  const { index, matched } = matchColumns(header, cfg.input.columns);
  const hasWeekTow = index.gpsWeek >= 0 && index.tow >= 0;
  const missing: string[] = [];
  if (index.time < 0 && !hasWeekTow) missing.push('time (or gps_week + tow)');
  if (index.lat < 0) missing.push('lat');
  if (index.lon < 0) missing.push('lon');
  if (missing.length)
    throw new InputError(
      { file, line: headerLineNo },
      `no ${missing.join(', ')} column in the header (${header.slice(0, 20).map((h) => h.slice(0, 40)).join(', ')}); name it in input.columns of a --config file`,
    );
  const qualityPresent = QUALITY_ROLES.filter((r) => index[r] >= 0);
  const b = new FixSeriesBuilder(file, qualityPresent, lines.length - li);
  const w = new RowWarnings(b);
  b.meta.format = 'csv';
  b.meta.delimiter = delimiter === '\t' ? 'tab' : delimiter;
  if (decimalComma) b.meta.decimalComma = true;
  b.meta.angleUnit = cfg.input.angleUnit;
  const heightReference = cfg.input.heightReference ?? 'ellipsoidal';
  b.meta.heightReference = heightReference;
  if (index.height >= 0 && matched.height && MSL_HEIGHT_ALIASES.has(matched.height) && cfg.input.heightReference === undefined) {
    b.meta.heightReference = 'assumed-ellipsoidal';
    b.warn('height-reference', `column "${header[index.height]}" is read as ellipsoidal height; if it is above mean sea level, set input.heightReference to "msl"`);
  }
  const zone = cfg.input.timeZone;
  const unit = cfg.input.timeUnit;
  const rad = cfg.input.angleUnit === 'rad';
  const qv = new Float64Array(qualityPresent.length);
  let msNoted = false;
  let rows = 0;
  const need = Math.max(index.time, index.lat, index.lon, hasWeekTow ? Math.max(index.gpsWeek, index.tow) : -1) + 1;
  const timeFormat = cfg.input.timeFormat;
  // dates as spreadsheets write them (31.12.2026, 12/31/2026), in the time column or a date column beside a time of day
  const dateCol = index.time >= 0 && timeFormat === undefined ? index.date : -1;
  const order = timeFormat === undefined && index.time >= 0 ? separatedDateOrder(lines, li + 1, delimiter, dateCol >= 0 ? dateCol : index.time, file) : null;
  if (dateCol >= 0) b.meta.dateColumn = header[dateCol]!;
  // local times in a zone with clock changes, or a custom format: read row by row, clock changes resolved below
  const local = timeFormat !== undefined || (zone !== undefined && zone !== 'UTC') ? new LocalTimeReader(zone, timeFormat) : null;
  const pending: PendingRow[] = [];
  // times without a zone or offset and no input.timeZone: read as UTC (receivers keep UTC), with a note
  let utcAssumed = false;
  const plain =
    opt.plainRows !== false && delimiter === ',' && timeFormat === undefined && dateCol < 0 && order === null && index.latHemisphere < 0 && index.lonHemisphere < 0
      ? plainRowReader(b, header.length, index, qualityPresent, { rad, unitMs: unit === 'ms' })
      : null;
  for (let j = li + 1; j < lines.length; j++) {
    const start = lines.start[j]!, end = lines.end[j]!;
    // a row starting with a digit or "-" is neither blank nor a comment
    const c0 = start < end ? body.charCodeAt(start) : -1;
    if (!((c0 >= 48 && c0 <= 57) || c0 === 45) && isSkippable(lines.at(j))) continue;
    const line = j + 1;
    rows++;
    if (plain !== null && plain(body, start, end, line)) continue;
    const raw = lines.at(j);
    const { fields: rec, unclosedQuote } = splitCsvLine(raw, delimiter);
    const isLast = j === lines.length - 1;
    if (isLast && !lastTerminated && rec.length < header.length) {
      w.add('truncated-last-line', `last line has ${rec.length} of ${header.length} fields and no line ending (file cut short?); skipped`, line);
      continue;
    }
    if (unclosedQuote) {
      w.add('row-skipped', 'a quoted field is not closed on this line', line);
      continue;
    }
    if (rec.length < need) {
      w.add('row-skipped', `row has ${rec.length} field(s), the position and time columns need ${need}`, line);
      continue;
    }
    let t: number;
    if (index.time >= 0 && !(hasWeekTow && (rec[index.time] ?? '') === '')) {
      let rawT = rec[index.time] ?? '';
      if (dateCol >= 0 && TIME_OF_DAY.test(rawT.trim())) {
        const d = (rec[dateCol] ?? '').trim();
        rawT = `${(order ? separatedToIso(d, order) : null) ?? d}T${rawT.trim().replace(/^(\d):/, '0$1:')}`;
      } else if (order) rawT = separatedToIso(rawT, order) ?? rawT;
      const v = timeFormat !== undefined ? NaN : parseCsvNumber(rawT, false);
      // ISO 8601 allows "," before the fraction; spreadsheets write a space for the "T"
      const iso = timeFormat !== undefined ? rawT : rawT.replace(/(\d{2}:\d{2}:\d{2}),(\d)/, '$1.$2').replace(/^(\d{4}-\d{2}-\d{2}) (\d{2}:)/, '$1T$2');
      if (local !== null && !Number.isFinite(v) && (timeFormat !== undefined || !ISO_WITH_OFFSET.test(iso))) {
        const r = local.read(iso);
        if (r === null) {
          w.add('row-skipped', timeFormat !== undefined ? `time "${rawT.slice(0, 40)}" does not match input.timeFormat "${timeFormat}"` : `time "${rawT.slice(0, 40)}" is not ISO 8601 nor Unix seconds`, line);
          continue;
        }
        if ('kind' in r && r.kind !== 'unique') {
          pending.push({ index: b.count, tSec: [r.utcMs[0]! / 1000, r.utcMs[1]! / 1000], offsetMin: [r.offsetMin[0]!, r.offsetMin[1]!], kind: r.kind, line });
          t = r.utcMs[0]! / 1000; // provisional, decided after the last row
        } else t = ('kind' in r ? r.utcMs[0]! : r.utcMs) / 1000;
      } else if (Number.isFinite(v)) {
        const ms = unit === 'ms' || (unit === 'auto' && Math.abs(v) > 1e11);
        if (ms && unit === 'auto' && !msNoted) {
          b.warn('time-unit', 'numeric times larger than 1e11 read as Unix milliseconds');
          msNoted = true;
        }
        t = ms ? v / 1000 : v;
      } else {
        t = parseIsoToUnix(iso, zone);
        if (Number.isNaN(t) && zone === undefined) {
          t = parseIsoToUnix(iso, 'UTC');
          if (!Number.isNaN(t) && !utcAssumed) {
            utcAssumed = true;
            b.warn('time-zone-assumed', `times without a zone or offset (e.g. "${rawT.slice(0, 40)}") are read as UTC; if they are local clock times, set input.timeZone`);
          }
        }
        if (Number.isNaN(t)) {
          w.add('row-skipped', `time "${rawT.slice(0, 40)}" is not an ISO 8601 date-time nor Unix seconds (set input.timeFormat for other forms)`, line);
          continue;
        }
      }
    } else {
      const week = parseCsvNumber(rec[index.gpsWeek], false);
      const tow = parseCsvNumber(rec[index.tow], decimalComma);
      if (!Number.isInteger(week) || week < 0 || week > 1e5 || !(tow >= 0 && tow < 604800)) {
        w.add('row-skipped', `GPS week "${(rec[index.gpsWeek] ?? '').slice(0, 20)}" / time of week "${(rec[index.tow] ?? '').slice(0, 20)}" out of range`, line);
        continue;
      }
      t = gpsWeekTowToUnixUtc(week, tow);
    }
    if (!Number.isFinite(t) || Math.abs(t) > 1e11) {
      w.add('row-skipped', `time "${(rec[index.time] ?? '').slice(0, 40)}" is out of range`, line);
      continue;
    }
    let lat = parseCsvNumber(rec[index.lat], decimalComma);
    let lon = parseCsvNumber(rec[index.lon], decimalComma);
    if (rad) {
      lat *= DEG_PER_RAD;
      lon *= DEG_PER_RAD;
    }
    // hemisphere letters beside unsigned angles (S and W are negative)
    if (index.latHemisphere >= 0 && /^\s*s/i.test(rec[index.latHemisphere] ?? '')) lat = -Math.abs(lat);
    if (index.lonHemisphere >= 0 && /^\s*w/i.test(rec[index.lonHemisphere] ?? '')) lon = -Math.abs(lon);
    if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) {
      w.add(
        'row-skipped',
        `position "${(rec[index.lat] ?? '').slice(0, 20)}", "${(rec[index.lon] ?? '').slice(0, 20)}" is not a latitude/longitude in ${rad ? 'radians' : 'decimal degrees'}`,
        line,
      );
      continue;
    }
    let h = index.height >= 0 ? parseCsvNumber(rec[index.height], decimalComma) : NaN;
    if (Number.isFinite(h) && (h < HEIGHT_RANGE_M[0] || h > HEIGHT_RANGE_M[1])) {
      w.add('height-out-of-range', `height "${rec[index.height]}" outside ${HEIGHT_RANGE_M[0]}…${HEIGHT_RANGE_M[1]} m dropped (row kept)`, line);
      h = NaN;
    }
    for (let i = 0; i < qualityPresent.length; i++) {
      const v = parseCsvNumber(rec[index[qualityPresent[i] as ColumnRole]], decimalComma);
      qv[i] = Number.isFinite(v) && v >= 0 ? v : NaN;
    }
    b.add(t, lat, lon, h, line, qv);
  }
  if (pending.length > 0) resolveLocalTimes(b, pending, zone ?? 'UTC', cfg.segments.maxGapSec);
  w.finish();
  if (b.count === 0) {
    if (rows === 0) throw new InputError({ file, line: headerLineNo }, 'header only: the file has no fix rows');
    throw new InputError({ file, line: headerLineNo + 1 }, `no readable fix rows (${w.total} skipped; first: ${w.first})`);
  }
  const s = b.finish();
  if (s.n < 2) throw new InputError({ file, line: s.line[0] }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}

/**
 * Decide the rows whose local time occurs twice or not at all in the zone (clock changes) by the
 * order of the rows (time/local-time.ts), with one warning per kind naming the lines; the rows the
 * order does not decide are left out with a warning.
 */
function resolveLocalTimes(b: FixSeriesBuilder, pending: PendingRow[], zone: string, maxGapSec: number): void {
  const r = resolveByOrder(pending, (i) => b.timeAt(i), b.count, maxGapSec);
  const what = { ambiguous: `occur twice in ${zone} (the clocks went back)`, nonexistent: `do not exist in ${zone} (the clocks went forward)` };
  for (const kind of ['ambiguous', 'nonexistent'] as const) {
    const byOffset = new Map<number, number[]>();
    const undecided: number[] = [];
    pending.forEach((p, j) => {
      if (p.kind !== kind) return;
      const c = r.choice[j]!;
      if (c < 0) {
        undecided.push(p.line);
        b.discard(p.index);
        return;
      }
      b.setTime(p.index, r.tSec[j]!);
      const o = p.offsetMin[c]!;
      if (!byOffset.has(o)) byOffset.set(o, []);
      byOffset.get(o)!.push(p.line);
    });
    const decided = [...byOffset.values()].reduce((a, l) => a + l.length, 0);
    if (decided > 0) {
      const parts = [...byOffset].map(([o, lines]) => `lines ${lineRanges(lines)} as ${offsetText(o)}`);
      const first = Math.min(...[...byOffset.values()].map((l) => l[0]!));
      b.warn(`local-time-${kind}`, `${decided} row(s) at local times that ${what[kind]}, read by the order of the rows: ${parts.join(', ')}`, first);
    }
    if (undecided.length > 0)
      b.warn(
        `local-time-${kind}-skipped`,
        `${undecided.length} row(s) at local times that ${what[kind]} skipped: the order of the rows does not tell which instant they are (write the times with an offset or in UTC); lines ${lineRanges(undecided)}`,
        undecided[0],
      );
  }
}

/** Data rows sampled at each end of a file to decide the order of its separated dates. */
const DATE_ORDER_SAMPLE_ROWS = 500;

/**
 * The day/month order of a column of separated dates (calendar-text.ts), from the first and last
 * DATE_ORDER_SAMPLE_ROWS data rows; null when the column holds no such dates. A column that does
 * not decide the order (slashes, no field above 12) is refused, naming the setting that decides it.
 */
function separatedDateOrder(lines: Lines, from: number, delimiter: string, col: number, file: string): DateOrder | null {
  const samples: string[] = [];
  const take = (j: number) => {
    const l = lines.at(j);
    if (l.trim() === '' || l.trimStart().startsWith('#')) return;
    const f = splitCsvLine(l, delimiter).fields[col];
    if (f !== undefined) samples.push(f);
  };
  const n = lines.length;
  for (let j = from; j < Math.min(n, from + DATE_ORDER_SAMPLE_ROWS); j++) take(j);
  for (let j = Math.max(from + DATE_ORDER_SAMPLE_ROWS, n - DATE_ORDER_SAMPLE_ROWS); j < n; j++) take(j);
  const order = dateOrderOf(samples);
  if (order !== 'ambiguous') return order;
  const ex = samples.find((x) => /\//.test(x)) ?? samples[0] ?? '';
  throw new InputError(
    { file, line: from + 1 },
    `dates like "${ex.slice(0, 30)}" read either way (day or month first) and none in the file decides it; set input.timeFormat, e.g. "dd/MM/yyyy HH:mm:ss" or "MM/dd/yyyy HH:mm:ss"`,
  );
}
