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

/**
 * The loop of forwardLogLik from epoch 0 (the prior in st) to N − 1; returns the sum, leaves the
 * last epoch's filtered state in st.
 */
export function run(N: i32, pSt: usize, pPar: usize, pTab: usize, pSlot: usize, pUse: usize, pZE: usize, pZN: usize, pZU: usize, pRE: usize, pRU: usize): f64 {
  const up = ld(pPar, 12) != 0;
  const thr1 = ld(pPar, 1), thr2 = ld(pPar, 2), thr3 = ld(pPar, 3);
  const e0 = ld(pPar, 4), e1 = ld(pPar, 5), e2 = ld(pPar, 6);
  const v0 = ld(pPar, 7), v1 = ld(pPar, 8), v2 = ld(pPar, 9);
  const sH = ld(pPar, 10), sU = ld(pPar, 11);
  let xe0 = ld(pSt, 0), xe1 = ld(pSt, 1), xe2 = ld(pSt, 2);
  let xn0 = ld(pSt, 3), xn1 = ld(pSt, 4), xn2 = ld(pSt, 5);
  let xu0 = ld(pSt, 6), xu1 = ld(pSt, 7), xu2 = ld(pSt, 8);
  let pe00 = ld(pSt, 9), pe01 = ld(pSt, 10), pe02 = ld(pSt, 11), pe11 = ld(pSt, 12), pe12 = ld(pSt, 13), pe22 = ld(pSt, 14);
  let pu00 = ld(pSt, 15), pu01 = ld(pSt, 16), pu02 = ld(pSt, 17), pu11 = ld(pSt, 18), pu12 = ld(pSt, 19), pu22 = ld(pSt, 20);
  let sum = ld(pSt, 21);
  for (let k: i32 = 0; k < N; k++) {
    if (k > 0) {
      const T = pTab + (<usize>load<i32>(pSlot + (<usize>k << 2)) * 36 << 3);
      {
        // east: x⁻ = F x, P⁻ = F P Fᵀ + Q (predict3p written out)
        const f00 = ld(T, 0), f01 = ld(T, 1), f02 = ld(T, 2), f10 = ld(T, 3), f11 = ld(T, 4), f12 = ld(T, 5), f20 = ld(T, 6), f21 = ld(T, 7), f22 = ld(T, 8);
        const x0 = xe0, x1 = xe1, x2 = xe2;
        const p00 = pe00, p01 = pe01, p02 = pe02, p11 = pe11, p12 = pe12, p22 = pe22;
        xe0 = f00 * x0 + f01 * x1 + f02 * x2;
        xe1 = f10 * x0 + f11 * x1 + f12 * x2;
        xe2 = f20 * x0 + f21 * x1 + f22 * x2;
        const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
        const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
        const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
        pe00 = ld(T, 9) + a00 * f00 + a01 * f01 + a02 * f02;
        pe01 = ld(T, 10) + a00 * f10 + a01 * f11 + a02 * f12;
        pe02 = ld(T, 11) + a00 * f20 + a01 * f21 + a02 * f22;
        pe11 = ld(T, 13) + a10 * f10 + a11 * f11 + a12 * f12;
        pe12 = ld(T, 14) + a10 * f20 + a11 * f21 + a12 * f22;
        pe22 = ld(T, 17) + a20 * f20 + a21 * f21 + a22 * f22;
        // north: x⁻ = F x; P⁻ is east's
        const y0 = xn0, y1 = xn1, y2 = xn2;
        xn0 = f00 * y0 + f01 * y1 + f02 * y2;
        xn1 = f10 * y0 + f11 * y1 + f12 * y2;
        xn2 = f20 * y0 + f21 * y1 + f22 * y2;
      }
      if (up) {
        const V = T + (18 << 3);
        const f00 = ld(V, 0), f01 = ld(V, 1), f02 = ld(V, 2), f10 = ld(V, 3), f11 = ld(V, 4), f12 = ld(V, 5), f20 = ld(V, 6), f21 = ld(V, 7), f22 = ld(V, 8);
        const x0 = xu0, x1 = xu1, x2 = xu2;
        const p00 = pu00, p01 = pu01, p02 = pu02, p11 = pu11, p12 = pu12, p22 = pu22;
        xu0 = f00 * x0 + f01 * x1 + f02 * x2;
        xu1 = f10 * x0 + f11 * x1 + f12 * x2;
        xu2 = f20 * x0 + f21 * x1 + f22 * x2;
        const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
        const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
        const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
        pu00 = ld(V, 9) + a00 * f00 + a01 * f01 + a02 * f02;
        pu01 = ld(V, 10) + a00 * f10 + a01 * f11 + a02 * f12;
        pu02 = ld(V, 11) + a00 * f20 + a01 * f21 + a02 * f22;
        pu11 = ld(V, 13) + a10 * f10 + a11 * f11 + a12 * f12;
        pu12 = ld(V, 14) + a10 * f20 + a11 * f21 + a12 * f22;
        pu22 = ld(V, 17) + a20 * f20 + a21 * f21 + a22 * f22;
      }
    }
    const u = ld(pUse, k);
    if (u != 0) {
      let nis: f64 = 0;
      let dof: i32 = 0;
      let ll: f64 = 0;
      const ze = ld(pZE, k);
      let nuE: f64 = 0, nuN: f64 = 0, SH: f64 = NaN, rH: f64 = 0, wH0: f64 = 0, wH1: f64 = 0, wH2: f64 = 0;
      if (isFinite(ze)) {
        rH = ld(pRE, k) * sH;
        const hx = e0 * xe0 + e1 * xe1 + e2 * xe2;
        wH0 = pe00 * e0 + pe01 * e1 + pe02 * e2;
        wH1 = pe01 * e0 + pe11 * e1 + pe12 * e2;
        wH2 = pe02 * e0 + pe12 * e1 + pe22 * e2;
        SH = rH + e0 * wH0 + e1 * wH1 + e2 * wH2;
        nuE = ze - hx;
        nuN = ld(pZN, k) - (e0 * xn0 + e1 * xn1 + e2 * xn2);
        const lH = LOG_2PI + ln(SH);
        nis += (nuE * nuE) / SH;
        ll += lH;
        dof++;
        nis += (nuN * nuN) / SH;
        ll += lH;
        dof++;
      }
      const zu = up ? ld(pZU, k) : NaN;
      let nuU: f64 = 0, SU: f64 = NaN, rV: f64 = 0, wV0: f64 = 0, wV1: f64 = 0, wV2: f64 = 0;
      if (up && isFinite(zu)) {
        rV = ld(pRU, k) * sU;
        const hx = v0 * xu0 + v1 * xu1 + v2 * xu2;
        wV0 = pu00 * v0 + pu01 * v1 + pu02 * v2;
        wV1 = pu01 * v0 + pu11 * v1 + pu12 * v2;
        wV2 = pu02 * v0 + pu12 * v1 + pu22 * v2;
        SU = rV + v0 * wV0 + v1 * wV1 + v2 * wV2;
        nuU = zu - hx;
        nis += (nuU * nuU) / SU;
        ll += LOG_2PI + ln(SU);
        dof++;
      }
      if (dof != 0) {
        const thr = dof == 1 ? thr1 : dof == 2 ? thr2 : thr3;
        if (u == 2 || nis <= thr) {
          if (isFinite(SH)) {
            const w0 = wH0, w1 = wH1, w2 = wH2;
            const k0 = w0 / SH, k1 = w1 / SH, k2 = w2 / SH;
            xe0 += k0 * nuE;
            xe1 += k1 * nuE;
            xe2 += k2 * nuE;
            const c = e0 * w0 + e1 * w1 + e2 * w2 + rH;
            const n00 = pe00 - 2 * k0 * w0 + c * k0 * k0;
            const n01 = pe01 - k0 * w1 - w0 * k1 + c * k0 * k1;
            const n02 = pe02 - k0 * w2 - w0 * k2 + c * k0 * k2;
            const n11 = pe11 - 2 * k1 * w1 + c * k1 * k1;
            const n12 = pe12 - k1 * w2 - w1 * k2 + c * k1 * k2;
            const n22 = pe22 - 2 * k2 * w2 + c * k2 * k2;
            pe00 = n00; pe01 = n01; pe02 = n02; pe11 = n11; pe12 = n12; pe22 = n22;
            xn0 += k0 * nuN;
            xn1 += k1 * nuN;
            xn2 += k2 * nuN;
          }
          if (isFinite(SU)) {
            const w0 = wV0, w1 = wV1, w2 = wV2;
            const k0 = w0 / SU, k1 = w1 / SU, k2 = w2 / SU;
            xu0 += k0 * nuU;
            xu1 += k1 * nuU;
            xu2 += k2 * nuU;
            const c = v0 * w0 + v1 * w1 + v2 * w2 + rV;
            const n00 = pu00 - 2 * k0 * w0 + c * k0 * k0;
            const n01 = pu01 - k0 * w1 - w0 * k1 + c * k0 * k1;
            const n02 = pu02 - k0 * w2 - w0 * k2 + c * k0 * k2;
            const n11 = pu11 - 2 * k1 * w1 + c * k1 * k1;
            const n12 = pu12 - k1 * w2 - w1 * k2 + c * k1 * k2;
            const n22 = pu22 - 2 * k2 * w2 + c * k2 * k2;
            pu00 = n00; pu01 = n01; pu02 = n02; pu11 = n11; pu12 = n12; pu22 = n22;
          }
          sum += -0.5 * (ll + nis);
        } else {
          sum += -0.5 * (ll + thr);
        }
      }
    }
  }
  store<f64>(pSt, xe0); store<f64>(pSt + 8, xe1); store<f64>(pSt + 16, xe2);
  store<f64>(pSt + 24, xn0); store<f64>(pSt + 32, xn1); store<f64>(pSt + 40, xn2);
  store<f64>(pSt + 48, xu0); store<f64>(pSt + 56, xu1); store<f64>(pSt + 64, xu2);
  store<f64>(pSt + 72, pe00); store<f64>(pSt + 80, pe01); store<f64>(pSt + 88, pe02); store<f64>(pSt + 96, pe11); store<f64>(pSt + 104, pe12); store<f64>(pSt + 112, pe22);
  store<f64>(pSt + 120, pu00); store<f64>(pSt + 128, pu01); store<f64>(pSt + 136, pu02); store<f64>(pSt + 144, pu11); store<f64>(pSt + 152, pu12); store<f64>(pSt + 160, pu22);
  store<f64>(pSt + 168, sum);
  return sum;
}
