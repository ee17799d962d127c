/**
 * WebAssembly form of the calibration's likelihood kernel (../track-loglik.ts forwardLogLik,
 * AssemblyScript, compiled by `npm run build` to loglik-kernel.wasm beside this file and in dist,
 * see package.json "build:wasm"). The same operations in the same order as the TypeScript loop, so
 * the same bits (test/estimation/loglik-wasm.test.ts): WebAssembly has no fused multiply-add and
 * its f64 add, sub, mul and div round as IEEE 754 does in JavaScript. The logarithm is fdlibm's
 * __ieee754_log (Sun Microsystems 1993, e_log.c: reduction to [√2/2, √2], then a degree-14 even
 * polynomial in s = f/(2+f)) written out here; it is the algorithm V8's Math.log runs (V8
 * src/base/ieee754.cc), and the test compares the two on millions of arguments. The step matrices
 * (exponentials) come from the caller: one F and Q per distinct Δt, and per epoch the index of its
 * step.
 * Layout (byte offsets, set by the caller): st 22 doubles (x east, north, up; P east, up; the
 * running sum), par 14 doubles (gate thresholds by dof 0–3, h east 3, h up 3, r scales east, up,
 * the "up" flag, unused), tab 36 doubles per step (F, Q east; F, Q up), slot i32 per epoch, and
 * per epoch use (f64: 0, 1 gated, 2 kept), z east, north, up and r east, up (f64).
 */

const LN2_HI: f64 = 6.93147180369123816490e-01;
const LN2_LO: f64 = 1.90821492927058770002e-10;
const TWO54: f64 = 1.80143985094819840000e+16;
const LG1: f64 = 6.666666666666735130e-01;
const LG2: f64 = 3.999999999940941908e-01;
const LG3: f64 = 2.857142874366239149e-01;
const LG4: f64 = 2.222219843214978396e-01;
const LG5: f64 = 1.818357216161805012e-01;
const LG6: f64 = 1.531383769920937332e-01;
const LG7: f64 = 1.479819860511658591e-01;
const LOG_2PI: f64 = 1.8378770664093453; // Math.log(2π) in JavaScript (checked by the test through logLn)

/** fdlibm __ieee754_log, operation for operation. */
// @ts-ignore: decorator
@inline
function ln(x0: f64): f64 {
  let x = x0;
  let bits = reinterpret<u64>(x);
  let hx = <i32>(bits >> 32);
  const lx = <u32>bits;
  let k: i32 = 0;
  if (hx < 0x00100000) {
    if (((hx & 0x7fffffff) | lx) == 0) return -Infinity;
    if (hx < 0) return NaN;
    k -= 54;
    x *= TWO54;
    bits = reinterpret<u64>(x);
    hx = <i32>(bits >> 32);
  }
  if (hx >= 0x7ff00000) return x + x;
  k += (hx >> 20) - 1023;
  hx &= 0x000fffff;
  let i: i32 = (hx + 0x95f64) & 0x100000;
  // normalize x or x/2: the high word replaced, the low word kept
  x = reinterpret<f64>((<u64>(<u32>(hx | (i ^ 0x3ff00000))) << 32) | (reinterpret<u64>(x) & 0xffffffff));
  k += i >> 20;
  const f = x - 1.0;
  if ((0x000fffff & (2 + hx)) < 3) {
    if (f == 0) {
      if (k == 0) return 0;
      const dk = <f64>k;
      return dk * LN2_HI + dk * LN2_LO;
    }
    const R = f * f * (0.5 - 0.33333333333333333 * f);
    if (k == 0) return f - R;
    const dk = <f64>k;
    return dk * LN2_HI - ((R - dk * LN2_LO) - f);
  }
  const s = f / (2.0 + f);
  const dk = <f64>k;
  const z = s * s;
  i = hx - 0x6147a;
  const w = z * z;
  const j: i32 = 0x6b851 - hx;
  const t1 = w * (LG2 + w * (LG4 + w * LG6));
  const t2 = z * (LG1 + w * (LG3 + w * (LG5 + w * LG7)));
  i |= j;
  const R = t2 + t1;
  if (i > 0) {
    const hfsq = 0.5 * f * f;
    if (k == 0) return f - (hfsq - s * (hfsq + R));
    return dk * LN2_HI - ((hfsq - (s * (hfsq + R) + dk * LN2_LO)) - f);
  }
  if (k == 0) return f - s * (f - R);
  return dk * LN2_HI - ((s * (f - R) - dk * LN2_LO) - f);
}

