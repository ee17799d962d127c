/**
 * Scalar measurement update of the error state in Joseph form, evaluated in O(n²):
 *   P ← (I − k hᵀ) P (I − k hᵀ)ᵀ + r k kᵀ  =  P − k wᵀ − w kᵀ + (hᵀ P h + r) k kᵀ,   w = P h.
 * The right-hand side is the same function of the gain k as the Joseph product (expanded exactly),
 * so an error in k still changes P only to second order and P stays symmetric (written from the
 * upper triangle) — the reasons for the Joseph form (Bucy & Joseph 1968; Grewal & Andrews 2015 §6.2) —
 * at O(n²) instead of the O(n³) of the explicit product in src/estimation/kalman.ts, which matters at
 * several updates per epoch of an 18-state filter.
 */
import { checkSize, sizeError } from './check-size.js';

export interface ScalarScratch {
  w: Float64Array;
  k: Float64Array;
}

export function makeScalarScratch(n: number): ScalarScratch {
  return { w: new Float64Array(n), k: new Float64Array(n) };
}

/**
 * Update x (the error-state estimate, length n) and P (n×n) with z = hᵀx + noise(r), in place.
 * `nu` is the innovation z − hᵀx at the current x. Returns the innovation variance S = hᵀPh + r.
 */
export function scalarJosephUpdate(n: number, h: Float64Array, nu: number, r: number, x: Float64Array, P: Float64Array, s: ScalarScratch): number {
  if (h.length !== n) throw sizeError('scalarJosephUpdate', 'h', h.length, n, 'the state dimension n', false);
  if (x.length !== n) throw sizeError('scalarJosephUpdate', 'x', x.length, n, 'the state dimension n', false);
  if (P.length !== n * n) throw sizeError('scalarJosephUpdate', 'P', P.length, n * n, `${n}×${n}`, false);
  if (s.w.length !== n) throw sizeError('scalarJosephUpdate', 'scratch', s.w.length, n, 'the state dimension n', false);
  const w = s.w, k = s.k;
  // w = P h (h is sparse: skip zeros)
  w.fill(0);
  for (let j = 0; j < n; j++) {
    const hj = h[j]!;
    if (hj === 0) continue;
    for (let i = 0; i < n; i++) w[i] = w[i]! + P[i * n + j]! * hj;
  }
  // S = hᵀ P h + r
  let hph = 0;
  for (let i = 0; i < n; i++) hph += h[i]! * w[i]!;
  const S = hph + r;
  // K = P hᵀ S⁻¹
  for (let i = 0; i < n; i++) k[i] = w[i]! / S;
  // x ← x + K ν
  for (let i = 0; i < n; i++) x[i] = x[i]! + k[i]! * nu;
  // P ← P − k wᵀ − w kᵀ + S k kᵀ (upper triangle, mirrored)
  for (let i = 0; i < n; i++) {
    const ki = k[i]!, wi = w[i]!;
    for (let j = i; j < n; j++) {
      const v = P[i * n + j]! - ki * w[j]! - wi * k[j]! + S * ki * k[j]!;
      P[i * n + j] = v;
      P[j * n + i] = v;
    }
  }
  return S;
}
