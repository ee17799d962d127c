/**
 * The byte writers give exactly the text of the JavaScript calls they replace (ECMA-262
 * Number.prototype.toFixed, Number::toString via JSON.stringify, Date.prototype.toISOString):
 * hand-picked edge cases (ties, −0, exponent thresholds, day and year boundaries) and fast-check
 * properties with fixed seeds.
 */
import { describe, expect, test } from 'vitest';
import fc from 'fast-check';
import { ByteChunks, POW10, chunksToString } from '../../src/output/byte-chunks.js';

function text(write: (b: ByteChunks) => void): string {
  const b = new ByteChunks(64);
  write(b);
  return b.take().toString('utf8');
}

const roundJson = (v: number, d: number) => JSON.stringify(Number.isFinite(v) ? Math.round(v * 10 ** d) / 10 ** d : null);

// values: ties in decimal (1.005, 2.5), just below/above ties, −0, tiny, exponent thresholds, large
const EDGE = [
  0, -0, 0.5, -0.5, 1.5, 2.5, -2.5, 1.005, 1.015, 1.025, 0.125, -0.125, 0.0005, -0.0005, 0.0001, -0.0001, 1e-7, -1e-7, 1e-6, 9.999999e-7, 1.23e-7,
  0.1 + 0.2, 52.519986305, 13.405040652, -179.9999999995, 179.99999999949998, 89.9999999999, -33.8688197, 123456.7895, 999.9995, 1e15, 4e15, 1e21, 2 ** 53, -(2 ** 52) + 0.5,
  Number.MIN_VALUE, Number.EPSILON, 5e-324,
];

describe('ByteChunks.fixed = Number.prototype.toFixed', () => {
  test.each([0, 1, 2, 3, 6, 9, 12, 15])('edge values, %i decimals', (d) => {
    for (const v of EDGE) expect(text((b) => b.fixed(v, d)), `${v}`).toBe(v.toFixed(d));
  });
  test('random doubles and decimal ties (fast-check, seeded)', () => {
    fc.assert(
      fc.property(fc.oneof(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e7, max: 1e7 }), fc.integer({ min: -2e9, max: 2e9 }).map((k) => k / 2000 + 0.0005)), fc.integer({ min: 0, max: 12 }), (v, d) => {
        expect(text((b) => b.fixed(v, d))).toBe(v.toFixed(d));
      }),
      { seed: 8001, numRuns: 20000 },
    );
  });
  test('non-finite cells are empty', () => {
    expect(text((b) => b.fixedCell(NaN, 3))).toBe('');
    expect(text((b) => b.fixedCell(Infinity, 3))).toBe('');
  });
});

describe('ByteChunks.rounded = JSON of Math.round(v·10^d)/10^d', () => {
  test('POW10 is 10 ** d', () => {
    for (let d = 0; d < POW10.length; d++) expect(POW10[d]).toBe(10 ** d);
  });
  test.each([0, 1, 3, 6, 7, 9, 12])('edge values, %i decimals', (d) => {
    for (const v of [...EDGE, NaN, Infinity, -Infinity]) expect(text((b) => b.rounded(v, d)), `${v}`).toBe(roundJson(v, d));
  });
  test('random doubles (fast-check, seeded)', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -1e9, max: 1e9 }), fc.integer({ min: 0, max: 12 }), (v, d) => {
        expect(text((b) => b.rounded(v, d))).toBe(roundJson(v, d));
      }),
      { seed: 8002, numRuns: 20000 },
    );
  });
});

