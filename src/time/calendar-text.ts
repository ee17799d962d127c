/**
 * Calendar dates written the way spreadsheets and loggers write them, turned into ISO 8601 date
 * text: "31.12.2026" (day first: the dot is the European form), "12/31/2026" or "31/12/2026"
 * (slash: the order is decided from the column, since 05/12/2026 reads both ways), "2026/12/31".
 * A column whose slashed dates never have a field above 12 has no decidable order; the reader then
 * asks for input.timeFormat rather than guess (common practice: spreadsheets in the United States
 * write month first, most other places day first).
 */

/** Day, month, year order of a column of dates with separators. */
export type DateOrder = 'dmy' | 'mdy' | 'ymd';

/** A date with "." "/" or "-" between its fields, a 4-digit year first or last, then an optional time of day. */
const SEPARATED = /^(\d{1,4})([./-])(\d{1,2})\2(\d{1,4})(?:[ T]+(.*))?$/;

/** The fields of a separated date, or null when the text is not one (ISO "2026-12-31" is not: it needs no order). */
export function separatedDate(text: string): { a: number; b: number; c: number; sep: string; yearFirst: boolean; rest: string } | null {
  const m = SEPARATED.exec(text.trim());
  if (!m) return null;
  const [, f1, sep, f2, f3, rest] = m;
  const yearFirst = f1!.length === 4;
  if (!yearFirst && f3!.length !== 4) return null;
  if (yearFirst && sep === '-') return null;
  return { a: +f1!, b: +f2!, c: +f3!, sep: sep!, yearFirst, rest: rest ?? '' };
}

/**
 * The order of a column of separated dates from samples of it: year first when the year leads;
 * day first when a first field exceeds 12 or the separator is a dot; month first when a second field
 * exceeds 12; 'ambiguous' when slashed dates never decide; null when no sample is a separated date.
 */
export function dateOrderOf(samples: Iterable<string>): DateOrder | 'ambiguous' | null {
  let seen = false, yearFirst = false, dot = false, firstOver12 = false, secondOver12 = false;
  for (const s of samples) {
    const d = separatedDate(s);
    if (!d) continue;
    seen = true;
    if (d.yearFirst) yearFirst = true;
    else {
      if (d.sep === '.') dot = true;
      if (d.a > 12) firstOver12 = true;
      if (d.b > 12) secondOver12 = true;
    }
  }
  if (!seen) return null;
  if (yearFirst) return 'ymd';
  if (firstOver12 && secondOver12) return 'ambiguous';
  if (firstOver12 || dot) return 'dmy';
  if (secondOver12) return 'mdy';
  return 'ambiguous';
}

const pad2 = (n: number) => (n < 10 ? '0' : '') + n;

/** ISO 8601 text of a separated date (and its time of day, "T" between) in the given order; null when it is not one. */
export function separatedToIso(text: string, order: DateOrder): string | null {
  const d = separatedDate(text);
  if (!d) return null;
  let y: number, mo: number, day: number;
  if (d.yearFirst) [y, mo, day] = [d.a, d.b, d.c];
  else if (order === 'mdy') [y, mo, day] = [d.c, d.a, d.b];
  else [y, mo, day] = [d.c, d.b, d.a];
  const date = `${y}-${pad2(mo)}-${pad2(day)}`;
  const rest = d.rest.trim();
  if (rest === '') return date;
  // a one-digit hour ("8:05:00") as ISO wants it
  return `${date}T${rest.replace(/^(\d):/, '0$1:')}`;
}

/** A time of day alone ("08:00:00.5", "8:00:00", "080000.50" is not), optionally with Z or an offset. */
export const TIME_OF_DAY = /^\d{1,2}:\d{2}(:\d{2}([.,]\d+)?)?(Z|[+-]\d{2}(:?\d{2})?)?$/;
