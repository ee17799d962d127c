/**
 * WebAssembly form of the simulation smoother's per-epoch draw step for the three-state axis
 * (../../session/survey/posterior.ts sampleBackward, n = 3) with its normal generator
 * (../gaussian-rng.ts: the ziggurat of Marsaglia & Tsang, J. Statistical Software 5(8), 2000,
 * driven by mulberry32). AssemblyScript, compiled by `npm run build` to draws-kernel.wasm beside
 * this file and in dist. The same integer steps, the same floating-point operations in the same
 * order, and the exponential and logarithm of the rare slow path imported from JavaScript's Math,
 * so the same variates and the same draws bit for bit (test/estimation/draws-wasm.test.ts).
 * The tables KN (i32), WN and FN (f64) of 128 entries each are written by the caller at the
 * offsets given to setTables.
 */

// @ts-ignore: decorator
@external("env", "exp")
declare function jsExp(x: f64): f64;
// @ts-ignore: decorator
@external("env", "log")
declare function jsLog(x: f64): f64;

const R: f64 = 3.442619855899;

let s: u32 = 0x9e3779b9;
let pKN: usize = 0;
let pWN: usize = 0;
let pFN: usize = 0;

export function setTables(kn: usize, wn: usize, fn: usize): void {
  pKN = kn;
  pWN = wn;
  pFN = fn;
}

export function setState(v: u32): void {
  s = v;
}

export function getState(): u32 {
  return s;
}

/** mulberry32: a signed 32-bit integer (u32 arithmetic wraps as JavaScript's ToInt32 does). */
// @ts-ignore: decorator
@inline
function int32(): i32 {
  s = s + 0x6d2b79f5;
  let t: u32 = s;
  t = (t ^ (t >>> 15)) * (t | 1);
  t ^= t + (t ^ (t >>> 7)) * (t | 61);
  return <i32>(t ^ (t >>> 14));
}

// @ts-ignore: decorator
@inline
function uni(): f64 {
  return (<f64>(<u32>int32()) + 0.5) / 4294967296.0;
}

/** |hz| without the overflow of i32 at −2³¹ (JavaScript's Math.abs gives 2³¹ there). */
// @ts-ignore: decorator
@inline
function absI(hz: i32): i64 {
  return hz < 0 ? -(<i64>hz) : <i64>hz;
}

// @ts-ignore: decorator
@inline
function kn(i: i32): i64 {
  return <i64>load<i32>(pKN + (<usize>i << 2));
}

// @ts-ignore: decorator
@inline
function wn(i: i32): f64 {
  return load<f64>(pWN + (<usize>i << 3));
}

// @ts-ignore: decorator
@inline
function fnv(i: i32): f64 {
  return load<f64>(pFN + (<usize>i << 3));
}

/** GaussianSource.normal(), step for step. */
export function normal(): f64 {
  let hz = int32();
  let iz = hz & 127;
  if (absI(hz) < kn(iz)) return <f64>hz * wn(iz);
  for (;;) {
    if (iz == 0) {
      let x: f64 = 0, y: f64 = 0;
      do {
        x = -jsLog(uni()) / R;
        y = -jsLog(uni());
      } while (y + y < x * x);
      return hz > 0 ? R + x : -R - x;
    }
    const x = <f64>hz * wn(iz);
    if (fnv(iz) + uni() * (fnv(iz - 1) - fnv(iz)) < jsExp(-0.5 * x * x)) return x;
    hz = int32();
    iz = hz & 127;
    if (absI(hz) < kn(iz)) return <f64>hz * wn(iz);
  }
  // not reached: the loop returns
  return 0;
}

/**
 * D draws of one epoch on one axis: out = c + G xNext + L ξ per draw (xNext and out: 3 doubles a
 * draw), and the position (out's first state) into pos; ξ drawn draw by draw, state by state.
 */
export function step3(
  D: i32, pPrev: usize, pOut: usize, pPos: usize,
  g00: f64, g01: f64, g02: f64, g10: f64, g11: f64, g12: f64, g20: f64, g21: f64, g22: f64,
  c0: f64, c1: f64, c2: f64,
  l00: f64, l10: f64, l11: f64, l20: f64, l21: f64, l22: f64,
): void {
  for (let d = 0; d < D; d++) {
    const o = <usize>d * 24;
    const e0 = normal(), e1 = normal(), e2 = normal();
    const x0 = load<f64>(pPrev + o), x1 = load<f64>(pPrev + o + 8), x2 = load<f64>(pPrev + o + 16);
    const y0 = c0 + g00 * x0 + g01 * x1 + g02 * x2 + l00 * e0;
    store<f64>(pOut + o, y0);
    store<f64>(pOut + o + 8, c1 + g10 * x0 + g11 * x1 + g12 * x2 + l10 * e0 + l11 * e1);
    store<f64>(pOut + o + 16, c2 + g20 * x0 + g21 * x1 + g22 * x2 + l20 * e0 + l21 * e1 + l22 * e2);
    store<f64>(pPos + (<usize>d << 3), y0);
  }
}

/** D draws of a segment's last epoch from N(x, L Lᵀ) (gaussianDraw for n = 3), positions into pos. */
export function last3(D: i32, pOut: usize, pPos: usize, x0: f64, x1: f64, x2: f64, l00: f64, l10: f64, l11: f64, l20: f64, l21: f64, l22: f64): void {
  for (let d = 0; d < D; d++) {
    const o = <usize>d * 24;
    const e0 = normal(), e1 = normal(), e2 = normal();
    const y0 = x0 + l00 * e0;
    store<f64>(pOut + o, y0);
    store<f64>(pOut + o + 8, x1 + l10 * e0 + l11 * e1);
    store<f64>(pOut + o + 16, x2 + l20 * e0 + l21 * e1 + l22 * e2);
    store<f64>(pPos + (<usize>d << 3), y0);
  }
}
