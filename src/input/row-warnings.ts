/**
 * Bounded per-row warnings: the first few rows of each kind are listed with their line, the rest
 * counted in one closing warning, so a file with a million bad rows gives a short summary.json.
 */
import type { FixSeriesBuilder } from './fix-series.js';

/** Rows listed one by one per warning code; the rest are counted. */
export const LISTED_PER_CODE = 20;

/**
 * Warning codes that describe how a file was interpreted rather than a problem with its data;
 * `input.strict` does not turn these into failures.
 */
export const NOTE_CODES: ReadonlySet<string> = new Set(['height-reference', 'time-unit', 'format', 'date-from-config', 'time-zone-assumed', 'angle-unit', 'accuracy-column', 'imu-unit']);

export class RowWarnings {
  private readonly counts = new Map<string, number>();
  private firstPlace: string | null = null;
  total = 0;

  constructor(private readonly b: FixSeriesBuilder, private readonly listed = LISTED_PER_CODE) {}

  add(code: string, message: string, line?: number): void {
    const c = (this.counts.get(code) ?? 0) + 1;
    this.counts.set(code, c);
    this.total++;
    if (this.firstPlace === null) this.firstPlace = line !== undefined ? `line ${line}: ${message}` : message;
    if (c <= this.listed) this.b.warn(code, message, line);
  }

  count(code: string): number {
    return this.counts.get(code) ?? 0;
  }

  /** The first warning as "line N: reason" (for "no readable rows" errors). */
  get first(): string | null {
    return this.firstPlace;
  }

  /** Add one closing warning per code with more rows than were listed. */
  finish(): void {
    for (const [code, c] of this.counts)
      if (c > this.listed) this.b.warn(code, `${c - this.listed} more row(s) of the same kind (${c} in all)`);
  }
}
