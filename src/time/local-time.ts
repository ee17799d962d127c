/**
 * Local (wall-clock) times in an IANA zone, with the clock changes made explicit instead of guessed.
 *
 * A wall-clock time w read in a zone has 0, 1 or 2 UTC instants u with u + offset(u) = w: one
 * normally, two in the hour the clocks are set back (the autumn hour occurs twice: "ambiguous"), none
 * in the hour they are set forward (the spring hour is skipped: "non-existent"). For a non-existent
 * time both readings are kept as candidates, w − offset before the change and w − offset after it
 * (a logger that switches its clock late writes the first). The offsets come from the IANA tz
 * database through luxon's IANAZone (common practice: EU zones change at 01:00 UTC on the last
 * Sundays of March and October, US zones at 02:00 local on the second Sunday of March and the
 * first Sunday of November).
 *
 * Which candidate a row takes is decided by the order of the log (`resolveByOrder`): a run of
 * consecutive two-candidate rows in a log written in time order takes the earlier candidate up to
 * some row and the later one after it; of those choices the ones that keep the times non-decreasing
 * with the rows around the run are possible, and of several the one without a step longer than
 * the longest allowed gap is taken. When neither rule leaves exactly one, the rows are left
 * undecided (the reader skips them with a warning) rather than guessed.
 */
import { DateTime, IANAZone } from 'luxon';

export type LocalKind = 'unique' | 'ambiguous' | 'nonexistent';

export interface LocalCandidates {
  kind: LocalKind;
  /** UTC instants (ms), ascending: one for a unique time, two otherwise. */
  utcMs: number[];
  /** Offsets from UTC (minutes) of the candidates, in the same order. */
  offsetMin: number[];
}

const DAY_MS = 86_400_000;

/** The UTC instants of a wall-clock time `wallMs` (its fields read as if they were UTC) in `zone`. */
export function localCandidates(wallMs: number, zone: IANAZone): LocalCandidates {
  // offsets a day before and after bracket at most one change (zones change at most twice a year)
  const oA = zone.offset(wallMs - DAY_MS);
  const oB = zone.offset(wallMs + DAY_MS);
  const found: Array<[number, number]> = [];
  for (const o of oA === oB ? [oA] : [oA, oB]) {
    const u = wallMs - o * 60_000;
    if (zone.offset(u) === o && !found.some(([x]) => x === u)) found.push([u, o]);
  }
  if (found.length === 1) return { kind: 'unique', utcMs: [found[0]![0]], offsetMin: [found[0]![1]] };
  if (found.length === 2) {
    found.sort((a, b) => a[0] - b[0]);
    return { kind: 'ambiguous', utcMs: found.map((f) => f[0]), offsetMin: found.map((f) => f[1]) };
  }
  // skipped by the clock change: read with the offset before the change (oA) and after it (oB)
  const c: Array<[number, number]> = [
    [wallMs - oA * 60_000, oA],
    [wallMs - oB * 60_000, oB],
  ];
  c.sort((a, b) => a[0] - b[0]);
  return { kind: 'nonexistent', utcMs: c.map((f) => f[0]), offsetMin: c.map((f) => f[1]) };
}

/** A row waiting for its time: its index among all rows (file order), its candidates (s), its line. */
export interface PendingRow {
  index: number;
  tSec: [number, number];
  /** Offsets from UTC (minutes) of the two readings. */
  offsetMin: [number, number];
  kind: Exclude<LocalKind, 'unique'>;
  line: number;
}

export interface Resolution {
  /** Chosen time (s) per pending row, in the order given; NaN where the order does not decide. */
  tSec: Float64Array;
  /** Which candidate was taken (0 earlier, 1 later); −1 undecided. */
  choice: Int8Array;
}

/**
 * Choose the candidate of each pending row from the order of the rows. `timeAt(i)` gives the time
 * (s) of row i when it is not pending; `count` is the number of rows; `maxStepSec` the longest step
 * between consecutive rows that counts as continuous (the session's longest bridged gap).
 * Pending rows must be given in ascending `index`.
 */
export function resolveByOrder(pending: readonly PendingRow[], timeAt: (i: number) => number, count: number, maxStepSec: number): Resolution {
  const tSec = new Float64Array(pending.length).fill(NaN);
  const choice = new Int8Array(pending.length).fill(-1);
  let a = 0;
  while (a < pending.length) {
    // a run: pending rows with consecutive indices
    let b = a + 1;
    while (b < pending.length && pending[b]!.index === pending[b - 1]!.index + 1) b++;
    const first = pending[a]!.index, last = pending[b - 1]!.index;
    const p = first > 0 ? timeAt(first - 1) : NaN;
    const q = last + 1 < count ? timeAt(last + 1) : NaN;
    const k = chooseSplit(pending, a, b, p, q, maxStepSec);
    if (k >= 0)
      for (let s = a; s < b; s++) {
        const c = s - a < k ? 0 : 1;
        choice[s] = c;
        tSec[s] = pending[s]!.tSec[c];
      }
    a = b;
  }
  return { tSec, choice };
}

/**
 * For the run pending[a, b) between the times p and q (NaN: none), the number k of rows taking the
 * earlier candidate (the rest the later) that is the only order-consistent one, or −1. O(run length):
 * prefix checks of the earlier readings and suffix checks of the later ones.
 */
