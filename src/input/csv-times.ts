/**
 * Times of fix CSV rows (input/csv-fixes.ts): ISO 8601 with an offset or in the configured zone,
 * separated dates as spreadsheets write them, a custom input.timeFormat, Unix seconds/milliseconds,
 * or GPS week + time of week; local times repeated or skipped by a clock change are decided by the
 * order of the rows after the last one.
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { gpsWeekTowToUnixUtc } from '../time/gps-time.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { dateOrderOf, separatedToIso, TIME_OF_DAY, type DateOrder } from '../time/calendar-text.js';
import { LocalTimeReader, lineRanges, offsetText, resolveByOrder, type PendingRow } from '../time/local-time.js';
import type { ColumnRole } from './columns.js';
import { parseCsvNumber, splitCsvLine } from './csv-fields.js';
import type { Lines } from './csv-lines.js';
import type { FixSeriesBuilder } from './fix-series.js';
import type { RowWarnings } from './row-warnings.js';

/** ISO text that carries its own offset (read as it is, whatever input.timeZone says). */
const ISO_WITH_OFFSET = /T.*(Z|[+-]\d{2}(:?\d{2})?)$/;

/** Where a row's time is: the time column (with a date column beside it), or GPS week + TOW. */
export interface CsvTimeColumns {
  index: Record<ColumnRole, number>;
  hasWeekTow: boolean;
  /** A date column beside a time of day in the time column; −1 when none. */
  dateCol: number;
  /** Day/month order of separated dates; null when the file has none. */
  order: DateOrder | null;
  decimalComma: boolean;
}

/** Reads the time of each row, warning about (and skipping) the rows whose time cannot be read. */
export class CsvTimeReader {
  /** Rows at local times a clock change repeats or skips, decided by resolve() after the last row. */
  readonly pending: PendingRow[] = [];
  private readonly local: LocalTimeReader | null;
  private readonly zone: string | undefined;
  private readonly timeFormat: string | undefined;
  private msNoted = false;
  // times without a zone or offset and no input.timeZone: read as UTC (receivers keep UTC), with a note
  private utcAssumed = false;

  constructor(private readonly b: FixSeriesBuilder, private readonly w: RowWarnings, private readonly input: HindcastConfig['input'], private readonly cols: CsvTimeColumns) {
    this.zone = input.timeZone;
    this.timeFormat = input.timeFormat;
    // local times in a zone with clock changes, or a custom format: read row by row, clock changes resolved below
    this.local = this.timeFormat !== undefined || (this.zone !== undefined && this.zone !== 'UTC') ? new LocalTimeReader(this.zone, this.timeFormat) : null;
  }

  /** The UTC Unix time (s) of the row's fields `rec`; null when the row was skipped with a warning. */
  read(rec: string[], line: number): number | null {
    const index = this.cols.index;
    const t = index.time >= 0 && !(this.cols.hasWeekTow && (rec[index.time] ?? '') === '') ? this.columnTime(rec, line) : this.weekTowTime(rec, line);
    if (t === null) return null;
    if (!Number.isFinite(t) || Math.abs(t) > 1e11) {
      this.w.add('row-skipped', `time "${(rec[index.time] ?? '').slice(0, 40)}" is out of range`, line);
      return null;
    }
    return t;
  }

  /** The time column (with the date column beside it). */
  private columnTime(rec: string[], line: number): number | null {
    const { index, dateCol, order } = this.cols;
    const timeFormat = this.timeFormat;
    let rawT = rec[index.time] ?? '';
    if (dateCol >= 0 && TIME_OF_DAY.test(rawT.trim())) {
      const d = (rec[dateCol] ?? '').trim();
      rawT = `${(order ? separatedToIso(d, order) : null) ?? d}T${rawT.trim().replace(/^(\d):/, '0$1:')}`;
    } else if (timeFormat === undefined && TIME_OF_DAY.test(rawT.trim())) {
      const d = this.dayOfTimeOnly(rawT.trim(), line);
      if (d === null) return null;
      rawT = `${d}T${rawT.trim().replace(/^(\d):/, '0$1:')}`;
    } else if (order) rawT = separatedToIso(rawT, order) ?? rawT;
    const v = timeFormat !== undefined ? NaN : parseCsvNumber(rawT, false);
    // ISO 8601 allows "," before the fraction; spreadsheets write a space for the "T"
    const iso = timeFormat !== undefined ? rawT : rawT.replace(/(\d{2}:\d{2}:\d{2}),(\d)/, '$1.$2').replace(/^(\d{4}-\d{2}-\d{2}) (\d{2}:)/, '$1T$2');
    if (this.local !== null && !Number.isFinite(v) && (timeFormat !== undefined || !ISO_WITH_OFFSET.test(iso))) return this.localTime(this.local, rawT, iso, line);
    if (Number.isFinite(v)) return this.numericTime(v);
    return this.isoTime(rawT, iso, line);
  }

