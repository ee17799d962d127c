/**
 * The Kalman prediction, scalar Joseph update and RTS step of kalman.ts / rts.ts, written out for
 * state dimension n = 3 (the default axis model: constant velocity + Gauss–Markov fix error, and
 * constant acceleration without it) on the same flat row-major arrays. Unrolled, with every
 * operand in a local, so the per-epoch cost is the arithmetic alone (no loops, no bounds checks,
 * no scratch traffic). Covariances are packed upper triangles; the generic kernels stay the
 * reference (test/estimation/kalman3.test.ts checks these against them to rounding).
 * Sources: as kalman.ts (Kalman 1960; Bar-Shalom, Li, Kirubarajan 2001 §5.2; Grewal & Andrews 2015
 * §6) and rts.ts (Rauch, Tung, Striebel 1965; Särkkä 2013 Theorem 8.2); Cholesky: Golub & Van Loan
 * (2013) Algorithm 4.2.1.
 * Kernels never allocate: scratch is module-level and used only within one call.
 */

/*
 * A symmetric 3×3 covariance is stored as its upper triangle, [p00, p01, p02, p11, p12, p22]
 * (6 doubles instead of 9); element (i, j) is at covIndex(3, i, j) (track-filter.ts). Each kernel
 * computes only the upper triangle, so its results are symmetric by construction.
 */
export function predict3p(
  F: Float64Array,
  Q: Float64Array,
  x: Float64Array, xOff: number,
  P: Float64Array, POff: number,
  xOut: Float64Array, xoOff: number,
  POut: Float64Array, PoOff: number,
): void {
  const f00 = F[0]!, f01 = F[1]!, f02 = F[2]!, f10 = F[3]!, f11 = F[4]!, f12 = F[5]!, f20 = F[6]!, f21 = F[7]!, f22 = F[8]!;
  const x0 = x[xOff]!, x1 = x[xOff + 1]!, x2 = x[xOff + 2]!;
  const p00 = P[POff]!, p01 = P[POff + 1]!, p02 = P[POff + 2]!, p11 = P[POff + 3]!, p12 = P[POff + 4]!, p22 = P[POff + 5]!;
  // x⁻ = F x
  xOut[xoOff] = f00 * x0 + f01 * x1 + f02 * x2;
  xOut[xoOff + 1] = f10 * x0 + f11 * x1 + f12 * x2;
  xOut[xoOff + 2] = f20 * x0 + f21 * x1 + f22 * x2;
  // A = F P
  const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
  const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
  const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
  // P⁻ = A Fᵀ + Q, upper triangle then mirrored (symmetrize)
  const m00 = Q[0]! + a00 * f00 + a01 * f01 + a02 * f02;
  const m01 = Q[1]! + a00 * f10 + a01 * f11 + a02 * f12;
  const m02 = Q[2]! + a00 * f20 + a01 * f21 + a02 * f22;
  const m11 = Q[4]! + a10 * f10 + a11 * f11 + a12 * f12;
  const m12 = Q[5]! + a10 * f20 + a11 * f21 + a12 * f22;
  const m22 = Q[8]! + a20 * f20 + a21 * f21 + a22 * f22;
  POut[PoOff] = m00; POut[PoOff + 1] = m01; POut[PoOff + 2] = m02;
  POut[PoOff + 3] = m11; POut[PoOff + 4] = m12; POut[PoOff + 5] = m22;
}

/**
 * The state half of predict3p (x⁻ = F x), for an axis whose covariance equals another axis's: same
 * model, same measurement variances and use, so P⁻ is computed once and copied (see track-filter.ts).
 */
export function predictState3(F: Float64Array, x: Float64Array, xOff: number, xOut: Float64Array, xoOff: number): void {
  const x0 = x[xOff]!, x1 = x[xOff + 1]!, x2 = x[xOff + 2]!;
  // x⁻ = F x
  xOut[xoOff] = F[0]! * x0 + F[1]! * x1 + F[2]! * x2;
  xOut[xoOff + 1] = F[3]! * x0 + F[4]! * x1 + F[5]! * x2;
  xOut[xoOff + 2] = F[6]! * x0 + F[7]! * x1 + F[8]! * x2;
}

