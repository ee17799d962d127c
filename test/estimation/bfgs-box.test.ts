/**
 * Projected BFGS within box bounds (src/estimation/bfgs-box.ts) on published test functions.
 * Sources: Rosenbrock, "An automatic method for finding the greatest or least value of a function",
 * Computer Journal 3:175–184 (1960): f = 100 (x₂ − x₁²)² + (1 − x₁)², minimum 0 at (1, 1), standard
 * start (−1.2, 1) (common practice); the extended Rosenbrock function, Moré, Garbow & Hillstrom,
 * "Testing unconstrained optimization software", ACM TOMS 7(1):17–41 (1981), problem 21: minimum 0
 * at (1, …, 1) from (−1.2, 1, −1.2, 1, …) (from memory); Nocedal & Wright, "Numerical
 * Optimization", 2nd ed. (2006), a convex quadratic ends in at most n + 1 exact-gradient BFGS steps
 * with exact line search (ch. 6, from memory; here the line search is inexact, so a small bound).
 */
import { describe, expect, it } from 'vitest';
import { boxBfgs } from '../../src/estimation/bfgs-box.js';

const rosenbrock = (x: number[]) => 100 * (x[1]! - x[0]! ** 2) ** 2 + (1 - x[0]!) ** 2;
const extendedRosenbrock = (x: number[]) => {
  let s = 0;
  for (let i = 0; i < x.length; i += 2) s += 100 * (x[i + 1]! - x[i]! ** 2) ** 2 + (1 - x[i]!) ** 2;
  return s;
};
const box = (n: number, lo: number, hi: number) => ({ lo: new Array<number>(n).fill(lo), hi: new Array<number>(n).fill(hi) });

