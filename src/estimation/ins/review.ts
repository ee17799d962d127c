/**
 * Two-sided review statistic of one GNSS fix against the smoothed IMU-aided track: the deletion
 * residual of the fixes-only review (src/estimation/review.ts) with the full 3×3 smoothed covariance
 * of the measurement prediction (the IMU couples the axes through attitude and lever arm).
 *   ν = z − ẑˢ,  ẑˢ = p̂ˢ + Ĉˢ l + b̂ˢ,  M = H Pˢ Hᵀ
 *   kept fix (in the smoother):      var(ν) = R − M
 *   rejected fix (independent of ẑˢ): var(ν) = R + M
 *   T = νᵀ var(ν)⁻¹ ν  ~ χ²(m) under the model.
 * With diagonal R the statistic is evaluated in whitened coordinates ν̃ = R^{-1/2} ν, M̃ = R^{-1/2} M R^{-1/2},
 * var(ν̃) = I ∓ M̃ = Q (I ∓ Λ) Qᵀ with M̃ = Q Λ Qᵀ (cyclic Jacobi); for a kept fix each eigenvalue of
 * I − M̃ is floored at MIN_RESIDUAL_SHARE, which for a diagonal M is exactly the per-axis floor
 * max(r − hPh, 0.02 r) of the fixes-only review.
 * Sources: de Jong (1988), de Jong & Penzer (1998) as in src/estimation/review.ts; cyclic Jacobi
 * eigenvalue method: Golub & Van Loan, "Matrix Computations" (4th ed., 2013) §8.5 — from memory.
 */
import { MIN_RESIDUAL_SHARE } from '../review.js';

export interface GnssReviewScratch {
  /** m×m whitened M̃ (overwritten by the Jacobi sweeps) and eigenvectors Q (columns). */
  A: Float64Array;
  Q: Float64Array;
  nuW: Float64Array;
}

export function makeGnssReviewScratch(): GnssReviewScratch {
  return { A: new Float64Array(9), Q: new Float64Array(9), nuW: new Float64Array(3) };
}

/**
 * Eigen-decomposition of a symmetric m×m (m ≤ 3) matrix A in place by cyclic Jacobi rotations:
 * on return the diagonal of A holds the eigenvalues and the columns of Q the eigenvectors.
 */
export function jacobiEigenSym(m: number, A: Float64Array, Q: Float64Array): void {
  for (let i = 0; i < m; i++) for (let j = 0; j < m; j++) Q[i * m + j] = i === j ? 1 : 0;
  for (let sweep = 0; sweep < 30; sweep++) {
    let off = 0;
    for (let p = 0; p < m; p++) for (let q = p + 1; q < m; q++) off += A[p * m + q]! ** 2;
    if (off < 1e-30) return;
    for (let p = 0; p < m; p++)
      for (let q = p + 1; q < m; q++) {
        const apq = A[p * m + q]!;
        if (apq === 0) continue;
        // θ = (a_qq − a_pp) / (2 a_pq),  t = sgn(θ) / (|θ| + √(θ² + 1)),  c = 1/√(t² + 1),  s = t c
        const theta = (A[q * m + q]! - A[p * m + p]!) / (2 * apq);
        const t = (theta >= 0 ? 1 : -1) / (Math.abs(theta) + Math.sqrt(theta * theta + 1));
        const c = 1 / Math.sqrt(t * t + 1);
        const s = t * c;
        // A ← Jᵀ A J, Q ← Q J with the rotation J in the (p, q) plane
        for (let k = 0; k < m; k++) {
          const akp = A[k * m + p]!, akq = A[k * m + q]!;
          A[k * m + p] = c * akp - s * akq;
          A[k * m + q] = s * akp + c * akq;
        }
        for (let k = 0; k < m; k++) {
          const apk = A[p * m + k]!, aqk = A[q * m + k]!;
          A[p * m + k] = c * apk - s * aqk;
          A[q * m + k] = s * apk + c * aqk;
        }
        for (let k = 0; k < m; k++) {
          const qkp = Q[k * m + p]!, qkq = Q[k * m + q]!;
          Q[k * m + p] = c * qkp - s * qkq;
          Q[k * m + q] = s * qkp + c * qkq;
        }
      }
  }
}

/**
 * T of one fix. `axes` (length m) picks the measured axes of the packed 3×3 covariance `M6`
 * (ee, en, eu, nn, nu, uu at off); nu and r are per measured axis (length ≥ m).
 */
export function gnssReviewStatistic(m: number, axes: ArrayLike<number>, nu: ArrayLike<number>, r: ArrayLike<number>, M6: Float64Array, off: number, used: boolean, s: GnssReviewScratch): number {
  const A = s.A;
  for (let i = 0; i < m; i++) {
    // ν̃ = R^{-1/2} ν
    s.nuW[i] = nu[i]! / Math.sqrt(r[i]!);
    for (let j = 0; j < m; j++) {
      const a = axes[i]!, b = axes[j]!;
      const lo = Math.min(a, b), hi = Math.max(a, b);
      // packed index of (lo, hi) in the upper triangle of a 3×3
      const idx = lo === 0 ? hi : lo === 1 ? 2 + hi : 5;
      // M̃ = R^{-1/2} M R^{-1/2}
      A[i * m + j] = M6[off + idx]! / Math.sqrt(r[i]! * r[j]!);
    }
  }
  jacobiEigenSym(m, A, s.Q);
  let T = 0;
  for (let i = 0; i < m; i++) {
    const lam = A[i * m + i]!;
    // eigenvalue of var(ν̃) = I ∓ M̃, floored for a kept fix
    const v = used ? Math.max(1 - lam, MIN_RESIDUAL_SHARE) : 1 + Math.max(lam, 0);
    // projection of ν̃ on the eigenvector: y = qᵢᵀ ν̃
    let y = 0;
    for (let k = 0; k < m; k++) y += s.Q[k * m + i]! * s.nuW[k]!;
    // T = Σ yᵢ² / vᵢ
    T += (y * y) / v;
  }
  return T;
}
