/**
 * Fields of delimited text (RFC 4180 quoting within a line), the delimiter of a file, and the number
 * rule of fix CSVs (the rules are in the header of input/csv-fixes.ts and docs/formats.md).
 */

const DELIMITERS = [',', ';', '\t', '|'] as const;

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