/** The logarithm alone, for the test against Math.log. */
export function logLn(x: f64): f64 {
  return ln(x);
}

/** The constant log 2π as compiled, for the test against JavaScript's. */
export function log2pi(): f64 {
  return LOG_2PI;
}

// @ts-ignore: decorator
@inline
function ld(p: usize, i: i32): f64 {
  return load<f64>(p + (<usize>i << 3));
}

// @ts-ignore: decorator
@inline
function st(p: usize, i: i32, v: f64): void {
  store<f64>(p + (<usize>i << 3), v);
}

/*
 * One axis's state in memory: x (3 doubles) at px, its packed covariance P (upper triangle
 * [p00, p01, p02, p11, p12, p22]) at pP. The steps are kalman3.ts's predict3p, innovation3p,
 * updateJoseph3p and updateState3, operation for operation.
 */

/** x⁻ = F x, P⁻ = F P Fᵀ + Q (F at T, Q at T + 9 doubles, both 3×3 row-major); in place. */
// @ts-ignore: decorator
@inline
function predict3p(T: usize, px: usize, pP: usize): void {
  const f00 = ld(T, 0), f01 = ld(T, 1), f02 = ld(T, 2), f10 = ld(T, 3), f11 = ld(T, 4), f12 = ld(T, 5), f20 = ld(T, 6), f21 = ld(T, 7), f22 = ld(T, 8);
  const x0 = ld(px, 0), x1 = ld(px, 1), x2 = ld(px, 2);
  const p00 = ld(pP, 0), p01 = ld(pP, 1), p02 = ld(pP, 2), p11 = ld(pP, 3), p12 = ld(pP, 4), p22 = ld(pP, 5);
  // x⁻ = F x
  st(px, 0, f00 * x0 + f01 * x1 + f02 * x2);
  st(px, 1, f10 * x0 + f11 * x1 + f12 * x2);
  st(px, 2, f20 * x0 + f21 * x1 + f22 * x2);
  // A = F P
  const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
  const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
  const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
  // P⁻ = A Fᵀ + Q (upper triangle)
  st(pP, 0, ld(T, 9) + a00 * f00 + a01 * f01 + a02 * f02);
  st(pP, 1, ld(T, 10) + a00 * f10 + a01 * f11 + a02 * f12);
  st(pP, 2, ld(T, 11) + a00 * f20 + a01 * f21 + a02 * f22);
  st(pP, 3, ld(T, 13) + a10 * f10 + a11 * f11 + a12 * f12);
  st(pP, 4, ld(T, 14) + a10 * f20 + a11 * f21 + a12 * f22);
  st(pP, 5, ld(T, 17) + a20 * f20 + a21 * f21 + a22 * f22);
}

/** x⁻ = F x alone (an axis whose covariance is another's). */
// @ts-ignore: decorator
@inline
function predictState3(T: usize, px: usize): void {
  const x0 = ld(px, 0), x1 = ld(px, 1), x2 = ld(px, 2);
  st(px, 0, ld(T, 0) * x0 + ld(T, 1) * x1 + ld(T, 2) * x2);
  st(px, 1, ld(T, 3) * x0 + ld(T, 4) * x1 + ld(T, 5) * x2);
  st(px, 2, ld(T, 6) * x0 + ld(T, 7) * x1 + ld(T, 8) * x2);
}

