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
import { matchColumns, MSL_HEIGHT_ALIASES, normalizeHeader, type ColumnRole } from './columns.js';
import { detectDelimiter, parseCsvNumber, splitCsvLine } from './csv-fields.js';
import { Lines } from './csv-lines.js';
import { plainRowReader } from './csv-plain-rows.js';
import { CsvTimeReader, separatedDateOrder } from './csv-times.js';
import { FixSeriesBuilder, type FixSeries, type QualityColumn } from './fix-series.js';
import { HEIGHT_RANGE_M } from './nmea.js';
import { RowWarnings } from './row-warnings.js';

export { detectDelimiter, parseCsvNumber, splitCsvLine, type CsvRow } from './csv-fields.js';
export { Lines } from './csv-lines.js';
export { plainRowReader } from './csv-plain-rows.js';

const QUALITY_ROLES: QualityColumn[] = ['hdop', 'vdop', 'sats', 'fixQuality', 'sdEast', 'sdNorth', 'sdUp', 'hAccuracy'];
const DEG_PER_RAD = 180 / Math.PI;

export interface CsvReadOptions {
  /**
   * Read plain rows by the fast path (plainRowReader); default true. Off, every row takes the general
   * path: the result is the same (test/input/csv-plain-path.test.ts), only slower.
   */
  plainRows?: boolean;
}

/** The header row of a fix CSV and what it says. */
interface CsvHeader {
  /** Index in `lines` of the header line. */
  li: number;
  headerLineNo: number;
  delimiter: string;
  header: string[];
  index: Record<ColumnRole, number>;
  matched: ReturnType<typeof matchColumns>['matched'];
  hasWeekTow: boolean;
}

const isSkippable = (l: string) => l.trim() === '' || l.trimStart().startsWith('#');

