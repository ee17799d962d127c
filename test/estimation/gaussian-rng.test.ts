/**
 * The ziggurat normal generator (estimation/gaussian-rng.ts; Marsaglia & Tsang 2000) against the
 * standard normal distribution: moments and tail probabilities from 2,000,000 seeded variates, each
 * within 4 Monte-Carlo standard errors (Φ values: common practice, e.g. Abramowitz & Stegun 26.2).
 */
import { describe, expect, it } from 'vitest';
import { GaussianSource } from '../../src/estimation/gaussian-rng.js';

const M = 2_000_000;
const x = new Float64Array(M);
new GaussianSource(12345).fill(x, M);

describe('ziggurat standard normals', () => {
  it('mean 0, variance 1, skewness 0, kurtosis 3 (4 SE: 1/√M, √(2/M), √(6/M), √(24/M))', () => {
    let m = 0;
    for (let i = 0; i < M; i++) m += x[i]!;
    m /= M;
    let m2 = 0, m3 = 0, m4 = 0;
    for (let i = 0; i < M; i++) {
      const d = x[i]!;
      m2 += d * d;
      m3 += d * d * d;
      m4 += d * d * d * d;
    }
    m2 /= M;
    m3 /= M;
    m4 /= M;
    expect(Math.abs(m)).toBeLessThan(4 / Math.sqrt(M));
    expect(Math.abs(m2 - 1)).toBeLessThan(4 * Math.sqrt(2 / M));
    expect(Math.abs(m3)).toBeLessThan(4 * Math.sqrt(6 / M));
    expect(Math.abs(m4 - 3)).toBeLessThan(4 * Math.sqrt(96 / M));
  });
  // P(X > t) for the standard normal; t = 3.5 is past the ziggurat's base layer R = 3.44 (the tail algorithm)
  it.each([
    [0.5, 0.3085375],
    [1, 0.1586553],
    [1.96, 0.0249979],
    [3, 0.0013499],
    [3.5, 0.0002326],
    [4, 0.0000317],
  ])('P(X > %f) = %f within 4 SE, both tails', (t, p) => {
    let up = 0, lo = 0;
    for (let i = 0; i < M; i++) {
      if (x[i]! > t) up++;
      if (x[i]! < -t) lo++;
    }
    const se = Math.sqrt((p * (1 - p)) / M);
    expect(Math.abs(up / M - p)).toBeLessThan(4 * se);
    expect(Math.abs(lo / M - p)).toBeLessThan(4 * se);
  });
  it('a seed gives the same variates', () => {
    const a = new Float64Array(10), b = new Float64Array(10);
    new GaussianSource(7).fill(a, 10);
    new GaussianSource(7).fill(b, 10);
    expect(Array.from(a)).toEqual(Array.from(b));
  });
  it('fill gives the variates of normal() one by one, slow paths (wedges, tail) included', () => {
    const a = new GaussianSource(99), b = new GaussianSource(99);
    const buf = new Float64Array(1000);
    let mismatches = 0, beyond = 0;
    for (let r = 0; r < 300; r++) {
      a.fill(buf, 1000);
      for (let i = 0; i < 1000; i++) {
        if (!Object.is(buf[i], b.normal())) mismatches++;
        if (Math.abs(buf[i]!) > 3.442619855899) beyond++;
      }
    }
    expect(mismatches).toBe(0);
    // the tail beyond R was drawn (about 0.06% of 300,000: ~170)
    expect(beyond).toBeGreaterThan(50);
  });
});