/** P hᵀ into pw (3 doubles) and S = h P hᵀ + r into pw + 3; returns ν = z − h x⁻. */
// @ts-ignore: decorator
@inline
function innovation3p(h0: f64, h1: f64, h2: f64, z: f64, r: f64, px: usize, pP: usize, pw: usize): f64 {
  const hx = h0 * ld(px, 0) + h1 * ld(px, 1) + h2 * ld(px, 2);
  // P hᵀ
  const w0 = ld(pP, 0) * h0 + ld(pP, 1) * h1 + ld(pP, 2) * h2;
  const w1 = ld(pP, 1) * h0 + ld(pP, 3) * h1 + ld(pP, 4) * h2;
  const w2 = ld(pP, 2) * h0 + ld(pP, 4) * h1 + ld(pP, 5) * h2;
  st(pw, 0, w0); st(pw, 1, w1); st(pw, 2, w2);
  // S = h P hᵀ + r
  st(pw, 3, r + h0 * w0 + h1 * w1 + h2 * w2);
  // ν = z − h x⁻
  return z - hx;
}

/** Joseph-form update with P hᵀ, S from innovation3p at pw: x ← x + K ν, P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ. */
// @ts-ignore: decorator
@inline
function updateJoseph3p(h0: f64, h1: f64, h2: f64, nu: f64, r: f64, pw: usize, px: usize, pP: usize): void {
  const w0 = ld(pw, 0), w1 = ld(pw, 1), w2 = ld(pw, 2), S = ld(pw, 3);
  // K = P hᵀ S⁻¹
  const k0 = w0 / S, k1 = w1 / S, k2 = w2 / S;
  // x ← x + K ν
  st(px, 0, ld(px, 0) + k0 * nu);
  st(px, 1, ld(px, 1) + k1 * nu);
  st(px, 2, ld(px, 2) + k2 * nu);
  // h P hᵀ recomputed from w (= S − r up to rounding) so the expansion matches (I − K h) P (I − K h)ᵀ
  const c = h0 * w0 + h1 * w1 + h2 * w2 + r;
  // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ (symmetric under rounding, valid for any gain)
  const n00 = ld(pP, 0) - 2 * k0 * w0 + c * k0 * k0;
  const n01 = ld(pP, 1) - k0 * w1 - w0 * k1 + c * k0 * k1;
  const n02 = ld(pP, 2) - k0 * w2 - w0 * k2 + c * k0 * k2;
  const n11 = ld(pP, 3) - 2 * k1 * w1 + c * k1 * k1;
  const n12 = ld(pP, 4) - k1 * w2 - w1 * k2 + c * k1 * k2;
  const n22 = ld(pP, 5) - 2 * k2 * w2 + c * k2 * k2;
  st(pP, 0, n00); st(pP, 1, n01); st(pP, 2, n02); st(pP, 3, n11); st(pP, 4, n12); st(pP, 5, n22);
}

/** x ← x + K ν with K = P hᵀ S⁻¹ from pw (an axis sharing another's covariance and gain). */
// @ts-ignore: decorator
@inline
function updateState3(nu: f64, pw: usize, px: usize): void {
  const S = ld(pw, 3);
  st(px, 0, ld(px, 0) + (ld(pw, 0) / S) * nu);
  st(px, 1, ld(px, 1) + (ld(pw, 1) / S) * nu);
  st(px, 2, ld(px, 2) + (ld(pw, 2) / S) * nu);
}

/**
 * The loop of forwardLogLik from epoch 0 (the prior in the state at pSt) to N − 1; returns the sum,
 * leaves the last epoch's filtered state in it. Scratch: 8 doubles after the 14 of pPar.
 */