export function readFixCsv(text: string, file: string, cfg: HindcastConfig, opt: CsvReadOptions = {}): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  const lines = new Lines(body);
  // a final line break leaves an empty last line: the last real line was terminated
  const lastTerminated = lines.length > 1 && lines.isEmpty(lines.length - 1);
  if (lastTerminated) lines.pop();
  const h = readCsvHeader(lines, cfg, file);
  const { li, delimiter, header, index } = h;
  const decimalComma = delimiter !== ',';
  const qualityPresent = QUALITY_ROLES.filter((r) => index[r] >= 0);
  const b = new FixSeriesBuilder(file, qualityPresent, lines.length - li);
  const w = new RowWarnings(b);
  describeCsv(b, h, cfg);
  const timeFormat = cfg.input.timeFormat;
  // dates as spreadsheets write them (31.12.2026, 12/31/2026), in the time column or a date column beside a time of day
  const dateCol = index.time >= 0 && timeFormat === undefined ? index.date : -1;
  const order = timeFormat === undefined && index.time >= 0 ? separatedDateOrder(lines, li + 1, delimiter, dateCol >= 0 ? dateCol : index.time, file) : null;
  if (dateCol >= 0) b.meta.dateColumn = header[dateCol]!;
  const times = new CsvTimeReader(b, w, cfg.input, { index, hasWeekTow: h.hasWeekTow, dateCol, order, decimalComma });
  const plain =
    opt.plainRows !== false && delimiter === ',' && timeFormat === undefined && dateCol < 0 && order === null && index.latHemisphere < 0 && index.lonHemisphere < 0 && cfg.input.angleUnit !== 'dm'
      ? plainRowReader(b, header.length, index, qualityPresent, { rad: cfg.input.angleUnit === 'rad', unitMs: cfg.input.timeUnit === 'ms' })
      : null;
  const angleUnit = cfg.input.angleUnit === 'deg' && looksLikeDegreesMinutes(lines, li + 1, delimiter, index, decimalComma) ? 'dm' : cfg.input.angleUnit;
  if (angleUnit !== cfg.input.angleUnit) {
    b.meta.angleUnit = angleUnit;
    b.warn('angle-unit', 'latitude/longitude read as degrees and decimal minutes (DDMM.mmmm, as NMEA writes them): the hemisphere columns stand beside angles beyond ±90° / ±180°; set input.angleUnit to say otherwise');
  }
  const fields = new CsvFixFields(b, w, index, qualityPresent, decimalComma, angleUnit);
  const need = Math.max(index.time, index.lat, index.lon, h.hasWeekTow ? Math.max(index.gpsWeek, index.tow) : -1) + 1;
  let rows = 0;
  for (let j = li + 1; j < lines.length; j++) {
    const start = lines.start[j]!, end = lines.end[j]!;
    // a row starting with a digit or "-" is neither blank nor a comment
    const c0 = start < end ? body.charCodeAt(start) : -1;
    if (!((c0 >= 48 && c0 <= 57) || c0 === 45) && isSkippable(lines.at(j))) continue;
    const line = j + 1;
    rows++;
    if (plain !== null && plain(body, start, end, line)) continue;
    const { fields: rec, unclosedQuote } = splitCsvLine(lines.at(j), delimiter);
    if (j === lines.length - 1 && !lastTerminated && rec.length < header.length) {
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
    const t = times.read(rec, line);
    if (t !== null) fields.add(t, rec, line);
  }
  times.resolve(cfg.segments.maxGapSec);
  w.finish();
  if (b.count === 0) {
    if (rows === 0) throw new InputError({ file, line: h.headerLineNo }, 'header only: the file has no fix rows');
    throw new InputError({ file, line: h.headerLineNo + 1 }, `no readable fix rows (${w.total} skipped; first: ${w.first})`);
  }
  const s = accuracyAsSigmas(b.finish());
  if (s.n < 2) throw new InputError({ file, line: s.line[0] }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}

/** The 68 % radius of a circular Gaussian in units of its per-axis sigma: √(−2 ln 0.32). */
export const R68_PER_SIGMA = Math.sqrt(-2 * Math.log(0.32));

/**
 * A horizontal accuracy column (phones write the 68 % radius, in metres) where the log has no sd
 * columns: read as reported sigmas, sd_east = sd_north = accuracy / R68_PER_SIGMA. The calibration
 * fits their scale and how far they are followed (fix-noise.ts), so a device whose accuracy says
 * little about its error is not held to it.
 */
function accuracyAsSigmas(s: FixSeries): FixSeries {
  const acc = s.quality.hAccuracy;
  if (!acc) return s;
  const quality = { ...s.quality };
  delete quality.hAccuracy;
  if (quality.sdEast || quality.sdNorth) return { ...s, quality };
  const sd = acc.map((v) => (v > 0 ? v / R68_PER_SIGMA : NaN));
  quality.sdEast = sd;
  quality.sdNorth = sd;
  const warnings = [...s.warnings, { file: s.file, code: 'accuracy-column', message: 'the accuracy column is read as the 68% horizontal radius (sd per axis = accuracy / 1.51); the calibration finds how far it predicts the error' }];
  return { ...s, quality, warnings };
}

/**
 * The first non-empty value of the column named `column` (matched as header names are, after
 * normalizeHeader), found as readFixCsv finds the header; null where the file has no such column or
 * no readable header (readFixCsv then says why). For grouping logs by a column (batch.pool
 * "column") before they are read.
 */
export function csvColumnValue(text: string, file: string, cfg: HindcastConfig, column: string): string | null {
  const lines = new Lines(text);
  let h: CsvHeader;
  try {
    h = readCsvHeader(lines, cfg, file);
  } catch {
    return null;
  }
  const want = normalizeHeader(column);
  const ci = h.header.findIndex((x) => normalizeHeader(x) === want);
  if (ci < 0) return null;
  for (let j = h.li + 1; j < lines.length; j++) {
    const l = lines.at(j);
    if (isSkippable(l)) continue;
    const v = splitCsvLine(l, h.delimiter).fields[ci]?.trim();
    if (v) return v;
  }
  return null;
}

/** Find the header row (after blank and comment lines and an Excel "sep=X" line), its delimiter and columns. */
function readCsvHeader(lines: Lines, cfg: HindcastConfig, file: string): CsvHeader {
  let li = 0;
  let delimiter = cfg.input.delimiter;
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
  return { li, headerLineNo, delimiter, header, index, matched, hasWeekTow };
}

/** The series metadata of a fix CSV (format, delimiter, units, height reference, with its note). */
function describeCsv(b: FixSeriesBuilder, h: CsvHeader, cfg: HindcastConfig): void {
  const { delimiter, index, matched, header } = h;
  b.meta.format = 'csv';
  b.meta.delimiter = delimiter === '\t' ? 'tab' : delimiter;
  if (delimiter !== ',') b.meta.decimalComma = true;
  b.meta.angleUnit = cfg.input.angleUnit;
  b.meta.heightReference = cfg.input.heightReference ?? 'ellipsoidal';
  if (index.height >= 0 && matched.height && MSL_HEIGHT_ALIASES.has(matched.height) && cfg.input.heightReference === undefined) {
    b.meta.heightReference = 'assumed-ellipsoidal';
    b.warn('height-reference', `column "${header[index.height]}" is read as ellipsoidal height; if it is above mean sea level, set input.heightReference to "msl"`);
  }
}

/** The general path's position, height and quality of a row whose time was read. */
class CsvFixFields {
  private readonly qv: Float64Array;

  constructor(
    private readonly b: FixSeriesBuilder,
    private readonly w: RowWarnings,
    private readonly index: Record<ColumnRole, number>,
    private readonly quality: readonly QualityColumn[],
    private readonly decimalComma: boolean,
    private readonly unit: 'deg' | 'rad' | 'dm',
  ) {
    this.qv = new Float64Array(quality.length);
  }

  /** Add the fix of fields `rec` at time t, or skip the row with a warning. */
  add(t: number, rec: string[], line: number): void {
    const { index, decimalComma, unit, w, qv } = this;
    let lat = parseCsvNumber(rec[index.lat], decimalComma);
    let lon = parseCsvNumber(rec[index.lon], decimalComma);
    if (unit === 'rad') {
      lat *= DEG_PER_RAD;
      lon *= DEG_PER_RAD;
    } else if (unit === 'dm') {
      lat = degreesFromDm(lat);
      lon = degreesFromDm(lon);
    }
    // hemisphere letters beside unsigned angles (S and W are negative)
    if (index.latHemisphere >= 0 && /^\s*s/i.test(rec[index.latHemisphere] ?? '')) lat = -Math.abs(lat);
    if (index.lonHemisphere >= 0 && /^\s*w/i.test(rec[index.lonHemisphere] ?? '')) lon = -Math.abs(lon);
    if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) {
      w.add(
        'row-skipped',
        `position "${(rec[index.lat] ?? '').slice(0, 20)}", "${(rec[index.lon] ?? '').slice(0, 20)}" is not a latitude/longitude in ${unit === 'rad' ? 'radians' : unit === 'dm' ? 'degrees and decimal minutes (DDMM.mmmm)' : 'decimal degrees'}`,
        line,
      );
      return;
    }
    let h = index.height >= 0 ? parseCsvNumber(rec[index.height], decimalComma) : NaN;
    if (Number.isFinite(h) && (h < HEIGHT_RANGE_M[0] || h > HEIGHT_RANGE_M[1])) {
      w.add('height-out-of-range', `height "${rec[index.height]}" outside ${HEIGHT_RANGE_M[0]}…${HEIGHT_RANGE_M[1]} m dropped (row kept)`, line);
      h = NaN;
    }
    for (let i = 0; i < this.quality.length; i++) {
      const v = parseCsvNumber(rec[index[this.quality[i] as ColumnRole]], decimalComma);
      qv[i] = Number.isFinite(v) && v >= 0 ? v : NaN;
    }
    this.b.add(t, lat, lon, h, line, qv);
  }
}

