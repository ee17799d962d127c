/**
 * ByteChunks.fixed and .rounded write a value whose scaled form |v|·10^d lies below 2^31 as its
 * integer digits with the point inserted (`pointed`), above it through the integer part and
 * fraction apart. Either way the text is the JavaScript call's (ECMA-262 §21.1.3.3
 * Number.prototype.toFixed; §6.1.6.1.20 Number::toString as JSON.stringify writes it), and the
 * rounded text parses back to the rounded double: checked on edge values around the int32 limit
 * (both sides of the switch), ties, −0, and seeded random values of the track's kinds, written
 * cell by cell through one writer and across chunk boundaries.
 */
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { ByteChunks } from '../../src/output/byte-chunks.js';

const roundedValue = (v: number, d: number) => Math.round(v * 10 ** d) / 10 ** d;
const roundJson = (v: number, d: number) => JSON.stringify(roundedValue(v, d));

/** One writer, written cell by cell (a line each), and the lines the JavaScript calls give. */
class Cells {
  private b = new ByteChunks();
  private taken: Buffer[] = [];
  private want: string[] = [];
  private labels: string[] = [];
  cell(label: string, write: (b: ByteChunks) => void, want: string): void {
    write(this.b);
    this.b.byte(10);
    this.want.push(want);
    this.labels.push(label);
    if (this.b.full) this.taken.push(this.b.take());
  }
  fixed(v: number, d: number): void {
    this.cell(`fixed(${v}, ${d})`, (b) => b.fixed(v, d), v.toFixed(d));
  }
  rounded(v: number, d: number): void {
    this.cell(`rounded(${v}, ${d})`, (b) => b.rounded(v, d), roundJson(v, d));
  }
  /** The first cell whose text differs from the call's, or whose rounded text does not parse back; null when none. */
  firstDifference(): string | null {
    const got = Buffer.concat([...this.taken, this.b.take()]).toString('utf8').split('\n');
    got.pop();
    if (got.length !== this.want.length) return `line counts ${got.length} and ${this.want.length}`;
    for (let i = 0; i < got.length; i++) {
      if (got[i] !== this.want[i]) return `${this.labels[i]}: ${got[i]} against ${this.want[i]}`;
      if (this.labels[i]!.startsWith('rounded') && !Object.is(JSON.parse(got[i]!), JSON.parse(this.want[i]!))) return `${this.labels[i]}: ${got[i]} parses otherwise`;
    }
    return null;
  }
}

const LIMIT = 0x7fffffff;
// scaled values at and around the int32 limit for every decimal count, and small ones
function edges(d: number): number[] {
  const f = 10 ** d;
  const out = [0, -0, 1 / f, -1 / f, 0.5 / f, 9 / f, 10 / f, 99 / f, 100 / f, 0.1, 1, 9.999, 10, 99.5, -99.5, 1234.5678];
  for (const n of [LIMIT - 1, LIMIT, LIMIT + 1, LIMIT + 2, 2 ** 31, 1e9, 1e9 - 1, 999999999, 1e10 - 1, 1e10])
    for (const dv of [-0.6, -0.5, -0.4, 0, 0.4, 0.5, 0.6]) {
      out.push((n + dv) / f, -(n + dv) / f);
    }
  return out;
}

describe('fixed = toFixed and rounded = JSON of the rounded value, on both sides of 2^31 scaled', () => {
  test.each([0, 1, 2, 3, 6, 7, 9, 12, 15])('edge values, %i decimals', (d) => {
    const c = new Cells();
    for (const v of edges(d)) {
      c.fixed(v, d);
      c.rounded(v, d);
    }
    expect(c.firstDifference()).toBe(null);
  });
  test('track-like values (seeded): lat/lon at 9 and 7 decimals, metres at 3, degrees at 1', () => {
    const c = new Cells();
    fc.assert(
      fc.property(
        fc.double({ noNaN: true, noDefaultInfinity: true, min: -180, max: 180 }),
        fc.double({ noNaN: true, noDefaultInfinity: true, min: -3e6, max: 3e6 }),
        fc.integer({ min: -2_200_000_000, max: 2_200_000_000 }),
        (deg, m, k) => {
          const cells: Array<[number, number]> = [[deg, 9], [deg, 7], [m, 3], [m / 1000, 3], [m, 1], [k / 1000, 3], [k / 1000 + 0.0005, 3], [k / 1e7, 7], [k / 10, 1]];
          for (const [v, d] of cells) {
            c.fixed(v, d);
            c.rounded(v, d);
          }
        },
      ),
      { seed: 10_001, numRuns: 20000 },
    );
    expect(c.firstDifference()).toBe(null);
  });
  test('random doubles at every decimal count (seeded)', () => {
    const c = new Cells();
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e7, max: 1e7 }), fc.integer({ min: 0, max: 15 }), (v, d) => {
        c.fixed(v, d);
        c.rounded(v, d);
      }),
      { seed: 10_002, numRuns: 20000 },
    );
    expect(c.firstDifference()).toBe(null);
  });
  test('one writer, many cells across chunk boundaries: the chunks join to the calls\' text', () => {
    const w = new ByteChunks(256);
    let x = 12345;
    const taken: Buffer[] = [];
    let want = '';
    let chunks = 0;
    for (let i = 0; i < 20000; i++) {
      // a seeded linear congruential sequence (Numerical Recipes' constants)
      x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
      const v = (x / 2 ** 32 - 0.5) * 10 ** (x % 8);
      w.fixed(v, 3);
      w.byte(44);
      w.rounded(v, 7);
      w.byte(10);
      want += `${v.toFixed(3)},${roundJson(v, 7)}\n`;
      if (w.full) {
        taken.push(w.take());
        chunks++;
      }
    }
    taken.push(w.take());
    expect(chunks).toBeGreaterThan(100);
    expect(Buffer.concat(taken).toString('utf8')).toBe(want);
  });
});
