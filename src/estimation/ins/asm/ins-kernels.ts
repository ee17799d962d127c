/**
 * WebAssembly kernels of the 18-state IMU error-state filter and smoother (AssemblyScript; compiled
 * by `npm run build` to ins-kernels.wasm beside this file and in dist, see package.json
 * "build:wasm"). The same operations in the same order as the TypeScript kernels they stand for
 * (../rts.ts insRtsStep with ../../cholesky.ts; ../error-model.ts discretize, propagateCovariance,
 * leftMultiply, setFromIdentityProduct; ../scalar-update.ts scalarJosephUpdate), so the results are
 * the same bit for bit (test/imu/wasm-kernels.test.ts): WebAssembly has no fused multiply-add and its
 * f64 add, sub, mul, div and sqrt round as IEEE 754 does in JavaScript; exponentials and powers, whose
 * last bits depend on the library, are computed by the caller in JavaScript and passed in. The
 * 128-bit SIMD lanes each carry one of two independent sums (two columns, or two elements of a row),
 * never two halves of one sum, so no sum is reordered. Measured on 18×18 inputs: 27–29 µs an RTS step
 * in TypeScript, 8.6–8.8 µs here.
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
// packed inputs of the smoother (the filter history's layout, ../error-model.ts packSym and packPhi)
export const PK_F: i32 = 8 * NN + 54; // Pₖ⁺ packed (171)
export const PK_M: i32 = PK_F + 171; // P⁻ₖ₊₁ packed (171)
export const PK_PHI: i32 = PK_M + 171; // Φ compact (144)

// filter slots (offsets in doubles): F, Φ, Qd, P, Φ accumulated since the last epoch, scratch; vectors
const FB: i32 = 3200;
export const F_F: i32 = FB;
export const F_PHI: i32 = FB + NN;
export const F_QD: i32 = FB + 2 * NN;
export const F_P: i32 = FB + 3 * NN;
export const F_ACC: i32 = FB + 4 * NN;
const F_TMP: i32 = FB + 5 * NN;
const F_F2: i32 = FB + 6 * NN;
const F_F3: i32 = FB + 7 * NN;
const F_FQ: i32 = FB + 8 * NN;
export const F_H: i32 = FB + 9 * NN; // measurement row h (18)
export const F_DX: i32 = F_H + 18; // error-state estimate δx (18)
const F_W: i32 = F_H + 36;
const F_K: i32 = F_H + 54;
export const F_QC: i32 = F_H + 72; // diagonal of the continuous noise Qc (18)
// nonzero lists (bytes): per list 18 counts then 18×18 column indices
const NZ_BYTES: i32 = 6256 * 8;
const NZ_F: i32 = NZ_BYTES;
const NZ_F2: i32 = NZ_BYTES + 342;
const NZ_FQ: i32 = NZ_BYTES + 2 * 342;
const NZ_PHI: i32 = NZ_BYTES + 3 * 342;

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

// ---------------------------------------------------------------- filter kernels

@inline function cnt(nz: i32, i: i32): i32 {
  return <i32>load<u8>(nz + i);
}
@inline function idx(nz: i32, p: i32): i32 {
  return <i32>load<u8>(nz + 18 + p);
}

/** Column indices of the nonzeros of every row (as ../error-model.ts findNonzeros; NaN counts as nonzero). */
function findNonzeros(A: i32, nz: i32): void {
  for (let i = 0; i < n; i++) {
    const r = i * n;
    let c = 0;
    for (let k = 0; k < n; k++)
      if (ld(A + r + k) != 0) {
        store<u8>(nz + 18 + r + c, <u8>k);
        c++;
      }
    store<u8>(nz + i, <u8>c);
  }
}

/** C = A B over the nonzeros of A (sums over k increasing); lanes: two columns j. */
function mulSparseLeft(A: i32, nz: i32, B: i32, C: i32): void {
  for (let i = 0; i < n; i++) {
    const r = i * n;
    for (let j = 0; j < n; j += 2) sv(C + r + j, f64x2.splat(0));
    const c = cnt(nz, i);
    for (let m = 0; m < c; m++) {
      const k = idx(nz, r + m);
      const f = f64x2.splat(ld(A + r + k));
      const rk = B + k * n;
      for (let j = 0; j < n; j += 2) sv(C + r + j, f64x2.add(lv(C + r + j), f64x2.mul(f, lv(rk + j))));
    }
  }
}

/**
 * Φ and Qd (slots F_PHI, F_QD) for a step Δt = t from F (slot F_F) and the diagonal Qc (slot F_QC):
 * Φ = I + FΔt + ½F²Δt² + ⅙F³Δt³, Qd = QcΔt + ½(FQc + QcFᵀ)Δt² + ⅓FQcFᵀΔt³, the Gauss–Markov block
 * exactly: φ = phiGm, q = qGmH (east, north) and qGmV (up), both floored by the caller.
 */