describe('boxBfgs', () => {
  it.each([
    // name, f, start, box, expected minimizer, expected f, tolerance in x
    ['Rosenbrock from (−1.2, 1), wide box (Rosenbrock 1960)', rosenbrock, [-1.2, 1], box(2, -5, 5), [1, 1], 0, 1e-4],
    ['extended Rosenbrock n = 4 (Moré et al. 1981, problem 21)', extendedRosenbrock, [-1.2, 1, -1.2, 1], box(4, -5, 5), [1, 1, 1, 1], 0, 1e-4],
    // x₁ ≤ 0.5 binds: along x₁ = 0.5 the best x₂ is x₁² = 0.25 and f = (1 − 0.5)² = 0.25 (exact)
    ['Rosenbrock with the bound x₁ ≤ 0.5 active (exact: (0.5, 0.25), f 0.25)', rosenbrock, [-1.2, 1], { lo: [-5, -5], hi: [0.5, 5] }, [0.5, 0.25], 0.25, 1e-5],
    // both bounds of the second coordinate of a quadratic: the minimizer clipped to x₂ = −1 (exact)
    ['quadratic with its minimum (3, −2) outside the box x₂ ≥ −1 (exact: (3, −1), f 10)', (x: number[]) => (x[0]! - 3) ** 2 + 10 * (x[1]! + 2) ** 2, [0, 0], { lo: [-10, -1], hi: [10, 10] }, [3, -1], 10, 1e-5],
  ] as const)('%s', (_name, f, x0, b, xStar, fStar, tolX) => {
    const res = boxBfgs(f, [...x0], { ...b, lo: [...b.lo], hi: [...b.hi], maxEvaluations: 4000, gradientStep: x0.map(() => 1e-7), maxStep: 1, fTolerance: 1e-14 });
    expect(res.converged).toBe(true);
    xStar.forEach((v, i) => expect(Math.abs(res.x[i]! - v)).toBeLessThan(tolX));
    // f within 1e-8 of the minimum (tolerance)
    expect(Math.abs(res.f - fStar)).toBeLessThan(1e-8);
    res.x.forEach((v, i) => {
      expect(v).toBeGreaterThanOrEqual(b.lo[i]!);
      expect(v).toBeLessThanOrEqual(b.hi[i]!);
    });
  });

  it('a convex quadratic in 5 dimensions from a diagonal start: few iterations (≤ 2n + 2; exact minimizer, tol 1e-6)', () => {
    // f = ½ (x − c)ᵀ A (x − c), A = tridiagonal(−1, 4, −1): minimum 0 at c
    const c = [1, -2, 0.5, 3, -1];
    const f = (x: number[]) => {
      let s = 0;
      for (let i = 0; i < 5; i++) {
        const di = x[i]! - c[i]!;
        s += 2 * di * di;
        if (i < 4) s -= di * (x[i + 1]! - c[i + 1]!);
      }
      return s;
    };
    const res = boxBfgs(f, [0, 0, 0, 0, 0], { ...box(5, -10, 10), maxEvaluations: 2000, gradientStep: new Array(5).fill(1e-6), maxStep: 10, fTolerance: 1e-16, curvatureStep: new Array(5).fill(1e-3) });
    expect(res.converged).toBe(true);
    c.forEach((v, i) => expect(res.x[i]).toBeCloseTo(v, 6));
    expect(res.iterations).toBeLessThanOrEqual(12);
  });

  it('never evaluates outside the box, also with the start on a bound (difference steps taken inward)', () => {
    const lo = [0, 0], hi = [1, 1];
    let outside = 0;
    // minimum (1.5, −0.5) outside: the solution is the corner (1, 0)
    const f = (x: number[]) => {
      if (x.some((v, i) => v < lo[i]! || v > hi[i]!)) outside++;
      return (x[0]! - 1.5) ** 2 + (x[1]! + 0.5) ** 2 + x[0]! * x[1]!;
    };
    const res = boxBfgs(f, [1, 1], { lo, hi, maxEvaluations: 500, gradientStep: [1e-6, 1e-6], maxStep: 1, fTolerance: 1e-14, curvatureStep: [1e-3, 1e-3] });
    expect(outside).toBe(0);
    expect(res.x[0]).toBeCloseTo(1, 8);
    expect(res.x[1]).toBeCloseTo(0, 8);
  });

  it('a non-finite value is +∞: the search backs off from a region where f is undefined', () => {
    // f defined for x > 0 only: (log x − 1)², minimum at e
    const f = (x: number[]) => (x[0]! <= 0 ? NaN : (Math.log(x[0]!) - 1) ** 2);
    const res = boxBfgs(f, [0.5], { lo: [-10], hi: [10], maxEvaluations: 1000, gradientStep: [1e-7], maxStep: 5, fTolerance: 1e-16 });
    expect(res.x[0]).toBeCloseTo(Math.E, 5);
  });

  it('stops at maxEvaluations and reports not converged', () => {
    const res = boxBfgs(rosenbrock, [-1.2, 1], { ...box(2, -5, 5), maxEvaluations: 20, gradientStep: [1e-7, 1e-7], maxStep: 1, fTolerance: 1e-14 });
    expect(res.converged).toBe(false);
    // a gradient started before the budget ran out may add n evaluations
    expect(res.evaluations).toBeLessThanOrEqual(20 + 2);
    expect(res.f).toBeLessThan(rosenbrock([-1.2, 1]));
  });
  it('takes the exact gradient where given (Rosenbrock 1960 from (−1.2, 1)), and differences where it is not finite', () => {
    const grad = (x: number[]) => [-400 * x[0]! * (x[1]! - x[0]! ** 2) - 2 * (1 - x[0]!), 200 * (x[1]! - x[0]! ** 2)];
    const opt = { ...box(2, -5, 5), maxEvaluations: 4000, gradientStep: [1e-7, 1e-7], maxStep: 1, fTolerance: 1e-14 };
    const exact = boxBfgs(rosenbrock, [-1.2, 1], { ...opt, gradient: grad });
    expect(exact.converged).toBe(true);
    expect(exact.gradients).toBeGreaterThan(0);
    exact.x.forEach((v) => expect(Math.abs(v - 1)).toBeLessThan(1e-4));
    // a gradient unavailable at every other call (NaN): those steps take differences, the same minimum
    let calls = 0;
    const flaky = boxBfgs(rosenbrock, [-1.2, 1], { ...opt, gradient: (x) => (calls++ % 2 ? [NaN, NaN] : grad(x)) });
    expect(flaky.converged).toBe(true);
    flaky.x.forEach((v) => expect(Math.abs(v - 1)).toBeLessThan(1e-4));
    expect(flaky.evaluations).toBeGreaterThan(exact.evaluations);
  });
});