export function run(N: i32, pSt: usize, pPar: usize, pTab: usize, pSlot: usize, pUse: usize, pZE: usize, pZN: usize, pZU: usize, pRE: usize, pRU: usize): f64 {
  const up = ld(pPar, 12) != 0;
  const thr1 = ld(pPar, 1), thr2 = ld(pPar, 2), thr3 = ld(pPar, 3);
  const e0 = ld(pPar, 4), e1 = ld(pPar, 5), e2 = ld(pPar, 6);
  const v0 = ld(pPar, 7), v1 = ld(pPar, 8), v2 = ld(pPar, 9);
  const sH = ld(pPar, 10), sU = ld(pPar, 11);
  // x east, north, up; P east (= north), up; P hᵀ and S of east, up
  const xE = pSt, xN = pSt + 24, xU = pSt + 48, PE = pSt + 72, PU = pSt + 120;
  const wH = pPar + 14 * 8, wV = wH + 32;
  let sum = ld(pSt, 21);
  for (let k: i32 = 0; k < N; k++) {
    if (k > 0) {
      const T = pTab + (<usize>load<i32>(pSlot + (<usize>k << 2)) * 36 << 3);
      // east: x⁻ = F x, P⁻ = F P Fᵀ + Q; north: x⁻ = F x, P⁻ is east's
      predict3p(T, xE, PE);
      predictState3(T, xN);
      if (up) predict3p(T + (18 << 3), xU, PU);
    }
    const u = ld(pUse, k);
    if (u == 0) continue;
    let nis: f64 = 0;
    let dof: i32 = 0;
    let ll: f64 = 0;
    const ze = ld(pZE, k);
    let nuE: f64 = 0, nuN: f64 = 0, SH: f64 = NaN, rH: f64 = 0;
    if (isFinite(ze)) {
      rH = ld(pRE, k) * sH;
      nuE = innovation3p(e0, e1, e2, ze, rH, xE, PE, wH);
      SH = ld(wH, 3);
      nuN = ld(pZN, k) - (e0 * ld(xN, 0) + e1 * ld(xN, 1) + e2 * ld(xN, 2));
      // log 2π + log S, one per axis (north's equals east's); NIS = Σ ν²/S
      const lH = LOG_2PI + ln(SH);
      nis += (nuE * nuE) / SH;
      ll += lH;
      dof++;
      nis += (nuN * nuN) / SH;
      ll += lH;
      dof++;
    }
    const zu = up ? ld(pZU, k) : NaN;
    let nuU: f64 = 0, SU: f64 = NaN, rV: f64 = 0;
    if (up && isFinite(zu)) {
      rV = ld(pRU, k) * sU;
      nuU = innovation3p(v0, v1, v2, zu, rV, xU, PU, wV);
      SU = ld(wV, 3);
      nis += (nuU * nuU) / SU;
      ll += LOG_2PI + ln(SU);
      dof++;
    }
    if (dof == 0) continue;
    const thr = dof == 1 ? thr1 : dof == 2 ? thr2 : thr3;
    if (u == 2 || nis <= thr) {
      // an axis whose S is not finite is not updated
      if (isFinite(SH)) {
        updateJoseph3p(e0, e1, e2, nuE, rH, wH, xE, PE);
        updateState3(nuN, wH, xN);
      }
      if (isFinite(SU)) updateJoseph3p(v0, v1, v2, nuU, rV, wV, xU, PU);
      // accepted: −½ (Σ (log 2π + log S) + NIS)
      sum += -0.5 * (ll + nis);
    } else {
      // rejected: capped likelihood contribution keeps outliers from dominating calibration
      sum += -0.5 * (ll + thr);
    }
  }
  st(pSt, 21, sum);
  return sum;
}

/*
 * The calibration's exact gradient (../track-score.ts trackScore) for one group of axes sharing a
 * covariance (east and north, or one axis alone): forwardGroup, then backwardGroup with gainStep,
 * axisStep and measurementTerm, operation for operation (the same bits: test/estimation/
 * score-wasm.test.ts). The per-Δt constants come from the caller, computed as trackScore computes
 * them (the exponentials stay JavaScript's): per distinct Δt at tab + 8 i doubles
 * [Δt, φ, V, qΔt³/3, qΔt²/2, qΔt, ∂φ/∂log τ, ∂V/∂log τ], and per epoch k ≥ 1 the index of the Δt
 * from k − 1 to k (i32). Arrays: x 3 doubles an epoch, P 6 (packed upper triangle), the rest 1.
 * Returns the group's log-likelihood, or NaN with scoreFailedAt set where a predicted covariance
 * is not positive definite.
 */

let failedAt: i32 = -1;

export function scoreFailedAt(): i32 {
  return failedAt;
}

// @ts-ignore: decorator
@inline
function slotOf(pSlot: usize, k: i32): usize {
  return <usize>load<i32>(pSlot + (<usize>k << 2));
}

