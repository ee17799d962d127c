/**
 * Checks of time-zone and time-format settings, so that a misspelt zone is refused when the
 * configuration is loaded instead of every row being skipped later.
 */
import { DateTime, IANAZone } from 'luxon';
import { formatHasZone } from './local-time.js';

/** Levenshtein distance of two short strings (case-insensitive). */
function distance(a: string, b: string): number {
  a = a.toLowerCase();
  b = b.toLowerCase();
  let prev = Array.from({ length: b.length + 1 }, (_, j) => j);
  for (let i = 1; i <= a.length; i++) {
    const cur = [i];
    for (let j = 1; j <= b.length; j++) cur[j] = Math.min(prev[j]! + 1, cur[j - 1]! + 1, prev[j - 1]! + (a[i - 1] === b[j - 1] ? 0 : 1));
    prev = cur;
  }
  return prev[b.length]!;
}

/** Zone names known to this Node (the IANA database of its ICU), for suggestions. */
function knownZones(): string[] {
  const f = (Intl as unknown as { supportedValuesOf?: (k: string) => string[] }).supportedValuesOf;
  return f ? f('timeZone') : [];
}

/** Null for a valid IANA zone name, else a message (with the nearest known name when one is close). */
export function zoneProblem(name: string): string | null {
  if (IANAZone.isValidZone(name)) return null;
  let best = '';
  let bestD = Infinity;
  for (const z of knownZones()) {
    const d = distance(name, z);
    if (d < bestD) {
      bestD = d;
      best = z;
    }
  }
  const hint = best && bestD <= Math.max(2, Math.floor(name.length / 4)) ? `; did you mean "${best}"?` : ' (an IANA zone name such as "Europe/Berlin", or "UTC")';
  return `unknown time zone "${name}"${hint}`;
}

/**
 * Null for a usable luxon format, else a message: a date-time formatted with it must read back to
 * the same instant (to the second, or to the millisecond when the format has fractions).
 */
export function timeFormatProblem(format: string): string | null {
  const sample = DateTime.fromMillis(Date.UTC(2025, 5, 18, 14, 5, 7, 250), { zone: 'UTC' });
  let text: string;
  try {
    text = sample.toFormat(format);
  } catch (e) {
    return `"${format}" is not a time format: ${(e as Error).message}`;
  }
  const back = DateTime.fromFormat(text, format, { zone: 'UTC' });
  if (!back.isValid) return `"${format}" is not a time format that reads back what it writes (luxon tokens, e.g. "dd.MM.yyyy HH:mm:ss")`;
  const wantMs = /S/.test(format.replace(/'[^']*'/g, '')) ? sample.toMillis() : Math.floor(sample.toMillis() / 1000) * 1000;
  if (back.toMillis() !== wantMs) return `"${format}" does not give the full date and time to the second (luxon tokens, e.g. "dd.MM.yyyy HH:mm:ss")`;
  return null;
}

export { formatHasZone };
