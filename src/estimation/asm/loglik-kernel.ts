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