describe('digit writers (pairs in int32, integer part from ⌊|v|⌋)', () => {
  // fractions and integer parts on both sides of 2^31 (the int32 path's limit), powers of ten,
  // and values whose rounding carries into the integer part (999.9999999996 → "1000.000000000")
  const near = [2 ** 31 - 1, 2 ** 31, 2 ** 31 + 1, 2 ** 32, 1e9 - 1, 1e9, 1e10 - 1, 1e10, 99, 100, 101, 9, 10];
  const values: number[] = [];
  for (const m of near) for (const d of [0, 1, 3, 6, 9, 12]) values.push(m / 10 ** d, -m / 10 ** d, (m + 0.4) / 10 ** d, (m + 0.6) / 10 ** d);
  for (const ip of [0, 1, 9, 47, 99, 999, 123456]) for (const d of [1, 2, 3, 9, 12]) values.push(ip + 1 - 0.4 / 10 ** d, -(ip + 1 - 0.4 / 10 ** d), ip + 0.4 / 10 ** d, ip + 1 - 0.6 / 10 ** d);
  test.each(Array.from({ length: 16 }, (_, d) => d))('fixed, %i decimals', (d) => {
    for (const v of values) expect(text((b) => b.fixed(v, d)), `${v}`).toBe(v.toFixed(d));
  });
  test.each(Array.from({ length: 16 }, (_, d) => d))('rounded, %i decimals', (d) => {
    for (const v of values) expect(text((b) => b.rounded(v, d)), `${v}`).toBe(roundJson(v, d));
  });
  test('integers across the int32 limit and up to 2^53', () => {
    const ints = [0, 1, 9, 10, 99, 100, 2 ** 31 - 1, 2 ** 31, 2 ** 31 + 1, 1e15 - 1, 1e15, 2 ** 53 - 1, -(2 ** 31), -(2 ** 31) - 1, -(2 ** 53) + 1];
    for (const n of ints) expect(text((b) => b.int(n))).toBe(String(n));
  });
  test('track-like values (seeded): latitudes, longitudes at 9 decimals, metres at 3', () => {
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -180, max: 180 }), fc.double({ noNaN: true, noDefaultInfinity: true, min: -5000, max: 5000 }), (deg, m) => {
        expect(text((b) => b.fixed(deg, 9))).toBe(deg.toFixed(9));
        expect(text((b) => b.fixed(m, 3))).toBe(m.toFixed(3));
        expect(text((b) => b.rounded(deg, 7))).toBe(roundJson(deg, 7));
        expect(text((b) => b.rounded(m, 2))).toBe(roundJson(m, 2));
      }),
      { seed: 8007, numRuns: 20000 },
    );
  });
});

describe('ByteChunks.isoUtc = Date.prototype.toISOString of the rounded millisecond', () => {
  const iso = (t: number) => new Date(Math.round(t * 1000)).toISOString();
  test('day, year and range boundaries', () => {
    const ts = [0, 0.0004, 0.0005, 86399.9995, 86400, 951782400, 951868799.999, 1778664600.1, 1778664600.0999999, 253402300799.999, 253402300800, -0.0004, -1, -62167219200, 1e11];
    const b = new ByteChunks(64);
    for (const t of ts) b.isoUtc(t);
    expect(b.take().toString('latin1')).toBe(ts.map(iso).join(''));
  });
  test('random times, one writer across days (fast-check, seeded)', () => {
    const b = new ByteChunks(64);
    let want = '';
    fc.assert(
      fc.property(fc.double({ noNaN: true, noDefaultInfinity: true, min: -3e9, max: 9e9 }), (t) => {
        b.isoUtc(t);
        want += iso(t);
      }),
      { seed: 8003, numRuns: 20000 },
    );
    expect(b.take().toString('latin1')).toBe(want);
  });
  test('a non-finite time throws as toISOString does', () => {
    expect(() => text((b) => b.isoUtc(NaN))).toThrow(RangeError);
  });
});

describe('ByteChunks text and chunking', () => {
  test('UTF-8 text, integers and long cells across chunk boundaries', () => {
    const b = new ByteChunks(16);
    const chunks: Buffer[] = [];
    let want = '';
    const long = 'é'.repeat(50000) + '°';
    for (let i = -5; i < 2000; i++) {
      b.int(i);
      b.text(i % 97 === 0 ? long : 'naïve');
      b.byte(10);
      want += `${i}${i % 97 === 0 ? long : 'naïve'}\n`;
      if (b.full) chunks.push(b.take());
    }
    b.int(2 ** 60);
    want += String(2 ** 60);
    chunks.push(b.take());
    expect(chunksToString(chunks)).toBe(want);
  });
});