// @ts-ignore: decorator
@inline
function isFinite64(v: f64): bool {
  return v - v == 0;
}

export function scoreGroup(
  N: i32, pSlot: usize, pTab: usize, pUse: usize, pZ0: usize, pZ1: usize, pR: usize, rScale: f64,
  prior0: f64, prior1: f64, s2: f64, q: f64, two: i32,
  pXf0: usize, pXf1: usize, pXs0: usize, pXs1: usize, pPf: usize, pPp: usize, pPs: usize,
  pOut0: usize, pOut1: usize, pG: usize, pAcc: usize,
): f64 {
  failedAt = -1;
  const ll = scoreForward(N, pSlot, pTab, pUse, pZ0, pZ1, pR, rScale, prior0, prior1, s2, two, pXf0, pXf1, pPf, pPp);
  if (!scoreBackward(N, pSlot, pTab, pUse, pZ0, pZ1, pR, rScale, q, two, pXf0, pXf1, pXs0, pXs1, pPf, pPp, pPs, pOut0, pOut1, pG, pAcc)) return NaN;
  return ll;
}

function scoreForward(
  N: i32, pSlot: usize, pTab: usize, pUse: usize, pZ0: usize, pZ1: usize, pR: usize, rScale: f64,
  prior0: f64, prior1: f64, s2: f64, two: i32, pXf0: usize, pXf1: usize, pPf: usize, pPp: usize,
): f64 {
  // the prior (track-filter.ts writePrior): position at the first fix, velocity and error at 0
  let p00 = prior0, p01: f64 = 0, p02: f64 = 0, p11 = prior1, p12: f64 = 0, p22 = s2;
  const z00 = ld(pZ0, 0);
  let x0 = isFinite64(z00) ? z00 : 0, x1: f64 = 0, x2: f64 = 0;
  const z10 = two ? ld(pZ1, 0) : 0;
  let y0 = two && isFinite64(z10) ? z10 : 0, y1: f64 = 0, y2: f64 = 0;
  let ll: f64 = 0;
  for (let k = 0; k < N; k++) {
    if (k > 0) {
      const T = pTab + (slotOf(pSlot, k) << 6);
      const dt = ld(T, 0), phi = ld(T, 1), V = ld(T, 2), q3 = ld(T, 3), q2 = ld(T, 4), q1 = ld(T, 5);
      // P⁻ = F P Fᵀ + Q
      const n00 = p00 + 2 * dt * p01 + dt * dt * p11 + q3;
      const n01 = p01 + dt * p11 + q2;
      const n02 = phi * (p02 + dt * p12);
      const n11 = p11 + q1;
      const n12 = phi * p12;
      const n22 = phi * phi * p22 + V;
      p00 = n00; p01 = n01; p02 = n02; p11 = n11; p12 = n12; p22 = n22;
      // x⁻ = F x
      x0 = x0 + dt * x1; x2 = phi * x2;
      y0 = y0 + dt * y1; y2 = phi * y2;
    }
    const o = 6 * k;
    st(pPp, o, p00); st(pPp, o + 1, p01); st(pPp, o + 2, p02); st(pPp, o + 3, p11); st(pPp, o + 4, p12); st(pPp, o + 5, p22);
    const za = ld(pZ0, k);
    if (ld(pUse, k) != 0 && isFinite64(za)) {
      // w = P hᵀ, S = h P hᵀ + R
      const w0 = p00 + p02, w1 = p01 + p12, w2 = p02 + p22;
      const R = ld(pR, k) * rScale;
      const hph = w0 + w2;
      const S = hph + R;
      const k0 = w0 / S, k1 = w1 / S, k2 = w2 / S;
      const nu = za - x0 - x2;
      x0 += k0 * nu; x1 += k1 * nu; x2 += k2 * nu;
      const logS = ln(S);
      ll -= 0.5 * (LOG_2PI + logS + (nu * nu) / S);
      if (two) {
        const nv = ld(pZ1, k) - y0 - y2;
        y0 += k0 * nv; y1 += k1 * nv; y2 += k2 * nv;
        ll -= 0.5 * (LOG_2PI + logS + (nv * nv) / S);
      }
      // Joseph form expanded
      const c = hph + R;
      const n00 = p00 - 2 * k0 * w0 + c * k0 * k0;
      const n01 = p01 - k0 * w1 - w0 * k1 + c * k0 * k1;
      const n02 = p02 - k0 * w2 - w0 * k2 + c * k0 * k2;
      const n11 = p11 - 2 * k1 * w1 + c * k1 * k1;
      const n12 = p12 - k1 * w2 - w1 * k2 + c * k1 * k2;
      const n22 = p22 - 2 * k2 * w2 + c * k2 * k2;
      p00 = n00; p01 = n01; p02 = n02; p11 = n11; p12 = n12; p22 = n22;
    }
    st(pPf, o, p00); st(pPf, o + 1, p01); st(pPf, o + 2, p02); st(pPf, o + 3, p11); st(pPf, o + 4, p12); st(pPf, o + 5, p22);
    st(pXf0, 3 * k, x0); st(pXf0, 3 * k + 1, x1); st(pXf0, 3 * k + 2, x2);
    if (two) {
      st(pXf1, 3 * k, y0); st(pXf1, 3 * k + 1, y1); st(pXf1, 3 * k + 2, y2);
    }
  }
  return ll;
}

