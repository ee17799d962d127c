/**
 * The notes of a decisions file (`note` column; decisions-csv.ts reads and checks the decisions
 * themselves): fix index → note, for the rows whose time names a fix and whose note is not empty.
 * Read after the decisions were accepted, so it only looks up what that reader already matched; a
 * row it cannot match is left out here (the decisions reader reports it).
 */
import { parse } from 'csv-parse/sync';
import { parseIsoToUnix } from '../time/parse-time.js';
import { fixAtTime } from './decisions-csv.js';
import type { FixSeries } from './fix-series.js';

export function parseDecisionNotes(text: string, series: FixSeries): Map<number, string> {
  const out = new Map<number, string>();
  const body = text.replace(/^\uFEFF/, '');
  const firstLine = body.split(/\r?\n/).find((l) => l.trim() !== '' && !l.trimStart().startsWith('#')) ?? '';
  const delimiter = !firstLine.includes(',') && firstLine.includes(';') ? ';' : ',';
  let rows: string[][];
  try {
    rows = parse(body, { delimiter, relax_column_count: true, skip_empty_lines: true, comment: '#', comment_no_infix: true, trim: true }) as string[][];
  } catch {
    return out;
  }
  if (rows.length === 0) return out;
  const header = rows[0]!.map((h) => h.toLowerCase());
  const iTime = header.indexOf('time'), iNote = header.indexOf('note');
  if (iTime < 0 || iNote < 0) return out;
  for (const row of rows.slice(1)) {
    const note = row[iNote] ?? '';
    if (note === '') continue;
    const i = fixAtTime(series.tSec, parseIsoToUnix(row[iTime] ?? ''));
    if (i >= 0) out.set(i, note);
  }
  return out;
}
