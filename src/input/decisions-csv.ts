/**
 * The user's decisions on fixes, `<stem>.decisions.csv` beside the log: a header row naming the
 * columns `time`, `decision` and (optionally) `note`, in any order and any letter case, then one row
 * per fix. `time` is ISO 8601 with a zone, as written in track.csv and outliers.csv (UTC with
 * milliseconds and Z); `decision` is `keep` (use the fix, no gate) or `reject` (leave it out).
 * Each row is matched to the fix of the log with that time, within 1 ms. A time may also be written
 * as the log writes its times: in `input.timeFormat` and/or without an offset in `input.timeZone`
 * (a local time that occurs twice at a clock change is matched to whichever reading is a fix of
 * the log; if both are, the row is an error asking for an offset).
 *
 * Rules: RFC 4180 quoting (a note may hold commas when quoted); "," or, when the header has none,
 * ";" as delimiter; a byte-order mark, blank lines and lines starting with "#" are ignored; the
 * same fix named twice with the same decision is fine, with different decisions an error. Any row
 * that cannot be applied (bad time, unknown decision, no fix at that time, extra fields) is an
 * InputError naming the file and line: a decision must never be dropped silently. The whole file
 * is checked before failing, and every such row is reported at once (InputErrorList).
 */
import { readFileSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { parse } from 'csv-parse/sync';
import type { HindcastConfig } from '../config/schema.js';
import { InputError, InputErrorList } from '../errors.js';
import { LocalTimeReader } from '../time/local-time.js';
import { formatIsoUtc, parseIsoToUnix } from '../time/parse-time.js';
import type { FixSeries } from './fix-series.js';
import { sessionStem } from './read-log.js';

export type Decision = 'keep' | 'reject';

/** Largest time difference (s) between a decision and its fix. */
export const DECISION_TIME_TOLERANCE_SEC = 0.001;

export const DECISIONS_SUFFIX = '.decisions.csv';

/** The decisions file belonging to a log: `<stem>.decisions.csv` in the log's folder. */
export function decisionsPathFor(logPath: string): string {
  return join(dirname(logPath), sessionStem(basename(logPath)) + DECISIONS_SUFFIX);
}

/** Index of the fix whose time is within the tolerance of tSec, or −1 (times sorted ascending). */
export function fixAtTime(tSecSorted: Float64Array, tSec: number, tolSec = DECISION_TIME_TOLERANCE_SEC): number {
  let lo = 0, hi = tSecSorted.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (tSecSorted[mid]! < tSec) lo = mid + 1;
    else hi = mid;
  }
  let best = -1, bestD = Infinity;
  for (const i of [lo - 1, lo]) {
    if (i < 0 || i >= tSecSorted.length) continue;
    const d = Math.abs(tSecSorted[i]! - tSec);
    if (d < bestD) {
      bestD = d;
      best = i;
    }
  }
  // a little slack for binary floating point of Unix seconds (≈ 2e-7 s at 2026)
  return bestD <= tolSec + 1e-6 ? best : -1;
}

/** How the log writes its times (input.timeZone, input.timeFormat), for decision times written the same way. */
export type LogTimeSettings = Pick<HindcastConfig['input'], 'timeZone' | 'timeFormat'>;

/**
 * The fix of `series` a decision time names: the index, or a reason. ISO 8601 with an offset first,
 * then the log's own format and zone.
 */
function matchTime(timeText: string, series: FixSeries, local: LocalTimeReader | null): number | string {
  const t = parseIsoToUnix(timeText);
  if (Number.isFinite(t)) {
    const i = fixAtTime(series.tSec, t);
    return i >= 0 ? i : `no fix of ${series.file} at ${timeText} (within 1 ms)`;
  }
  const r = local?.read(timeText) ?? null;
  if (r === null) {
    const alt = local === null ? '' : local.format !== undefined ? ` nor in input.timeFormat "${local.format}"` : ` nor a local time in ${local.zoneName}`;
    return `"${timeText}" is not an ISO 8601 time with a zone${alt} (write it as in track.csv, e.g. 2026-05-13T09:31:19.000Z)`;
  }
  const candidates = 'kind' in r ? r.utcMs : [r.utcMs];
  const hits = [...new Set(candidates.map((ms) => fixAtTime(series.tSec, ms / 1000)).filter((i) => i >= 0))];
  if (hits.length === 1) return hits[0]!;
  if (hits.length === 0) return `no fix of ${series.file} at ${timeText} (${candidates.map((ms) => formatIsoUtc(ms / 1000)).join(' or ')}, within 1 ms)`;
  return `${timeText} occurs twice in ${local!.zoneName} (the clocks went back) and both are fixes of ${series.file}; write it with an offset or in UTC (${candidates.map((ms) => formatIsoUtc(ms / 1000)).join(' or ')})`;
}

