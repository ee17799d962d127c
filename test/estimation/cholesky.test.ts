/**
 * Cholesky factorization and solve (src/estimation/cholesky.ts; Golub & Van Loan, "Matrix
 * Computations", 4th ed., Algorithm 4.2.1) against a hand-checkable example and ml-matrix.
 */
import { describe, expect, it } from 'vitest';
import { Matrix, solve } from 'ml-matrix';
import { cholesky, choleskySolve } from '../../src/estimation/cholesky.js';
import { Rng } from '../../src/simulate/rng.js';

function randomSpd(rng: Rng, n: number): Matrix {
  const A = new Matrix(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A.set(i, j, rng.normal());
  return A.mmul(A.transpose()).add(Matrix.eye(n).mul(0.1));
}

describe('cholesky', () => {
  it('[[4,12,−16],[12,37,−43],[−16,−43,98]] = L Lᵀ with L = [[2,0,0],[6,1,0],[−8,5,3]] (common practice textbook example; exact)', () => {
    const A = Float64Array.of(4, 12, -16, 12, 37, -43, -16, -43, 98);
    const L = new Float64Array(9).fill(NaN);
    expect(cholesky(3, A, 0, L)).toBe(true);
    expect(Array.from(L)).toEqual([2, 0, 0, 6, 1, 0, -8, 5, 3]);
  });

  it.each([1, 2, 3, 4, 5, 6, 8])('n = %d: L Lᵀ = A (tol 1e-13 relative), upper triangle zero, positive diagonal', (n) => {
    const rng = new Rng(300 + n);
    const A = randomSpd(rng, n);
    // the matrix sits at an offset inside a larger buffer, as the callers store histories
    const buf = new Float64Array(7 + n * n);
    buf.set(A.to1DArray(), 7);
    const L = new Float64Array(n * n).fill(NaN);
    expect(cholesky(n, buf, 7, L)).toBe(true);
    const Lm = Matrix.from1DArray(n, n, Array.from(L));
    const back = Lm.mmul(Lm.transpose());
    const scale = Math.max(...A.to1DArray().map(Math.abs));
    for (let i = 0; i < n; i++) {
      expect(L[i * n + i]!).toBeGreaterThan(0);
      for (let j = 0; j < n; j++) {
        expect(Math.abs(back.get(i, j) - A.get(i, j))).toBeLessThan(1e-13 * scale);
        if (j > i) expect(L[i * n + j]).toBe(0);
      }
    }
  });

  it.each([
    ['indefinite', [1, 2, 2, 1]],
    ['singular', [1, 1, 1, 1]],
    ['negative diagonal', [-1, 0, 0, 1]],
    ['NaN', [NaN, 0, 0, 1]],
  ])('%s matrix is refused (returns false)', (_name, a) => {
    expect(cholesky(2, Float64Array.from(a), 0, new Float64Array(4))).toBe(false);
  });
});

describe('choleskySolve', () => {
  it.each([
    [1, 1],
    [3, 1],
    [4, 3],
    [6, 6],
  ])('n = %d, m = %d right-hand sides: matches ml-matrix solve (tol 1e-10 relative)', (n, m) => {
    const rng = new Rng(400 + 10 * n + m);
    const A = randomSpd(rng, n);
    const B = new Matrix(n, m);
    for (let i = 0; i < n; i++) for (let j = 0; j < m; j++) B.set(i, j, rng.normal() * 10);
    const L = new Float64Array(n * n);
    expect(cholesky(n, Float64Array.from(A.to1DArray()), 0, L)).toBe(true);
    const X = Float64Array.from(B.to1DArray());
    choleskySolve(n, L, X, m);
    const ref = solve(A, B);
    const scale = Math.max(...ref.to1DArray().map(Math.abs));
    for (let i = 0; i < n; i++) for (let j = 0; j < m; j++) expect(Math.abs(X[i * m + j]! - ref.get(i, j))).toBeLessThan(1e-10 * scale);
    // and the residual A X − B is small
    const R = A.mmul(Matrix.from1DArray(n, m, Array.from(X))).sub(B);
    expect(Math.max(...R.to1DArray().map(Math.abs))).toBeLessThan(1e-10 * Math.max(...B.to1DArray().map(Math.abs)));
  });
});