/** measurementTerm: ∂ℓ/∂log Rₖ of one axis at epoch k from the smoothed moments. */
// @ts-ignore: decorator
@inline
function measurementTermAt(pZ: usize, pR: usize, pUse: usize, k: i32, rScale: f64, pX: usize, pP: usize, pOut: usize): void {
  const zk = ld(pZ, k);
  if (ld(pUse, k) == 0 || !isFinite64(zk)) return;
  const res = zk - ld(pX, 3 * k) - ld(pX, 3 * k + 2);
  const o = 6 * k;
  const E = res * res + ld(pP, o) + 2 * ld(pP, o + 2) + ld(pP, o + 5);
  st(pOut, k, -0.5 + (0.5 * E) / (ld(pR, k) * rScale));
}

function scoreBackward(
  N: i32, pSlot: usize, pTab: usize, pUse: usize, pZ0: usize, pZ1: usize, pR: usize, rScale: f64, q: f64, two: i32,
  pXf0: usize, pXf1: usize, pXs0: usize, pXs1: usize, pPf: usize, pPp: usize, pPs: usize, pOut0: usize, pOut1: usize, pG: usize, pAcc: usize,
): bool {
  const last = N - 1;
  for (let i = 0; i < 6; i++) st(pPs, 6 * last + i, ld(pPf, 6 * last + i));
  for (let i = 0; i < 3; i++) st(pXs0, 3 * last + i, ld(pXf0, 3 * last + i));
  for (let k = 0; k < N; k++) st(pOut0, k, 0);
  measurementTermAt(pZ0, pR, pUse, last, rScale, pXs0, pPs, pOut0);
  if (two) {
    for (let i = 0; i < 3; i++) st(pXs1, 3 * last + i, ld(pXf1, 3 * last + i));
    for (let k = 0; k < N; k++) st(pOut1, k, 0);
    measurementTermAt(pZ1, pR, pUse, last, rScale, pXs1, pPs, pOut1);
  }
  for (let i = 0; i < 6; i++) st(pAcc, i, 0);
  for (let k = N - 2; k >= 0; k--) {
    const T = pTab + (slotOf(pSlot, k + 1) << 6);
    const dt = ld(T, 0), phi = ld(T, 1);
    if (!gainStepAt(pPf, pPp, pPs, k, dt, phi, pG)) {
      failedAt = k + 1;
      return false;
    }
    const used = ld(pUse, k) != 0;
    axisStepAt(pXf0, pXs0, k, pG, T, q, used ? ld(pZ0, k) : NaN, ld(pR, k), rScale, pOut0, pAcc);
    if (two) axisStepAt(pXf1, pXs1, k, pG, T, q, used ? ld(pZ1, k) : NaN, ld(pR, k), rScale, pOut1, pAcc + 24);
  }
  return true;
}

