/** Small helpers for writing CSV cells. */

/** Fixed-point text of a number, empty for NaN/non-finite values. */
export function fmt(v: number, decimals: number): string {
  return Number.isFinite(v) ? v.toFixed(decimals) : '';
}

/**
 * A text cell: quoted when it holds a delimiter, quote or line break, and prefixed with an
 * apostrophe when it starts with a character a spreadsheet would execute as a formula
 * (=, +, −, @, tab, carriage return; OWASP "CSV injection", common practice).
 */
export function textCell(s: string): string {
  let v = s;
  if (/^[=+\-@\t\r]/.test(v)) v = `'${v}`;
  if (/[",\n\r]/.test(v)) v = `"${v.replace(/"/g, '""')}"`;
  return v;
}