/** Degrees from degrees and decimal minutes written together (DDMM.mmmm: 4807.038 → 48° 7.038′); NaN where the minutes reach 60. */
export function degreesFromDm(v: number): number {
  const a = Math.abs(v);
  const d = Math.floor(a / 100);
  const m = a - 100 * d;
  if (!(m < 60)) return NaN;
  return Math.sign(v) * (d + m / 60);
}

/**
 * Whether a CSV with hemisphere columns writes its angles as NMEA does (DDMM.mmmm): among its first
 * 50 data rows one has an angle beyond ±90° (latitude) or ±180° (longitude).
 */
function looksLikeDegreesMinutes(lines: Lines, first: number, delimiter: string, index: Record<ColumnRole, number>, decimalComma: boolean): boolean {
  if (index.latHemisphere < 0 && index.lonHemisphere < 0) return false;
  for (let j = first, seen = 0; j < lines.length && seen < 50; j++) {
    const { fields } = splitCsvLine(lines.at(j), delimiter);
    const lat = parseCsvNumber(fields[index.lat], decimalComma), lon = parseCsvNumber(fields[index.lon], decimalComma);
    if (!Number.isFinite(lat) || !Number.isFinite(lon)) continue;
    seen++;
    if (Math.abs(lat) > 90 || Math.abs(lon) > 180) return true;
  }
  return false;
}
