/**
 * FixSeries: the positions of one log, column-wise in typed arrays, in time order, with the line of
 * each fix in its source file for messages. Readers fill it through FixSeriesBuilder.
 */
import type { InputWarning } from '../errors.js';

/** Optional per-fix quality columns; NaN where a row has no value. */
export const QUALITY_COLUMNS = ['hdop', 'vdop', 'sats', 'fixQuality', 'sdEast', 'sdNorth', 'sdUp', 'hAccuracy'] as const;
export type QualityColumn = (typeof QUALITY_COLUMNS)[number];

export interface FixSeries {
  /** Display path of the source file. */
  file: string;
  /** Number of fixes. */
  n: number;
  /** UTC, Unix seconds. */
  tSec: Float64Array;
  latDeg: Float64Array;
  lonDeg: Float64Array;
  /** Ellipsoidal height (m); NaN where missing; null when the log has no height at all. */
  heightM: Float64Array | null;
  /** Quality columns present in the log. */
  quality: Partial<Record<QualityColumn, Float64Array>>;
  /** 1-based source line of each fix. */
  line: Uint32Array;
  /** What the reader noticed and handled by a documented rule. */
  warnings: InputWarning[];
  /** Free-form facts about the source (format, height reference, …). */
  meta: Record<string, string | number | boolean>;
}

class GrowF64 {
  a: Float64Array;
  n = 0;
  constructor(cap = 1024) {
    this.a = new Float64Array(cap);
  }
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Float64Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
  take(): Float64Array {
    return this.a.slice(0, this.n);
  }
}

/** Line numbers (below 2^32: a log is at most 2^29 bytes), grown like GrowF64. */
class GrowU32 {
  a: Uint32Array;
  n = 0;
  constructor(cap = 1024) {
    this.a = new Uint32Array(cap);
  }
  push(v: number): void {
    if (this.n === this.a.length) {
      const b = new Uint32Array(this.a.length * 2);
      b.set(this.a);
      this.a = b;
    }
    this.a[this.n++] = v;
  }
}

/** Accumulates fixes row by row; finish() sorts by time and drops duplicate times (keep first). */
export class FixSeriesBuilder {
  private t: GrowF64;
  private lat: GrowF64;
  private lon: GrowF64;
  private h: GrowF64;
  private ln: GrowU32;
  private q = new Map<QualityColumn, GrowF64>();
  /** The quality columns' arrays in the order of `qualityColumns` (add() runs per row). */
  private qList: GrowF64[] = [];
  private anyHeight = false;
  readonly warnings: InputWarning[] = [];
  readonly meta: Record<string, string | number | boolean> = {};

  /** `capacity`: the rows expected (an upper bound spares the arrays' regrowth; any number works). */
  constructor(readonly file: string, readonly qualityColumns: readonly QualityColumn[] = [], capacity = 1024) {
    const cap = Math.max(16, Math.min(capacity, 1 << 28));
    this.t = new GrowF64(cap);
    this.lat = new GrowF64(cap);
    this.lon = new GrowF64(cap);
    this.h = new GrowF64(cap);
    this.ln = new GrowU32(cap);
    for (const c of qualityColumns) this.q.set(c, new GrowF64(cap));
    this.qList = [...this.q.values()];
  }

  get count(): number {
    return this.t.n;
  }

  /** Rows added but left out by finish() (a time the reader could not decide). */
  private readonly discarded = new Set<number>();

  /** Time (s) of the i-th row added. */
  timeAt(i: number): number {
    return this.t.a[i]!;
  }

  /** Set the time of the i-th row added (a reader deciding a provisional time). */
  setTime(i: number, tSec: number): void {
    this.t.a[i] = tSec;
  }

  /** Leave the i-th row added out of the series. */
  discard(i: number): void {
    this.discarded.add(i);
  }

  warn(code: string, message: string, line?: number): void {
    this.warnings.push({ file: this.file, line, code, message });
  }