/** The state half of updateJoseph3p (x ← x + K ν, K = P hᵀ S⁻¹ with w = P hᵀ), for an axis sharing another's covariance. */
export function updateState3(nu: number, S: number, w: Float64Array, x: Float64Array, xOff: number): void {
  // K = P hᵀ S⁻¹, x ← x + K ν (the same operations as updateJoseph3p's, so the same bits)
  x[xOff] = x[xOff]! + (w[0]! / S) * nu;
  x[xOff + 1] = x[xOff + 1]! + (w[1]! / S) * nu;
  x[xOff + 2] = x[xOff + 2]! + (w[2]! / S) * nu;
}

export function updateJoseph3p(h: Float64Array, nu: number, S: number, r: number, w: Float64Array, x: Float64Array, xOff: number, P: Float64Array, POff: number): void {
  const w0 = w[0]!, w1 = w[1]!, w2 = w[2]!;
  // K = P hᵀ S⁻¹
  const k0 = w0 / S, k1 = w1 / S, k2 = w2 / S;
  // x ← x + K ν
  x[xOff] = x[xOff]! + k0 * nu;
  x[xOff + 1] = x[xOff + 1]! + k1 * nu;
  x[xOff + 2] = x[xOff + 2]! + k2 * nu;
  // h P hᵀ recomputed from w (= S − r up to rounding) so the expansion matches (I − K h) P (I − K h)ᵀ
  const hph = h[0]! * w0 + h[1]! * w1 + h[2]! * w2;
  const c = hph + r;
  // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
  const n00 = P[POff]! - 2 * k0 * w0 + c * k0 * k0;
  const n01 = P[POff + 1]! - k0 * w1 - w0 * k1 + c * k0 * k1;
  const n02 = P[POff + 2]! - k0 * w2 - w0 * k2 + c * k0 * k2;
  const n11 = P[POff + 3]! - 2 * k1 * w1 + c * k1 * k1;
  const n12 = P[POff + 4]! - k1 * w2 - w1 * k2 + c * k1 * k2;
  const n22 = P[POff + 5]! - 2 * k2 * w2 + c * k2 * k2;
  P[POff] = n00; P[POff + 1] = n01; P[POff + 2] = n02;
  P[POff + 3] = n11; P[POff + 4] = n12; P[POff + 5] = n22;
}

export function innovation3p(h: Float64Array, z: number, r: number, x: Float64Array, xOff: number, P: Float64Array, POff: number, w: Float64Array, out: Float64Array): number {
  const h0 = h[0]!, h1 = h[1]!, h2 = h[2]!;
  const hx = h0 * x[xOff]! + h1 * x[xOff + 1]! + h2 * x[xOff + 2]!;
  // P hᵀ
  const w0 = P[POff]! * h0 + P[POff + 1]! * h1 + P[POff + 2]! * h2;
  const w1 = P[POff + 1]! * h0 + P[POff + 3]! * h1 + P[POff + 4]! * h2;
  const w2 = P[POff + 2]! * h0 + P[POff + 4]! * h1 + P[POff + 5]! * h2;
  w[0] = w0; w[1] = w1; w[2] = w2;
  // S = h P hᵀ + r
  out[0] = r + h0 * w0 + h1 * w1 + h2 * w2;
  // ν = z − h x⁻
  return z - hx;
}

/**
 * One RTS step for n = 3. With `gOut` (9 doubles), the smoother gain is also written there as
 * Gᵀ row-major (t00, t01, t02, t10, …), for rtsState3 on an axis that shares this axis's covariance.
 */
export function rtsStep3p(F: Float64Array, Q: Float64Array, x: Float64Array, xk: number, xk1: number, P: Float64Array, Pk: number, Pk1: number, gOut?: Float64Array): boolean {
  // in place: the filtered epoch k is read from x, P before the smoothed one is written there
  return rtsStep3pFrom(F, Q, x, P, x, xk, xk1, P, Pk, Pk1, gOut);
}

/**
 * The state half of rtsStep3p with the gain of an axis whose covariances equal this one's (gT: Gᵀ
 * row-major from rtsStep3p's gOut): xˢₖ = xₖ + G (xˢₖ₊₁ − F xₖ), the same operations, so the same bits.
 */
