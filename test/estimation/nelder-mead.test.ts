/**
 * Nelder–Mead simplex minimizer and the central-difference Hessian (src/estimation/nelder-mead.ts).
 * Sources: Nelder & Mead, Computer Journal 7:308–313 (1965); Rosenbrock, Computer Journal 3:175–184
 * (1960) — minimum f = 0 at (1, 1), standard start (−1.2, 1) (common practice).
 */
import { describe, expect, it } from 'vitest';
import { nelderMead, numericalHessian } from '../../src/estimation/nelder-mead.js';

const rosenbrock = (x: number[]) => 100 * (x[1]! - x[0]! ** 2) ** 2 + (1 - x[0]!) ** 2;

describe('nelderMead', () => {
  it('Rosenbrock from (−1.2, 1) reaches the minimum (1, 1) (Rosenbrock 1960 / common practice; tol 1e-4 in x, 1e-8 in f)', () => {
    const res = nelderMead(rosenbrock, [-1.2, 1], { step: [0.1, 0.1], maxEvaluations: 5000, fTolerance: 1e-14, xTolerance: 1e-9 });
    expect(res.converged).toBe(true);
    expect(Math.abs(res.x[0]! - 1)).toBeLessThan(1e-4);
    expect(Math.abs(res.x[1]! - 1)).toBeLessThan(1e-4);
    expect(res.f).toBeLessThan(1e-8);
    expect(res.evaluations).toBeLessThanOrEqual(5000);
  });

  it('a shifted, scaled quadratic in 3 dimensions: minimum (3, −2, 0.5) (exact; tol 1e-5)', () => {
    const f = (x: number[]) => (x[0]! - 3) ** 2 + 10 * (x[1]! + 2) ** 2 + 0.5 * (x[2]! - 0.5) ** 2 + (x[0]! - 3) * (x[2]! - 0.5);
    const res = nelderMead(f, [0, 0, 0], { step: [1, 1, 1], maxEvaluations: 5000, fTolerance: 1e-16, xTolerance: 1e-8 });
    expect(res.converged).toBe(true);
    expect(res.x[0]).toBeCloseTo(3, 5);
    expect(res.x[1]).toBeCloseTo(-2, 5);
    expect(res.x[2]).toBeCloseTo(0.5, 5);
  });

  it('stops at maxEvaluations and reports not converged', () => {
    const res = nelderMead(rosenbrock, [-1.2, 1], { step: [0.1, 0.1], maxEvaluations: 30, fTolerance: 1e-14, xTolerance: 1e-9 });
    expect(res.converged).toBe(false);
    // the last iteration may add a few evaluations (expansion or shrink) past the budget
    expect(res.evaluations).toBeLessThan(30 + 4);
    expect(res.f).toBeLessThanOrEqual(rosenbrock([-1.2, 1]));
  });

  it('non-finite values are treated as +∞ (a constrained region)', () => {
    const f = (x: number[]) => (x[0]! <= 0 ? NaN : (Math.log(x[0]!) - 1) ** 2);
    const res = nelderMead(f, [0.5], { step: [1], maxEvaluations: 2000, fTolerance: 1e-16, xTolerance: 1e-10 });
    expect(res.converged).toBe(true);
    expect(res.x[0]).toBeCloseTo(Math.E, 6);
  });
});

describe('numericalHessian', () => {
  it('is exact (to rounding) for a quadratic ½ xᵀ A x + bᵀ x (tol 1e-6)', () => {
    const A = [
      [4, 1, -0.5],
      [1, 3, 0.25],
      [-0.5, 0.25, 2],
    ];
    const b = [1, -2, 0.5];
    const f = (x: number[]) => {
      let s = 0;
      for (let i = 0; i < 3; i++) {
        s += b[i]! * x[i]!;
        for (let j = 0; j < 3; j++) s += 0.5 * x[i]! * A[i]![j]! * x[j]!;
      }
      return s;
    };
    const H = numericalHessian(f, [0.3, -1.1, 2], [1e-3, 1e-3, 1e-3]);
    for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) expect(Math.abs(H[i]![j]! - A[i]![j]!)).toBeLessThan(1e-6);
  });
  it('Rosenbrock at (1, 1): [[802, −400], [−400, 200]] (derived analytically; tol 1e-3)', () => {
    const H = numericalHessian(rosenbrock, [1, 1], [1e-4, 1e-4]);
    expect(Math.abs(H[0]![0]! - 802)).toBeLessThan(1e-3);
    expect(Math.abs(H[0]![1]! + 400)).toBeLessThan(1e-3);
    expect(Math.abs(H[1]![0]! + 400)).toBeLessThan(1e-3);
    expect(Math.abs(H[1]![1]! - 200)).toBeLessThan(1e-3);
  });
});
