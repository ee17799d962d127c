/**
 * Chi-square CDF and quantile (src/estimation/chi-square.ts) against published critical values.
 * Table: NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.4 "Critical values of the
 * chi-square distribution" (upper-tail, printed to 3 decimals, so the tolerance is 5e-4).
 */
import { describe, expect, it } from 'vitest';
import { chiSquareCdf, chiSquareQuantile, gammaP, logGamma } from '../../src/estimation/chi-square.js';

describe('chi-square quantile: NIST/SEMATECH e-Handbook §1.3.6.7.4 table', () => {
  // [dof, p, critical value]; source NIST/SEMATECH e-Handbook §1.3.6.7.4; tol 5e-4 (3-decimal table)
  const TABLE: Array<[number, number, number]> = [
    [1, 0.95, 3.841], [1, 0.99, 6.635], [1, 0.999, 10.828],
    [2, 0.95, 5.991], [2, 0.99, 9.21], [2, 0.999, 13.816],
    [3, 0.95, 7.815], [3, 0.99, 11.345], [3, 0.999, 16.266],
  ];
  const TOL = 5e-4;
  it.each(TABLE)('dof %d, p %f → %f (NIST §1.3.6.7.4, tol 5e-4)', (k, p, v) => {
    expect(Math.abs(chiSquareQuantile(p, k) - v)).toBeLessThan(TOL);
    // and the CDF at the table value is p to the table's rounding (derivative ≤ 0.15 there)
    expect(Math.abs(chiSquareCdf(v, k) - p)).toBeLessThan(TOL);
  });

  it('dof 1, p 0.95 = z²(0.975) = 1.959963984540054² = 3.841458820694124 (common practice; tol 1e-9)', () => {
    expect(Math.abs(chiSquareQuantile(0.95, 1) - 1.959963984540054 ** 2)).toBeLessThan(1e-9);
  });
});

describe('chi-square with 2 dof is exponential (exact, derived)', () => {
  // CDF(x; 2) = 1 − e^{−x/2}, so the quantile is −2 ln(1 − p) exactly (derived)
  it.each([0.01, 0.5, 0.9, 0.95, 0.99, 0.999, 0.999999999])('p = %f: quantile −2 ln(1−p), tol 1e-12 relative', (p) => {
    const x = -2 * Math.log(1 - p);
    expect(Math.abs(chiSquareQuantile(p, 2) - x)).toBeLessThan(1e-12 * x);
  });
  it.each([0.05, 0.7, 1, 3, 5.991, 20, 60])('CDF(%f; 2) = 1 − e^{−x/2} through the incomplete gamma (tol 1e-13)', (x) => {
    // both branches of gammaP (series below a+1 = 2, continued fraction above) are exercised
    expect(Math.abs(chiSquareCdf(x, 2) + Math.expm1(-x / 2))).toBeLessThan(1e-13);
  });
});

describe('CDF ∘ quantile round trip, dof 1..10', () => {
  const ps = [1e-6, 0.01, 0.1, 0.5, 0.9, 0.95, 0.99, 0.999, 0.999999];
  for (let k = 1; k <= 10; k++) {
    it(`dof ${k}: CDF(quantile(p)) = p to 1e-12 relative (derived)`, () => {
      for (const p of ps) {
        const x = chiSquareQuantile(p, k);
        expect(x).toBeGreaterThan(0);
        expect(Math.abs(chiSquareCdf(x, k) - p)).toBeLessThan(1e-12 * p);
      }
    });
  }
  it('lower tail keeps relative accuracy: dof 1, p 1e-6 → x = (π/2)·p² (1 + O(p²)) = 1.5707963268e-12 (derived from CDF(x;1) = erf(√(x/2)); tol 1e-9 relative)', () => {
    const p = 1e-6;
    expect(Math.abs(chiSquareQuantile(p, 1) / ((Math.PI / 2) * p * p) - 1)).toBeLessThan(1e-9);
  });
  it('quantiles increase with p and with dof', () => {
    for (let k = 1; k <= 10; k++) {
      let prev = 0;
      for (const p of ps) {
        const x = chiSquareQuantile(p, k);
        expect(x).toBeGreaterThan(prev);
        prev = x;
      }
      expect(chiSquareQuantile(0.95, k + 1)).toBeGreaterThan(chiSquareQuantile(0.95, k));
    }
  });
  it('mean of chi-square(k) is k: the median is near k − 2/3 for large k (Wilson–Hilferty, common practice; tol 0.01)', () => {
    for (const k of [20, 50]) expect(Math.abs(chiSquareQuantile(0.5, k) - k * (1 - 2 / (9 * k)) ** 3)).toBeLessThan(0.01);
  });
  it('refuses p outside (0, 1) and k ≤ 0', () => {
    expect(() => chiSquareQuantile(0, 2)).toThrow(RangeError);
    expect(() => chiSquareQuantile(1, 2)).toThrow(RangeError);
    expect(() => chiSquareQuantile(NaN, 3)).toThrow(RangeError);
    expect(() => chiSquareQuantile(0.5, 0)).toThrow(RangeError);
  });
});

describe('log-gamma and incomplete gamma', () => {
  // [x, ln Γ(x)]: Γ(1/2) = √π, Γ(1) = 1, Γ(5) = 24, Γ(10) = 362880 (exact, common practice); tol 1e-13
  it.each([
    [0.5, 0.5 * Math.log(Math.PI)],
    [1, 0],
    [1.5, Math.log(0.5 * Math.sqrt(Math.PI))],
    [5, Math.log(24)],
    [10, Math.log(362880)],
  ])('ln Γ(%f) = %f (exact; tol 1e-13)', (x, v) => {
    expect(Math.abs(logGamma(x) - v)).toBeLessThan(1e-13);
  });
  it('P(a, 0) = 0 and P(a, x) → 1 for large x', () => {
    expect(gammaP(3, 0)).toBe(0);
    expect(1 - gammaP(3, 200)).toBeLessThan(1e-15);
  });
  it('P(1, x) = 1 − e^{−x} on both sides of the series/continued-fraction switch (tol 1e-14)', () => {
    for (const x of [0.3, 1.9, 2.1, 7]) expect(Math.abs(gammaP(1, x) + Math.expm1(-x))).toBeLessThan(1e-14);
  });
});