export function rtsState3(F: Float64Array, gT: Float64Array, x: Float64Array, xk: number, xk1: number): void {
  const x0 = x[xk]!, x1 = x[xk + 1]!, x2 = x[xk + 2]!;
  // dx = xˢₖ₊₁ − F xₖ
  const dx0 = x[xk1]! - (F[0]! * x0 + F[1]! * x1 + F[2]! * x2);
  const dx1 = x[xk1 + 1]! - (F[3]! * x0 + F[4]! * x1 + F[5]! * x2);
  const dx2 = x[xk1 + 2]! - (F[6]! * x0 + F[7]! * x1 + F[8]! * x2);
  // xˢₖ = xₖ + G dx
  x[xk] = x0 + (gT[0]! * dx0 + gT[3]! * dx1 + gT[6]! * dx2);
  x[xk + 1] = x1 + (gT[1]! * dx0 + gT[4]! * dx1 + gT[7]! * dx2);
  x[xk + 2] = x2 + (gT[2]! * dx0 + gT[5]! * dx1 + gT[8]! * dx2);
}

/**
 * The RTS step for n = 3, out of place: the filtered state and covariance of epoch k are read from
 * fx, fP (at xk, Pk), the smoothed ones of k + 1 from x, P (at xk1, Pk1), and the smoothed epoch k
 * is written to x, P (at xk, Pk); every input is read before anything is written, so fx = x, fP = P
 * is the in-place step (rtsStep3p). Out of place it saves the windowed re-smoothing a copy of the
 * filtered epoch (the same bits as copying it first: test/estimation/kalman3.test.ts).
 */