/** Parse decisions text; `file` names it in errors; `logTimes` how the log writes its times. */
export function parseDecisions(text: string, file: string, series: FixSeries, logTimes: LogTimeSettings = {}): Map<number, Decision> {
  const body = text.replace(/^\uFEFF/, '');
  const firstLine = body.split(/\r?\n/).find((l) => l.trim() !== '' && !l.trimStart().startsWith('#')) ?? '';
  const delimiter = !firstLine.includes(',') && firstLine.includes(';') ? ';' : ',';
  let records: Array<{ record: string[]; info: { lines: number } }>;
  try {
    records = parse(body, {
      delimiter,
      info: true,
      relax_column_count: true,
      skip_empty_lines: true,
      comment: '#',
      comment_no_infix: true,
      trim: true,
    }) as unknown as Array<{ record: string[]; info: { lines: number } }>;
  } catch (e) {
    const line = (e as { lines?: number }).lines;
    throw new InputError({ file, line }, `not a readable CSV file: ${(e as Error).message}`);
  }
  const out = new Map<number, Decision>();
  if (records.length === 0) return out;
  const header = records[0]!.record.map((h) => h.toLowerCase());
  const headerLine = records[0]!.info.lines;
  const col = (name: string) => header.indexOf(name);
  const iTime = col('time'), iDecision = col('decision'), iNote = col('note');
  if (iTime < 0 || iDecision < 0)
    throw new InputError({ file, line: headerLine }, `the header must name the columns time and decision (and optionally note); found: ${header.join(', ') || 'nothing'}`);
  const unknown = header.filter((h, i) => i !== iTime && i !== iDecision && i !== iNote && h !== '');
  if (unknown.length) throw new InputError({ file, line: headerLine }, `unknown column(s) ${unknown.join(', ')}: expected time, decision, note`);
  const local = logTimes.timeFormat !== undefined || logTimes.timeZone !== undefined ? new LocalTimeReader(logTimes.timeZone, logTimes.timeFormat) : null;
  const lineOf = new Map<number, number>();
  const errors: InputError[] = [];
  for (const { record, info } of records.slice(1)) {
    const line = info.lines;
    if (record.length > header.length) {
      errors.push(new InputError({ file, line }, `${record.length} fields but the header has ${header.length}; quote a note that holds the delimiter`));
      continue;
    }
    const timeText = record[iTime] ?? '';
    const decisionText = (record[iDecision] ?? '').toLowerCase();
    // both fields of a row are checked, so one run names every problem
    const before = errors.length;
    let i = -1;
    if (timeText === '') errors.push(new InputError({ file, line, column: 'time' }, 'the time is empty'));
    else {
      const m = matchTime(timeText, series, local);
      if (typeof m === 'string') errors.push(new InputError({ file, line, column: 'time' }, m));
      else i = m;
    }
    if (decisionText !== 'keep' && decisionText !== 'reject')
      errors.push(new InputError({ file, line, column: 'decision' }, `"${record[iDecision] ?? ''}" is not a decision: write keep or reject`));
    if (errors.length > before) continue;
    const prev = out.get(i);
    if (prev !== undefined && prev !== decisionText) {
      errors.push(new InputError({ file, line }, `the fix at ${timeText} is already decided "${prev}" on line ${lineOf.get(i)}; one decision per fix`));
      continue;
    }
    out.set(i, decisionText as Decision);
    if (!lineOf.has(i)) lineOf.set(i, line);
  }
  if (errors.length === 1) throw errors[0]!;
  if (errors.length > 1) throw new InputErrorList(file, errors, 'rows cannot be applied (no decision of the file was used)');
  return out;
}

/** Read `<stem>.decisions.csv` (path as given) and match its rows to the fixes of `series`. */
export function readDecisions(path: string, series: FixSeries, logTimes: LogTimeSettings = {}): Map<number, Decision> {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (e) {
    throw new InputError({ file: path }, `cannot read the decisions file: ${(e as Error).message}`);
  }
  return parseDecisions(text, path, series, logTimes);
}
