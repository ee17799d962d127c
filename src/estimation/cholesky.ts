/**
 * In-place Cholesky factorization and solves for small symmetric positive-definite matrices
 * (flat row-major). Solving with the factor instead of forming an inverse halves the rounding
 * error and fails loudly (returns false) when positive definiteness is lost.
 * Source: Golub & Van Loan, "Matrix Computations", 4th ed. (2013), Algorithm 4.2.1.
 */

/** Factor A = L Lᵀ, writing L into the lower triangle of L (n×n). Returns false if A is not PD. */
export function cholesky(n: number, A: Float64Array, aOff: number, L: Float64Array): boolean {
  for (let j = 0; j < n; j++) {
    let d = A[aOff + j * n + j]!;
    for (let k = 0; k < j; k++) d -= L[j * n + k]! * L[j * n + k]!;
    if (!(d > 0)) return false;
    const ljj = Math.sqrt(d);
    L[j * n + j] = ljj;
    for (let i = j + 1; i < n; i++) {
      let s = A[aOff + i * n + j]!;
      for (let k = 0; k < j; k++) s -= L[i * n + k]! * L[j * n + k]!;
      L[i * n + j] = s / ljj;
    }
    for (let i = 0; i < j; i++) L[i * n + j] = 0;
  }
  return true;
}

/**
 * Solve (L Lᵀ) X = B for X, in place in B (n×m, row-major with m columns).
 */
export function choleskySolve(n: number, L: Float64Array, B: Float64Array, m: number): void {
  for (let c = 0; c < m; c++) {
    // forward: L y = b
    for (let i = 0; i < n; i++) {
      let s = B[i * m + c]!;
      for (let k = 0; k < i; k++) s -= L[i * n + k]! * B[k * m + c]!;
      B[i * m + c] = s / L[i * n + i]!;
    }
    // backward: Lᵀ x = y
    for (let i = n - 1; i >= 0; i--) {
      let s = B[i * m + c]!;
      for (let k = i + 1; k < n; k++) s -= L[k * n + i]! * B[k * m + c]!;
      B[i * m + c] = s / L[i * n + i]!;
    }
  }
}
