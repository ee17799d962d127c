/**
 * Kalman filter kernels on flat row-major Float64Arrays (state dimension n, small).
 * Source: Kalman, "A New Approach to Linear Filtering and Prediction Problems", J. Basic Eng.
 * 82:35–45 (1960); notation and the Joseph form from Bar-Shalom, Li, Kirubarajan (2001) §5.2 and
 * Grewal & Andrews, "Kalman Filtering: Theory and Practice", 4th ed. (2015) §6.
 * Kernels never allocate: callers pass preallocated scratch.
 */

/** Scratch buffers for dimension n. */
export interface KalmanScratch {
  n: number;
  /** n×n */
  A: Float64Array;
  /** n×n */
  B: Float64Array;
  /** n */
  v: Float64Array;
  /** n */
  w: Float64Array;
}

export function makeScratch(n: number): KalmanScratch {
  return { n, A: new Float64Array(n * n), B: new Float64Array(n * n), v: new Float64Array(n), w: new Float64Array(n) };
}

/**
 * Prediction: x⁻ = F x,  P⁻ = F P Fᵀ + Q.
 * Reads x (at xOff) and P (at POff); writes xOut (at xoOff) and POut (at PoOff); may alias only
 * when the offsets differ. The result is symmetrized, since rounding makes F P Fᵀ drift from
 * symmetry over long runs.
 */
export function predict(
  n: number,
  F: Float64Array,
  Q: Float64Array,
  x: Float64Array, xOff: number,
  P: Float64Array, POff: number,
  xOut: Float64Array, xoOff: number,
  POut: Float64Array, PoOff: number,
  s: KalmanScratch,
): void {
  const FP = s.A;
  // x⁻ = F x
  for (let i = 0; i < n; i++) {
    let acc = 0;
    for (let j = 0; j < n; j++) acc += F[i * n + j]! * x[xOff + j]!;
    s.v[i] = acc;
  }
  for (let i = 0; i < n; i++) xOut[xoOff + i] = s.v[i]!;
  // FP = F P
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let k = 0; k < n; k++) acc += F[i * n + k]! * P[POff + k * n + j]!;
      FP[i * n + j] = acc;
    }
  // P⁻ = (F P) Fᵀ + Q, upper triangle then mirrored (symmetrize)
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = Q[i * n + j]!;
      for (let k = 0; k < n; k++) acc += FP[i * n + k]! * F[j * n + k]!;
      POut[PoOff + i * n + j] = acc;
      POut[PoOff + j * n + i] = acc;
    }
}

/**
 * Innovation of a scalar measurement z = h·x + noise(r): ν = z − h x⁻, S = h P⁻ hᵀ + r.
 * Writes P hᵀ into s.w (used by the update). Returns ν; S is returned through out[0].
 */
export function innovation(
  n: number,
  h: Float64Array,
  z: number,
  r: number,
  x: Float64Array, xOff: number,
  P: Float64Array, POff: number,
  s: KalmanScratch,
  out: Float64Array,
): number {
  let hx = 0;
  for (let i = 0; i < n; i++) hx += h[i]! * x[xOff + i]!;
  // P hᵀ
  let S = r;
  for (let i = 0; i < n; i++) {
    let acc = 0;
    for (let j = 0; j < n; j++) acc += P[POff + i * n + j]! * h[j]!;
    s.w[i] = acc;
    S += h[i]! * acc;
  }
  out[0] = S;
  return z - hx;
}

/**
 * Scalar measurement update in Joseph form, in place, after innovation() filled s.w = P hᵀ:
 * K = P hᵀ / S,  x ← x + K ν,  P ← (I − K h) P (I − K h)ᵀ + K r Kᵀ.
 * The Joseph form keeps P symmetric positive semi-definite under rounding and is valid for any
 * gain, at the cost of O(n³) instead of O(n²) (Bucy & Joseph 1968; Grewal & Andrews §6.2).
 */
export function updateJoseph(
  n: number,
  h: Float64Array,
  nu: number,
  S: number,
  r: number,
  x: Float64Array, xOff: number,
  P: Float64Array, POff: number,
  s: KalmanScratch,
): void {
  const K = s.v;
  // K = P hᵀ S⁻¹
  for (let i = 0; i < n; i++) K[i] = s.w[i]! / S;
  // x ← x + K ν
  for (let i = 0; i < n; i++) x[xOff + i] = x[xOff + i]! + K[i]! * nu;
  // A = I − K h
  const A = s.A;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A[i * n + j] = (i === j ? 1 : 0) - K[i]! * h[j]!;
  // B = A P
  const B = s.B;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let acc = 0;
      for (let k = 0; k < n; k++) acc += A[i * n + k]! * P[POff + k * n + j]!;
      B[i * n + j] = acc;
    }
  // P = B Aᵀ + K r Kᵀ (symmetric by construction; written from the upper triangle)
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      let acc = r * K[i]! * K[j]!;
      for (let k = 0; k < n; k++) acc += B[i * n + k]! * A[j * n + k]!;
      P[POff + i * n + j] = acc;
      P[POff + j * n + i] = acc;
    }
}