export function discretize(t: f64, phiGm: f64, qGmH: f64, qGmV: f64): void {
  const t2 = t * t, t3 = t2 * t;
  findNonzeros(F_F, NZ_F);
  mulSparseLeft(F_F, NZ_F, F_F, F_F2);
  findNonzeros(F_F2, NZ_F2);
  mulSparseLeft(F_F2, NZ_F2, F_F, F_F3);
  const vt = f64x2.splat(t), vt2 = f64x2.splat(t2), vt3 = f64x2.splat(t3), half = f64x2.splat(0.5), six = f64x2.splat(6);
  for (let i = 0; i < NN; i += 2)
    sv(F_PHI + i, f64x2.add(f64x2.add(f64x2.mul(lv(F_F + i), vt), f64x2.mul(f64x2.mul(half, lv(F_F2 + i)), vt2)), f64x2.div(f64x2.mul(lv(F_F3 + i), vt3), six)));
  for (let i = 0; i < n; i++) st(F_PHI + i * n + i, ld(F_PHI + i * n + i) + 1);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) st(F_FQ + i * n + j, ld(F_F + i * n + j) * ld(F_QC + j));
  findNonzeros(F_FQ, NZ_FQ);
  for (let i = 0; i < n; i++) {
    const r = i * n;
    const c = cnt(NZ_FQ, i);
    for (let j = i; j < n; j++) {
      let fqf: f64 = 0;
      for (let m = 0; m < c; m++) {
        const k = idx(NZ_FQ, r + m);
        fqf += ld(F_FQ + r + k) * ld(F_F + j * n + k);
      }
      let v = 0.5 * (ld(F_FQ + r + j) + ld(F_FQ + j * n + i)) * t2 + (fqf * t3) / 3;
      if (i == j) v += ld(F_QC + i) * t;
      st(F_QD + r + j, v);
      st(F_QD + j * n + i, v);
    }
  }
  for (let i = 0; i < 3; i++) {
    const ii = 15 + i;
    for (let j = 0; j < n; j++) {
      st(F_PHI + ii * n + j, 0);
      st(F_PHI + j * n + ii, 0);
      st(F_QD + ii * n + j, 0);
      st(F_QD + j * n + ii, 0);
    }
    st(F_PHI + ii * n + ii, phiGm);
    st(F_QD + ii * n + ii, i < 2 ? qGmH : qGmV);
  }
}

/** P ← Φ P Φᵀ + Qd in place over the nonzeros of Φ, from the upper triangle (as propagateCovariance). */
export function propagate(): void {
  findNonzeros(F_PHI, NZ_PHI);
  mulSparseLeft(F_PHI, NZ_PHI, F_P, F_TMP);
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = i; j < n; j++) {
      const rj = j * n;
      const c = cnt(NZ_PHI, j);
      let acc = ld(F_QD + ri + j);
      for (let m = 0; m < c; m++) {
        const k = idx(NZ_PHI, rj + m);
        acc += ld(F_TMP + ri + k) * ld(F_PHI + rj + k);
      }
      st(F_P + ri + j, acc);
      st(F_P + rj + i, acc);
    }
  }
}

/** Φ_acc ← Φ Φ_acc (after propagate, with its nonzeros of Φ), or Φ_acc ← Φ when Φ_acc is the identity. */
export function accumulate(identity: i32): void {
  if (identity) {
    for (let i = 0; i < NN; i++) {
      const v = ld(F_PHI + i);
      st(F_ACC + i, v == 0 ? 0 : v);
    }
    return;
  }
  mulSparseLeft(F_PHI, NZ_PHI, F_ACC, F_TMP);
  for (let i = 0; i < NN; i += 2) sv(F_ACC + i, lv(F_TMP + i));
}

/**
 * Scalar Joseph update of δx (slot F_DX) and P with row h (slot F_H), innovation nu against the
 * nominal and variance r: ν' = nu − hᵀδx, then as scalarJosephUpdate. Returns S = hᵀPh + r.
 */
export function scalarUpdate(nu: f64, r: f64): f64 {
  let hx: f64 = 0;
  for (let i = 0; i < n; i++) hx += ld(F_H + i) * ld(F_DX + i);
  const nu2 = nu - hx;
  for (let i = 0; i < n; i++) st(F_W + i, 0);
  for (let j = 0; j < n; j++) {
    const hj = ld(F_H + j);
    if (hj == 0) continue;
    for (let i = 0; i < n; i++) st(F_W + i, ld(F_W + i) + ld(F_P + i * n + j) * hj);
  }
  let hph: f64 = 0;
  for (let i = 0; i < n; i++) hph += ld(F_H + i) * ld(F_W + i);
  const S = hph + r;
  for (let i = 0; i < n; i++) st(F_K + i, ld(F_W + i) / S);
  for (let i = 0; i < n; i++) st(F_DX + i, ld(F_DX + i) + ld(F_K + i) * nu2);
  for (let i = 0; i < n; i++) {
    const ki = ld(F_K + i), wi = ld(F_W + i);
    for (let j = i; j < n; j++) {
      const v = ld(F_P + i * n + j) - ki * ld(F_W + j) - wi * ld(F_K + j) + S * ki * ld(F_K + j);
      st(F_P + i * n + j, v);
      st(F_P + j * n + i, v);
    }
  }
  return S;
}

// ---------------------------------------------------------------- smoother inputs from the history

/** Symmetric 18×18 at A from its packed upper triangle at src (as unpackSym). */
function unpackSym(src: i32, A: i32): void {
  let m = src;
  for (let i = 0; i < n; i++)
    for (let j = i; j < n; j++) {
      const v = ld(m++);
      st(A + i * n + j, v);
      st(A + j * n + i, v);
    }
}

/** Pₖ⁺ (slot PF) from its packed form (slot PK_F). */
export function unpackPf(): void {
  unpackSym(PK_F, PF);
}

/** P⁻ₖ₊₁ and Φ from their packed forms (slots PK_M, PK_PHI; as unpackSym, unpackPhi), then rtsStep. */
export function unpackStep(): i32 {
  unpackSym(PK_M, PM);
  for (let i = 0; i < NN; i += 2) sv(PHI + i, f64x2.splat(0));
  let m = PK_PHI;
  for (let i = 0; i < 9; i++) for (let j = 0; j < 15; j++) st(PHI + i * n + j, ld(m++));
  for (let i = 9; i < n; i++) st(PHI + i * n + i, ld(m++));
  return rtsStep();
}