function chooseSplit(pending: readonly PendingRow[], a: number, b: number, p: number, q: number, maxStepSec: number): number {
  const m = b - a;
  const E = (s: number) => pending[a + s]!.tSec[0];
  const L = (s: number) => pending[a + s]!.tSec[1];
  // prefOk[k]: p, E[0..k-1] non-decreasing; prefStep[k]: their longest step
  const prefOk = new Uint8Array(m + 1), prefStep = new Float64Array(m + 1);
  prefOk[0] = 1;
  for (let k = 1; k <= m; k++) {
    const prev = k === 1 ? p : E(k - 2);
    const step = Number.isNaN(prev) ? 0 : E(k - 1) - prev;
    prefOk[k] = prefOk[k - 1]! && step >= 0 ? 1 : 0;
    prefStep[k] = Math.max(prefStep[k - 1]!, step);
  }
  // sufOk[k]: L[k..m-1], q non-decreasing; sufStep[k]: their longest step
  const sufOk = new Uint8Array(m + 1), sufStep = new Float64Array(m + 1);
  sufOk[m] = 1;
  for (let k = m - 1; k >= 0; k--) {
    const next = k === m - 1 ? q : L(k + 1);
    const step = Number.isNaN(next) ? 0 : next - L(k);
    sufOk[k] = sufOk[k + 1]! && step >= 0 ? 1 : 0;
    sufStep[k] = Math.max(sufStep[k + 1]!, step);
  }
  const ordered: number[] = [];
  const continuous: number[] = [];
  for (let k = 0; k <= m; k++) {
    if (!prefOk[k] || !sufOk[k]) continue;
    // the junction between the last earlier reading (or p) and the first later one (or q)
    const left = k > 0 ? E(k - 1) : p;
    const right = k < m ? L(k) : q;
    const j = Number.isNaN(left) || Number.isNaN(right) ? 0 : right - left;
    if (j < 0) continue;
    ordered.push(k);
    if (Math.max(prefStep[k]!, sufStep[k]!, j) <= maxStepSec) continuous.push(k);
  }
  if (ordered.length === 1) return ordered[0]!;
  if (ordered.length > 1 && continuous.length === 1) return continuous[0]!;
  return -1;
}

/** "2–301, 305" from ascending line numbers. */
export function lineRanges(lines: readonly number[], max = 8): string {
  const parts: string[] = [];
  let i = 0;
  while (i < lines.length && parts.length < max) {
    let j = i;
    while (j + 1 < lines.length && lines[j + 1] === lines[j]! + 1) j++;
    parts.push(j > i ? `${lines[i]}–${lines[j]}` : `${lines[i]}`);
    i = j + 1;
  }
  return parts.join(', ') + (i < lines.length ? ', …' : '');
}

/** "UTC+02:00" for an offset in minutes. */
export function offsetText(min: number): string {
  const s = min < 0 ? '-' : '+';
  const a = Math.abs(min);
  return `UTC${s}${String(Math.floor(a / 60)).padStart(2, '0')}:${String(a % 60).padStart(2, '0')}`;
}

/** The luxon format has tokens for an offset or zone (then the text carries its own zone). */
export function formatHasZone(format: string): boolean {
  // luxon: Z, ZZ, ZZZ offsets; z zone name; literal text in single quotes is not a token
  return /[Zz]/.test(format.replace(/'[^']*'/g, ''));
}

/**
 * How a time text is read: with `format` (luxon tokens) or as ISO 8601; in `zone` when the text has
 * no offset. The result is either an instant or, for text without an offset, the wall-clock
 * candidates in the zone.
 */
export type TimeReading = { utcMs: number } | LocalCandidates | null;

const ISO_OFFSET = /T.*(Z|[+-]\d{2}(:?\d{2})?)$/;

export class LocalTimeReader {
  readonly zone: IANAZone | null;
  constructor(readonly zoneName: string | undefined, readonly format?: string) {
    this.zone = zoneName !== undefined && zoneName !== 'UTC' ? IANAZone.create(zoneName) : null;
  }

  /** Read `text`; null when it is not a time in the expected shape (or has no zone and none is set). */
  read(text: string): TimeReading {
    let wall: number;
    if (this.format !== undefined) {
      if (formatHasZone(this.format)) {
        const dt = DateTime.fromFormat(text, this.format, { zone: 'UTC', setZone: false });
        return dt.isValid ? { utcMs: dt.toMillis() } : null;
      }
      const dt = DateTime.fromFormat(text, this.format, { zone: 'UTC' });
      if (!dt.isValid) return null;
      wall = dt.toMillis();
    } else {
      // ISO 8601 allows "," before the fraction; spreadsheets write a space for the "T"
      text = text.replace(/(\d{2}:\d{2}:\d{2}),(\d)/, '$1.$2').replace(/^(\d{4}-\d{2}-\d{2}) (\d{2}:)/, '$1T$2');
      if (ISO_OFFSET.test(text)) {
        const dt = DateTime.fromISO(text, { zone: 'UTC' });
        return dt.isValid ? { utcMs: dt.toMillis() } : null;
      }
      if (this.zoneName === undefined) return null;
      const dt = DateTime.fromISO(text, { zone: 'UTC' });
      if (!dt.isValid) return null;
      wall = dt.toMillis();
    }
    if (this.zoneName === undefined) return null;
    if (this.zone === null) return { utcMs: wall };
    // clock changes fall on whole minutes (offsets are whole minutes): one look-up per minute
    const minute = Math.floor(wall / 60_000) * 60_000;
    if (minute !== this.lastMinute) {
      this.lastMinute = minute;
      this.last = localCandidates(minute, this.zone);
    }
    const c = this.last!;
    const d = wall - minute;
    return { kind: c.kind, utcMs: c.utcMs.map((u) => u + d), offsetMin: c.offsetMin };
  }

  private lastMinute = NaN;
  private last: LocalCandidates | null = null;
}
