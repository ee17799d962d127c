/**
 * ByteChunks.fixed and .rounded write a value below 2^31 in its scaled
 * integer form (digits with the point inserted, `pointed`) instead of through its integer part and
 * fraction apart. The text must be the previous form's, byte for byte: compared with the verbatim
 * copy in test/helpers/reference-byte-chunks.ts (and with toFixed / JSON.stringify) on edge values
 * around the int32 limit, ties, −0, and seeded random values of the track's kinds.
 */
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { ByteChunks } from '../../src/output/byte-chunks.js';
import { RefByteChunks } from '../helpers/reference-byte-chunks.js';

/** Both writers, written cell by cell (a line each) and compared line by line at the end. */
class Pair {
  private a = new ByteChunks();
  private r = new RefByteChunks();
  private ta: Buffer[] = [];
  private tr: Buffer[] = [];
  private labels: string[] = [];
  cell(label: string, write: (b: ByteChunks | RefByteChunks) => void): void {
    write(this.a);
    write(this.r);
    this.a.byte(10);
    this.r.byte(10);
    this.labels.push(label);
    if (this.a.full) this.ta.push(this.a.take());
    if (this.r.full) this.tr.push(this.r.take());
  }
  /** The first cell that differs, or null. */
  firstDifference(): string | null {
    const la = Buffer.concat([...this.ta, this.a.take()]).toString('utf8').split('\n');
    const lr = Buffer.concat([...this.tr, this.r.take()]).toString('utf8').split('\n');
    if (la.length !== lr.length) return `line counts ${la.length} and ${lr.length}`;
    for (let i = 0; i < la.length; i++) if (la[i] !== lr[i]) return `${this.labels[i]}: ${la[i]} against ${lr[i]}`;
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

describe('fixed and rounded below 2^31 = the reference form', () => {
  test.each([0, 1, 2, 3, 6, 7, 9, 12, 15])('edge values, %i decimals', (d) => {
    const p = new Pair();
    for (const v of edges(d)) {
      p.cell(`fixed(${v}, ${d})`, (b) => b.fixed(v, d));
      p.cell(`rounded(${v}, ${d})`, (b) => b.rounded(v, d));
      const c = new ByteChunks(64);
      c.fixed(v, d);
      expect(c.take().toString('utf8'), `toFixed ${v}`).toBe(v.toFixed(d));
    }
    expect(p.firstDifference()).toBe(null);
  });
  test('track-like values (seeded): lat/lon at 9 and 7 decimals, metres at 3, degrees at 1', () => {
    const p = new Pair();
    fc.assert(
      fc.property(
        fc.double({ noNaN: true, noDefaultInfinity: true, min: -180, max: 180 }),
        fc.double({ noNaN: true, noDefaultInfinity: true, min: -3e6, max: 3e6 }),
        fc.integer({ min: -2_200_000_000, max: 2_200_000_000 }),
        (deg, m, k) => {
          const cells: Array<[number, number]> = [[deg, 9], [deg, 7], [m, 3], [m / 1000, 3], [m, 1], [k / 1000, 3], [k / 1000 + 0.0005, 3], [k / 1e7, 7], [k / 10, 1]];
          for (const [v, d] of cells) {
            p.cell(`fixed(${v}, ${d})`, (b) => b.fixed(v, d));
            p.cell(`rounded(${v}, ${d})`, (b) => b.rounded(v, d));
          }
        },
      ),
      { seed: 10_001, numRuns: 20000 },
    );
    expect(p.firstDifference()).toBe(null);
  });
  test('random doubles at every decimal count (seeded)', () => {
    const p = new Pair();
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e7, max: 1e7 }), fc.integer({ min: 0, max: 15 }), (v, d) => {
        p.cell(`fixed(${v}, ${d})`, (b) => b.fixed(v, d));
        p.cell(`rounded(${v}, ${d})`, (b) => b.rounded(v, d));
      }),
      { seed: 10_002, numRuns: 20000 },
    );
    expect(p.firstDifference()).toBe(null);
  });
  test('one writer, many cells across chunk boundaries', () => {
    const a = new ByteChunks(256);
    const r = new RefByteChunks(256);
    let x = 12345;
    const ta: Buffer[] = [];
    const tr: Buffer[] = [];
    for (let i = 0; i < 20000; i++) {
      // a seeded linear congruential sequence (Numerical Recipes' constants)
      x = (Math.imul(x, 1664525) + 1013904223) >>> 0;
      const v = (x / 2 ** 32 - 0.5) * 10 ** (x % 8);
      for (const w of [a, r]) {
        w.fixed(v, 3);
        w.byte(44);
        w.rounded(v, 7);
        w.byte(10);
      }
      if (a.full) ta.push(a.take());
      if (r.full) tr.push(r.take());
    }
    ta.push(a.take());
    tr.push(r.take());
    expect(Buffer.concat(ta).equals(Buffer.concat(tr))).toBe(true);
  });
});