function gainStepAt(pPf: usize, pPp: usize, pPs: usize, k: i32, dt: f64, phi: f64, pG: usize): bool {
  const ok = 6 * k, oj = ok + 6;
  const p00 = ld(pPf, ok), p01 = ld(pPf, ok + 1), p02 = ld(pPf, ok + 2), p11 = ld(pPf, ok + 3), p12 = ld(pPf, ok + 4), p22 = ld(pPf, ok + 5);
  const m00 = ld(pPp, oj), m01 = ld(pPp, oj + 1), m02 = ld(pPp, oj + 2), m11 = ld(pPp, oj + 3), m12 = ld(pPp, oj + 4), m22 = ld(pPp, oj + 5);
  const s00 = ld(pPs, oj), s01 = ld(pPs, oj + 1), s02 = ld(pPs, oj + 2), s11 = ld(pPs, oj + 3), s12 = ld(pPs, oj + 4), s22 = ld(pPs, oj + 5);
  // A = F Pₖ
  const a00 = p00 + dt * p01, a01 = p01 + dt * p11, a02 = p02 + dt * p12;
  const a10 = p01, a11 = p11, a12 = p12;
  const a20 = phi * p02, a21 = phi * p12, a22 = phi * p22;
  // Cholesky P⁻ = L Lᵀ
  const l00 = Math.sqrt(m00);
  const l10 = m01 / l00, l20 = m02 / l00;
  const l11 = Math.sqrt(m11 - l10 * l10);
  const l21 = (m12 - l20 * l10) / l11;
  const l22 = Math.sqrt(m22 - l20 * l20 - l21 * l21);
  if (!(l00 > 0 && l11 > 0 && l22 > 0)) return false;
  // Gᵀ = (P⁻)⁻¹ A column by column
  let y0 = a00 / l00, y1 = (a10 - l10 * y0) / l11, y2 = (a20 - l20 * y0 - l21 * y1) / l22;
  const t20 = y2 / l22, t10 = (y1 - l21 * t20) / l11, t00 = (y0 - l10 * t10 - l20 * t20) / l00;
  y0 = a01 / l00; y1 = (a11 - l10 * y0) / l11; y2 = (a21 - l20 * y0 - l21 * y1) / l22;
  const t21 = y2 / l22, t11 = (y1 - l21 * t21) / l11, t01 = (y0 - l10 * t11 - l20 * t21) / l00;
  y0 = a02 / l00; y1 = (a12 - l10 * y0) / l11; y2 = (a22 - l20 * y0 - l21 * y1) / l22;
  const t22 = y2 / l22, t12 = (y1 - l21 * t22) / l11, t02 = (y0 - l10 * t12 - l20 * t22) / l00;
  // Pˢₖ = Pₖ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ
  const d00 = s00 - m00, d01 = s01 - m01, d02 = s02 - m02, d11 = s11 - m11, d12 = s12 - m12, d22 = s22 - m22;
  const f00 = t00 * d00 + t10 * d01 + t20 * d02, f01 = t00 * d01 + t10 * d11 + t20 * d12, f02 = t00 * d02 + t10 * d12 + t20 * d22;
  const f10 = t01 * d00 + t11 * d01 + t21 * d02, f11 = t01 * d01 + t11 * d11 + t21 * d12, f12 = t01 * d02 + t11 * d12 + t21 * d22;
  const f20 = t02 * d00 + t12 * d01 + t22 * d02, f21 = t02 * d01 + t12 * d11 + t22 * d12, f22 = t02 * d02 + t12 * d12 + t22 * d22;
  const q00 = p00 + (f00 * t00 + f01 * t10 + f02 * t20);
  const q01 = p01 + (f00 * t01 + f01 * t11 + f02 * t21);
  const q02 = p02 + (f00 * t02 + f01 * t12 + f02 * t22);
  const q11 = p11 + (f10 * t01 + f11 * t11 + f12 * t21);
  const q12 = p12 + (f10 * t02 + f11 * t12 + f12 * t22);
  const q22 = p22 + (f20 * t02 + f21 * t12 + f22 * t22);
  st(pPs, ok, q00); st(pPs, ok + 1, q01); st(pPs, ok + 2, q02); st(pPs, ok + 3, q11); st(pPs, ok + 4, q12); st(pPs, ok + 5, q22);
  // C = Pˢₖ₊₁ Gᵀ (the elements the score reads)
  const c00 = s00 * t00 + s01 * t10 + s02 * t20, c01 = s00 * t01 + s01 * t11 + s02 * t21;
  const c10 = s01 * t00 + s11 * t10 + s12 * t20, c11 = s01 * t01 + s11 * t11 + s12 * t21;
  st(pG, 0, t00); st(pG, 1, t01); st(pG, 2, t02); st(pG, 3, t10); st(pG, 4, t11); st(pG, 5, t12); st(pG, 6, t20); st(pG, 7, t21); st(pG, 8, t22);
  st(pG, 9, s00 - 2 * (c00 + dt * c01) + (q00 + 2 * dt * q01 + dt * dt * q11));
  st(pG, 10, s01 - c01 - (c10 + dt * c11) + (q01 + dt * q11));
  st(pG, 11, s11 - 2 * c11 + q11);
  st(pG, 12, s02 * t02 + s12 * t12 + s22 * t22);
  st(pG, 13, s22);
  st(pG, 14, q22);
  st(pG, 15, q00 + 2 * q02 + q22);
  return true;
}