  /**
   * The date of a time of day written alone: input.date for the first row, a day later each time the
   * clock goes back by more than 12 h (past midnight); without input.date the row is refused (a
   * date is not guessed).
   */
  private dayOfTimeOnly(raw: string, line: number): string | null {
    const date = this.input.date;
    if (date === undefined) {
      this.w.add('row-skipped', `time "${raw.slice(0, 40)}" is a time of day without a date: set input.date ("YYYY-MM-DD", the date of the first fix) in a --config file`, line);
      return null;
    }
    const [hh, mm, ss] = raw.split(/[:Z+-]/).map(Number);
    const sod = (hh ?? 0) * 3600 + (mm ?? 0) * 60 + (Number.isFinite(ss) ? ss! : 0);
    if (this.lastSecondOfDay >= 0 && sod < this.lastSecondOfDay - 43200) this.dayOffset++;
    this.lastSecondOfDay = sod;
    const [y, mo, d] = date.split('-').map(Number);
    return new Date(Date.UTC(y!, mo! - 1, d! + this.dayOffset)).toISOString().slice(0, 10);
  }
  private lastSecondOfDay = -1;
  private dayOffset = 0;

  /** A local time (zone with clock changes, or input.timeFormat); a repeated or skipped one is provisional. */
  private localTime(local: LocalTimeReader, rawT: string, iso: string, line: number): number | null {
    const r = local.read(iso);
    if (r === null) {
      this.w.add('row-skipped', this.timeFormat !== undefined ? `time "${rawT.slice(0, 40)}" does not match input.timeFormat "${this.timeFormat}"` : `time "${rawT.slice(0, 40)}" is not ISO 8601 nor Unix seconds`, line);
      return null;
    }
    if ('kind' in r && r.kind !== 'unique') {
      this.pending.push({ index: this.b.count, tSec: [r.utcMs[0]! / 1000, r.utcMs[1]! / 1000], offsetMin: [r.offsetMin[0]!, r.offsetMin[1]!], kind: r.kind, line });
      return r.utcMs[0]! / 1000; // provisional, decided after the last row
    }
    return ('kind' in r ? r.utcMs[0]! : r.utcMs) / 1000;
  }

  /** Unix seconds, or milliseconds by input.timeUnit (or guessed above 1e11, with a note). */
  private numericTime(v: number): number {
    const unit = this.input.timeUnit;
    const ms = unit === 'ms' || (unit === 'auto' && Math.abs(v) > 1e11);
    if (ms && unit === 'auto' && !this.msNoted) {
      this.b.warn('time-unit', 'numeric times larger than 1e11 read as Unix milliseconds');
      this.msNoted = true;
    }
    return ms ? v / 1000 : v;
  }

  /** ISO 8601, in input.timeZone, else UTC when it has no zone (with a note). */
  private isoTime(rawT: string, iso: string, line: number): number | null {
    const zone = this.zone;
    let t = parseIsoToUnix(iso, zone);
    if (Number.isNaN(t) && zone === undefined) {
      t = parseIsoToUnix(iso, 'UTC');
      if (!Number.isNaN(t) && !this.utcAssumed) {
        this.utcAssumed = true;
        this.b.warn('time-zone-assumed', `times without a zone or offset (e.g. "${rawT.slice(0, 40)}") are read as UTC; if they are local clock times, set input.timeZone`);
      }
    }
    if (Number.isNaN(t)) {
      this.w.add('row-skipped', `time "${rawT.slice(0, 40)}" is not an ISO 8601 date-time nor Unix seconds (set input.timeFormat for other forms)`, line);
      return null;
    }
    return t;
  }

  private weekTowTime(rec: string[], line: number): number | null {
    const index = this.cols.index;
    const week = parseCsvNumber(rec[index.gpsWeek], false);
    const tow = parseCsvNumber(rec[index.tow], this.cols.decimalComma);
    if (!Number.isInteger(week) || week < 0 || week > 1e5 || !(tow >= 0 && tow < 604800)) {
      this.w.add('row-skipped', `GPS week "${(rec[index.gpsWeek] ?? '').slice(0, 20)}" / time of week "${(rec[index.tow] ?? '').slice(0, 20)}" out of range`, line);
      return null;
    }
    return gpsWeekTowToUnixUtc(week, tow);
  }

  /** Decide the pending rows (after the last row). */
  resolve(maxGapSec: number): void {
    if (this.pending.length > 0) resolveLocalTimes(this.b, this.pending, this.zone ?? 'UTC', maxGapSec);
  }
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
export function separatedDateOrder(lines: Lines, from: number, delimiter: string, col: number, file: string): DateOrder | null {
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