export function rtsStep3pFrom(F: Float64Array, Q: Float64Array, fx: Float64Array, fP: Float64Array, x: Float64Array, xk: number, xk1: number, P: Float64Array, Pk: number, Pk1: number, gOut?: Float64Array): boolean {
  const f00 = F[0]!, f01 = F[1]!, f02 = F[2]!, f10 = F[3]!, f11 = F[4]!, f12 = F[5]!, f20 = F[6]!, f21 = F[7]!, f22 = F[8]!;
  const x0 = fx[xk]!, x1 = fx[xk + 1]!, x2 = fx[xk + 2]!;
  const p00 = fP[Pk]!, p01 = fP[Pk + 1]!, p02 = fP[Pk + 2]!, p11 = fP[Pk + 3]!, p12 = fP[Pk + 4]!, p22 = fP[Pk + 5]!;
  // A = F Pₖ (also the right-hand side P⁻ Gᵀ = F Pₖ)
  const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
  const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
  const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
  // P⁻ₖ₊₁ = A Fᵀ + Q (symmetric)
  const m00 = Q[0]! + a00 * f00 + a01 * f01 + a02 * f02;
  const m01 = Q[1]! + a00 * f10 + a01 * f11 + a02 * f12;
  const m02 = Q[2]! + a00 * f20 + a01 * f21 + a02 * f22;
  const m11 = Q[4]! + a10 * f10 + a11 * f11 + a12 * f12;
  const m12 = Q[5]! + a10 * f20 + a11 * f21 + a12 * f22;
  const m22 = Q[8]! + a20 * f20 + a21 * f21 + a22 * f22;
  // Cholesky P⁻ = L Lᵀ instead of an explicit inverse (half the rounding error; fails loudly when not PD)
  if (!(m00 > 0)) return false;
  const l00 = Math.sqrt(m00);
  const l10 = m01 / l00, l20 = m02 / l00;
  const d1 = m11 - l10 * l10;
  if (!(d1 > 0)) return false;
  const l11 = Math.sqrt(d1);
  const l21 = (m12 - l20 * l10) / l11;
  const d2 = m22 - l20 * l20 - l21 * l21;
  if (!(d2 > 0)) return false;
  const l22 = Math.sqrt(d2);
  // Gᵀ = (P⁻)⁻¹ A column by column: forward L y = a, backward Lᵀ g = y
  let y0 = a00 / l00, y1 = (a10 - l10 * y0) / l11, y2 = (a20 - l20 * y0 - l21 * y1) / l22;
  const t20 = y2 / l22, t10 = (y1 - l21 * t20) / l11, t00 = (y0 - l10 * t10 - l20 * t20) / l00;
  y0 = a01 / l00; y1 = (a11 - l10 * y0) / l11; y2 = (a21 - l20 * y0 - l21 * y1) / l22;
  const t21 = y2 / l22, t11 = (y1 - l21 * t21) / l11, t01 = (y0 - l10 * t11 - l20 * t21) / l00;
  y0 = a02 / l00; y1 = (a12 - l10 * y0) / l11; y2 = (a22 - l20 * y0 - l21 * y1) / l22;
  const t22 = y2 / l22, t12 = (y1 - l21 * t22) / l11, t02 = (y0 - l10 * t12 - l20 * t22) / l00;
  // (t_ij = Gᵀ[i][j] = G[j][i])
  if (gOut) {
    gOut[0] = t00; gOut[1] = t01; gOut[2] = t02;
    gOut[3] = t10; gOut[4] = t11; gOut[5] = t12;
    gOut[6] = t20; gOut[7] = t21; gOut[8] = t22;
  }
  // x⁻ₖ₊₁ = F xₖ;  dx = xˢₖ₊₁ − x⁻ₖ₊₁
  const dx0 = x[xk1]! - (f00 * x0 + f01 * x1 + f02 * x2);
  const dx1 = x[xk1 + 1]! - (f10 * x0 + f11 * x1 + f12 * x2);
  const dx2 = x[xk1 + 2]! - (f20 * x0 + f21 * x1 + f22 * x2);
  // xˢₖ = xₖ + G dx
  x[xk] = x0 + (t00 * dx0 + t10 * dx1 + t20 * dx2);
  x[xk + 1] = x1 + (t01 * dx0 + t11 * dx1 + t21 * dx2);
  x[xk + 2] = x2 + (t02 * dx0 + t12 * dx1 + t22 * dx2);
  // D = Pˢₖ₊₁ − P⁻ₖ₊₁ (symmetric)
  const d00 = P[Pk1]! - m00, d01 = P[Pk1 + 1]! - m01, d02 = P[Pk1 + 2]! - m02;
  const d11 = P[Pk1 + 3]! - m11, d12 = P[Pk1 + 4]! - m12, d22 = P[Pk1 + 5]! - m22;
  // E = G D (E[i][j] = Σ_m G[i][m] D[m][j] = Σ_m t_mi D[m][j])
  const e00 = t00 * d00 + t10 * d01 + t20 * d02, e01 = t00 * d01 + t10 * d11 + t20 * d12, e02 = t00 * d02 + t10 * d12 + t20 * d22;
  const e10 = t01 * d00 + t11 * d01 + t21 * d02, e11 = t01 * d01 + t11 * d11 + t21 * d12, e12 = t01 * d02 + t11 * d12 + t21 * d22;
  const e20 = t02 * d00 + t12 * d01 + t22 * d02, e21 = t02 * d01 + t12 * d11 + t22 * d12, e22 = t02 * d02 + t12 * d12 + t22 * d22;
  // Pˢₖ = Pₖ + E Gᵀ (upper triangle, mirrored)
  const s00 = p00 + (e00 * t00 + e01 * t10 + e02 * t20);
  const s01 = p01 + (e00 * t01 + e01 * t11 + e02 * t21);
  const s02 = p02 + (e00 * t02 + e01 * t12 + e02 * t22);
  const s11 = p11 + (e10 * t01 + e11 * t11 + e12 * t21);
  const s12 = p12 + (e10 * t02 + e11 * t12 + e12 * t22);
  const s22 = p22 + (e20 * t02 + e21 * t12 + e22 * t22);
  P[Pk] = s00; P[Pk + 1] = s01; P[Pk + 2] = s02;
  P[Pk + 3] = s11; P[Pk + 4] = s12; P[Pk + 5] = s22;
  return true;
}


/** rtsState3 out of place: the filtered state of epoch k from fx, the smoothed k + 1 from x, the result into x at xk (see rtsStep3pFrom). */
export function rtsState3From(F: Float64Array, gT: Float64Array, fx: Float64Array, x: Float64Array, xk: number, xk1: number): void {
  const x0 = fx[xk]!, x1 = fx[xk + 1]!, x2 = fx[xk + 2]!;
  // dx = xˢₖ₊₁ − F xₖ
  const dx0 = x[xk1]! - (F[0]! * x0 + F[1]! * x1 + F[2]! * x2);
  const dx1 = x[xk1 + 1]! - (F[3]! * x0 + F[4]! * x1 + F[5]! * x2);
  const dx2 = x[xk1 + 2]! - (F[6]! * x0 + F[7]! * x1 + F[8]! * x2);
  // xˢₖ = xₖ + G dx
  x[xk] = x0 + (gT[0]! * dx0 + gT[3]! * dx1 + gT[6]! * dx2);
  x[xk + 1] = x1 + (gT[1]! * dx0 + gT[4]! * dx1 + gT[7]! * dx2);
  x[xk + 2] = x2 + (gT[2]! * dx0 + gT[5]! * dx1 + gT[8]! * dx2);
}