  /** Add a fix; quality values in the order of `qualityColumns` (NaN for missing). */
  add(tSec: number, latDeg: number, lonDeg: number, heightM: number, line: number, quality?: ArrayLike<number>): void {
    this.t.push(tSec);
    this.lat.push(latDeg);
    this.lon.push(lonDeg);
    this.h.push(heightM);
    if (Number.isFinite(heightM)) this.anyHeight = true;
    this.ln.push(line);
    const q = this.qList;
    for (let i = 0; i < q.length; i++) q[i]!.push(quality ? (quality[i] ?? NaN) : NaN);
  }

  /**
   * Finish: rows out of time order are sorted (stable, counted in a warning); of rows with the same
   * time the first is kept and the others are dropped with a warning naming their lines.
   */
  finish(): FixSeries {
    const t = this.t.a;
    let idx: Uint32Array;
    if (this.discarded.size === 0) {
      idx = new Uint32Array(0);
    } else {
      const rest: number[] = [];
      for (let i = 0; i < this.t.n; i++) if (!this.discarded.has(i)) rest.push(i);
      idx = Uint32Array.from(rest);
    }
    const all = this.discarded.size === 0;
    const n0 = all ? this.t.n : idx.length;
    const at = (j: number): number => (all ? j : idx[j]!);
    let ordered = true;
    let repeats = false;
    for (let j = 1; j < n0; j++) {
      if (t[at(j)]! < t[at(j - 1)]!) {
        ordered = false;
        break;
      }
      if (t[at(j)] === t[at(j - 1)]) repeats = true;
    }
    // in order and no repeated time (the usual log): every row is kept where it is
    if (all && ordered && !repeats) return this.series(n0, null);
    if (all) {
      idx = new Uint32Array(n0);
      for (let i = 0; i < n0; i++) idx[i] = i;
    }
    if (!ordered) {
      let outOfOrder = 0;
      for (let j = 1; j < n0; j++) if (t[idx[j]!]! < t[idx[j - 1]!]!) outOfOrder++;
      const arr = Array.from(idx);
      arr.sort((a, b) => t[a]! - t[b]! || a - b);
      idx = Uint32Array.from(arr);
      this.warn('rows-sorted', `${outOfOrder} row(s) out of time order; rows sorted by time`);
    }
    // duplicates: keep the first of equal times (first in file order thanks to the stable sort)
    const keep: number[] = [];
    const dupLines: number[] = [];
    for (let j = 0; j < n0; j++) {
      const i = idx[j]!;
      if (keep.length > 0 && t[i] === t[keep[keep.length - 1]!]) {
        dupLines.push(this.ln.a[i]!);
        continue;
      }
      keep.push(i);
    }
    if (dupLines.length > 0) {
      const shown = dupLines.slice(0, 10).join(', ') + (dupLines.length > 10 ? ', …' : '');
      this.warn('duplicate-time', `${dupLines.length} row(s) repeat an earlier time and were dropped (kept the first); lines ${shown}`, dupLines[0]);
    }
    return this.series(keep.length, keep);
  }

  /**
   * The series of the rows `keep` (in that order), or of the first n rows as they are (keep null:
   * views of the builder's arrays, not copies; at 1M fixes the copies were ~60 MB of fresh memory
   * to write, and the builder is done with them).
   */
  private series(n: number, keep: number[] | null): FixSeries {
    const pick = (src: Float64Array) => {
      if (keep === null) return src.subarray(0, n);
      const out = new Float64Array(n);
      for (let j = 0; j < n; j++) out[j] = src[keep[j]!]!;
      return out;
    };
    const quality: Partial<Record<QualityColumn, Float64Array>> = {};
    for (const [k, g] of this.q) quality[k] = pick(g.a);
    let line: Uint32Array;
    if (keep === null) line = this.ln.a.subarray(0, n);
    else {
      line = new Uint32Array(n);
      for (let j = 0; j < n; j++) line[j] = this.ln.a[keep[j]!]!;
    }
    return {
      file: this.file,
      n,
      tSec: pick(this.t.a),
      latDeg: pick(this.lat.a),
      lonDeg: pick(this.lon.a),
      heightM: this.anyHeight ? pick(this.h.a) : null,
      quality,
      line,
      warnings: this.warnings,
      meta: this.meta,
    };
  }
}