/** axisStep: xˢₖ of one axis and its terms of the score (acc: log q, log σ_b, log τ), the fix's at k (z NaN: none). */
function axisStepAt(pXf: usize, pXs: usize, k: i32, pG: usize, T: usize, q: f64, z: f64, rk: f64, rScale: f64, pOut: usize, pAcc: usize): void {
  const dt = ld(T, 0), phi = ld(T, 1), V = ld(T, 2), dphi = ld(T, 6), dV = ld(T, 7);
  const j = k + 1;
  const x0 = ld(pXf, 3 * k), x1 = ld(pXf, 3 * k + 1), x2 = ld(pXf, 3 * k + 2);
  const mj0 = ld(pXs, 3 * j), mj1 = ld(pXs, 3 * j + 1), mj2 = ld(pXs, 3 * j + 2);
  const dx0 = mj0 - (x0 + dt * x1), dx1 = mj1 - x1, dx2 = mj2 - phi * x2;
  const mk0 = x0 + (ld(pG, 0) * dx0 + ld(pG, 3) * dx1 + ld(pG, 6) * dx2);
  const mk1 = x1 + (ld(pG, 1) * dx0 + ld(pG, 4) * dx1 + ld(pG, 7) * dx2);
  const mk2 = x2 + (ld(pG, 2) * dx0 + ld(pG, 5) * dx1 + ld(pG, 8) * dx2);
  st(pXs, 3 * k, mk0); st(pXs, 3 * k + 1, mk1); st(pXs, 3 * k + 2, mk2);
  const ep = mj0 - (mk0 + dt * mk1), ev = mj1 - mk1;
  const M00 = ld(pG, 9) + ep * ep, M01 = ld(pG, 10) + ep * ev, M11 = ld(pG, 11) + ev * ev;
  const trQinvM = ((12 * M00) / (dt * dt * dt) - (12 * M01) / (dt * dt) + (4 * M11) / dt) / q;
  st(pAcc, 0, ld(pAcc, 0) - 1 + 0.5 * trQinvM);
  const A = ld(pG, 13) + mj2 * mj2, B = ld(pG, 12) + mj2 * mk2, Cc = ld(pG, 14) + mk2 * mk2;
  const E2 = A - 2 * phi * B + phi * phi * Cc;
  st(pAcc, 1, ld(pAcc, 1) - 1 + E2 / V);
  const dE2 = -2 * dphi * B + 2 * phi * dphi * Cc;
  st(pAcc, 2, ld(pAcc, 2) + 0.5 * (dV / V) * (E2 / V - 1) - (0.5 * dE2) / V);
  if (isFinite64(z)) {
    const res = z - mk0 - mk2;
    st(pOut, k, -0.5 + (0.5 * (res * res + ld(pG, 15))) / (rk * rScale));
  }
}
