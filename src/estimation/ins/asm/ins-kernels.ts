/**
 * WebAssembly kernels of the 18-state IMU error-state smoother (AssemblyScript; compiled by
 * `npm run build` to ins-kernels.wasm beside this file and in dist, see package.json "build:wasm").
 * The same operations in the same order as the TypeScript kernels they stand for
 * (../rts.ts insRtsStep with ../../cholesky.ts), so the results are the same bit for bit
 * (test/imu/wasm-kernels.test.ts): WebAssembly has no fused multiply-add and its f64 add, sub, mul,
 * div and sqrt round as IEEE 754 does in JavaScript. The 128-bit SIMD lanes each carry one of two
 * independent sums (two columns, or two elements of a row), never two halves of one sum, so no sum is
 * reordered. Measured on 18×18 inputs: 27–29 µs a step in TypeScript, 8.6–8.8 µs here.
 * Memory: one 64 kB page, fixed slots of 18×18 doubles (offsets in doubles below); the caller writes
 * the inputs through Float64Array views of the exported memory and reads the outputs from them.
 * Sources: Rauch, Tung & Striebel (1965); Golub & Van Loan (2013) Alg. 4.2.1 (Cholesky).
 */
const n: i32 = 18;
const NN: i32 = 324;

// slots (offsets in doubles)
export const PF: i32 = 0; // Pₖ⁺
export const PM: i32 = NN; // P⁻ₖ₊₁
export const PHI: i32 = 2 * NN; // Φ (k → k+1)
export const PS: i32 = 3 * NN; // Pˢₖ₊₁ in, Pˢₖ out
export const DN: i32 = 4 * NN; // δxˢₖ₊₁ + δx̂ₖ₊₁ (18)
export const DX: i32 = 4 * NN + 18; // δxˢₖ out (18)
const L: i32 = 4 * NN + 36;
const GT: i32 = 5 * NN + 36;
const D: i32 = 6 * NN + 36;
const GD: i32 = 7 * NN + 36;
const ROW: i32 = 8 * NN + 36;

@inline function ld(i: i32): f64 {
  return load<f64>(i << 3);
}
@inline function st(i: i32, v: f64): void {
  store<f64>(i << 3, v);
}
@inline function lv(i: i32): v128 {
  return v128.load(i << 3);
}
@inline function sv(i: i32, v: v128): void {
  v128.store(i << 3, v);
}

/** P⁻ = L Lᵀ into the lower triangle of L (upper set to 0); false when not positive definite. */
function cholesky(): bool {
  for (let j = 0; j < n; j++) {
    let d = ld(PM + j * n + j);
    for (let k = 0; k < j; k++) d -= ld(L + j * n + k) * ld(L + j * n + k);
    if (!(d > 0)) return false;
    const ljj = Math.sqrt(d);
    st(L + j * n + j, ljj);
    for (let i = j + 1; i < n; i++) {
      let s = ld(PM + i * n + j);
      for (let k = 0; k < j; k++) s -= ld(L + i * n + k) * ld(L + j * n + k);
      st(L + i * n + j, s / ljj);
    }
    for (let i = 0; i < j; i++) st(L + i * n + j, 0);
  }
  return true;
}

/**
 * One RTS step: G = Pₖ⁺ Φᵀ (P⁻ₖ₊₁)⁻¹, δxˢₖ = G dNext, Pˢₖ = Pₖ⁺ + G (Pˢₖ₊₁ − P⁻ₖ₊₁) Gᵀ.
 * Returns 0 (slots PS and DX untouched) when P⁻ₖ₊₁ is not positive definite, else 1.
 */
export function rtsStep(): i32 {
  // Cholesky solve instead of an explicit inverse: P⁻ Gᵀ = Φ Pₖ⁺
  if (!cholesky()) return 0;
  // Gᵀ = Φ Pₖ⁺, row i = Σₘ Φᵢₘ Pₖ⁺[m,:] over the nonzero Φᵢₘ, m increasing; lanes: two columns
  for (let i = 0; i < n; i++) {
    const r = GT + i * n;
    for (let j = 0; j < n; j += 2) sv(r + j, f64x2.splat(0));
    for (let m = 0; m < n; m++) {
      const f = ld(PHI + i * n + m);
      if (f == 0) continue;
      const fv = f64x2.splat(f);
      const pr = PF + m * n;
      for (let j = 0; j < n; j += 2) sv(r + j, f64x2.add(lv(r + j), f64x2.mul(fv, lv(pr + j))));
    }
  }
  // forward and back substitution, two right-hand sides (columns c, c+1) at a time
  for (let c = 0; c < n; c += 2) {
    for (let i = 0; i < n; i++) {
      let s = lv(GT + i * n + c);
      for (let k = 0; k < i; k++) s = f64x2.sub(s, f64x2.mul(f64x2.splat(ld(L + i * n + k)), lv(GT + k * n + c)));
      sv(GT + i * n + c, f64x2.div(s, f64x2.splat(ld(L + i * n + i))));
    }
    for (let i = n - 1; i >= 0; i--) {
      let s = lv(GT + i * n + c);
      for (let k = i + 1; k < n; k++) s = f64x2.sub(s, f64x2.mul(f64x2.splat(ld(L + k * n + i)), lv(GT + k * n + c)));
      sv(GT + i * n + c, f64x2.div(s, f64x2.splat(ld(L + i * n + i))));
    }
  }
  // δxˢₖ = G dNext: dx[i] = Σⱼ Gᵀ[j][i] dNext[j], j increasing; lanes: two elements i
  for (let i = 0; i < n; i += 2) {
    let acc = f64x2.splat(0);
    for (let j = 0; j < n; j++) acc = f64x2.add(acc, f64x2.mul(lv(GT + j * n + i), f64x2.splat(ld(DN + j))));
    sv(DX + i, acc);
  }
  // D = Pˢₖ₊₁ − P⁻ₖ₊₁ (read before PS is overwritten below)
  for (let i = 0; i < NN; i += 2) sv(D + i, f64x2.sub(lv(PS + i), lv(PM + i)));
  // G D: GD[i][j] = Σₘ Gᵀ[m][i] D[m][j], m increasing; lanes: two columns j
  for (let i = 0; i < n; i++) {
    const r = GD + i * n;
    for (let j = 0; j < n; j += 2) sv(r + j, f64x2.splat(0));
    for (let m = 0; m < n; m++) {
      const g = f64x2.splat(ld(GT + m * n + i));
      const dr = D + m * n;
      for (let j = 0; j < n; j += 2) sv(r + j, f64x2.add(lv(r + j), f64x2.mul(g, lv(dr + j))));
    }
  }
  // Pˢₖ = Pₖ⁺ + G D Gᵀ from the upper triangle (symmetric by construction): row i of (G D) Gᵀ
  // accumulated over m in increasing order, the elements j ≥ i kept and mirrored
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < n; j += 2) sv(ROW + j, f64x2.splat(0));
    for (let m = 0; m < n; m++) {
      const g = f64x2.splat(ld(GD + i * n + m));
      const gr = GT + m * n;
      for (let j = 0; j < n; j += 2) sv(ROW + j, f64x2.add(lv(ROW + j), f64x2.mul(g, lv(gr + j))));
    }
    for (let j = i; j < n; j++) {
      const v = ld(PF + i * n + j) + ld(ROW + j);
      st(PS + i * n + j, v);
      st(PS + j * n + i, v);
    }
  }
  return 1;
}
