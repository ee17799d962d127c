/**
 * The 18-state error model of the IMU-aided filter (indirect, error-state EKF):
 *   δx = [δp^n (3), δv^n (3), φ (3, attitude error in the nav frame), δb_a (3), δb_g (3), b_GNSS (3)]
 * with C_nb,true = (I + [φ×]) Ĉ_nb, δ(·) = true − estimate, b_GNSS the first-order Gauss–Markov
 * fix error of the fixes-only model (the fix measures antenna position + b_GNSS + white noise).
 * Continuous error dynamics (local-level frame, flat-Earth, biases as random walks):
 *   δṗ = δv
 *   δv̇ = −2[ω_ie×] δv − [f^n×] φ − Ĉ_nb δb_a + (∂g/∂h) δp_u ê_u − Ĉ_nb w_a
 *   φ̇  = −[ω_ie×] φ − Ĉ_nb δb_g − Ĉ_nb w_g
 *   δḃ_a = w_ba,  δḃ_g = w_bg,  ḃ_GNSS = −b_GNSS/τ + w_b
 * Sources: Groves (2013) §14.2 (local-navigation-frame error equations, psi-angle form) and §14.2.4
 * (propagation at a lower rate than the mechanization); Titterton & Weston (2004) §12.3; Shin,
 * "Estimation Techniques for Low-Cost Inertial Navigation", UCGE report 20219 (2005), ch. 3 —
 * from memory. Discretization: Φ = I + FΔt + ½F²Δt² + ⅙F³Δt³, Qd = QcΔt + ½(FQc + QcFᵀ)Δt² + ⅓FQcFᵀΔt³
 * (series of the Van Loan integral), the Gauss–Markov block exactly (Brown & Hwang 2012 §2.9).
 */
import { FREE_AIR_GRADIENT_PER_M } from '../../models/ins/gravity.js';
import { gmPhi, gmQ } from '../../models/gauss-markov.js';
import { checkSize, sizeError } from './check-size.js';

export const E_P = 0;
export const E_V = 3;
export const E_A = 6;
export const E_BA = 9;
export const E_BG = 12;
export const E_GM = 15;
export const NE = 18;
/** Shape of an error-state covariance, for the step functions' size-check messages. */
export const NE_SHAPE = `${NE}×${NE}`;
/** Packed symmetric size n(n+1)/2. */
export const NE_PACKED = (NE * (NE + 1)) / 2;
/** Compact Φ: rows 0..8 × cols 0..14, then the diagonal of rows 9..17. */
export const PHI_COMPACT = 9 * 15 + 9;

export interface ErrorModelParams {
  /** White-noise densities: accelerometer (m/s²/√Hz), gyro (rad/s/√Hz). */
  accelNoiseDensity: number;
  gyroNoiseDensity: number;
  /** Bias random-walk densities (m/s²/√s, rad/s/√s). */
  accelBiasWalk: number;
  gyroBiasWalk: number;
  /** GNSS Gauss–Markov error: 1-sigma horizontal and vertical (m), correlation time (s). */
  gmSigmaHM: number;
  gmSigmaVM: number;
  gmTauSec: number;
  earthRateEnu: Float64Array;
}

/** Continuous-time error dynamics F (18×18, row-major, fully overwritten) about the nominal. */
export function fillErrorF(F: Float64Array, Cnb: Float64Array, fNav: Float64Array, mp: ErrorModelParams): void {
  checkSize('fillErrorF', 'F', F, NE * NE, NE_SHAPE);
  checkSize('fillErrorF', 'Cnb', Cnb, 9, '3×3');
  checkSize('fillErrorF', 'fNav', fNav, 3, 'ENU');
  F.fill(0);
  const n = NE;
  const w = mp.earthRateEnu;
  for (let i = 0; i < 3; i++) {
    // δṗ = δv
    F[(E_P + i) * n + E_V + i] = 1;
    for (let j = 0; j < 3; j++) {
      // δv̇ ∋ −Ĉ δb_a ;  φ̇ ∋ −Ĉ δb_g
      F[(E_V + i) * n + E_BA + j] = -Cnb[i * 3 + j]!;
      F[(E_A + i) * n + E_BG + j] = -Cnb[i * 3 + j]!;
    }
  }
  // δv̇ ∋ −[f^n×] φ, with −[a×] = [[0, a_z, −a_y], [−a_z, 0, a_x], [a_y, −a_x, 0]]
  const fe = fNav[0]!, fn = fNav[1]!, fu = fNav[2]!;
  F[(E_V + 0) * n + E_A + 1] = fu;
  F[(E_V + 0) * n + E_A + 2] = -fn;
  F[(E_V + 1) * n + E_A + 0] = -fu;
  F[(E_V + 1) * n + E_A + 2] = fe;
  F[(E_V + 2) * n + E_A + 0] = fn;
  F[(E_V + 2) * n + E_A + 1] = -fe;
  // δv̇ ∋ −2[ω_ie×] δv and φ̇ ∋ −[ω_ie×] φ
  const we = w[0]!, wn = w[1]!, wu = w[2]!;
  const skewNeg = [0, wu, -wn, -wu, 0, we, wn, -we, 0];
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) {
      F[(E_V + i) * n + E_V + j] = 2 * skewNeg[i * 3 + j]!;
      F[(E_A + i) * n + E_A + j] = skewNeg[i * 3 + j]!;
    }
  // vertical channel: g_u = −(γ0 − 3.086e-6 h)  ⇒  ∂g_u/∂h = +3.086e-6 s⁻²
  F[(E_V + 2) * n + E_P + 2] = FREE_AIR_GRADIENT_PER_M;
  // Gauss–Markov fix error: ḃ = −b/τ
  for (let i = 0; i < 3; i++) F[(E_GM + i) * n + E_GM + i] = -1 / mp.gmTauSec;
}

/**
 * Column indices of the nonzeros of every row of an 18×18 (row-major): row i has cnt[i] of them, in
 * increasing order, at idx[18 i ..]. The products below loop over these lists instead of testing
 * every element: the same terms, added in the same order, as a dense loop that skips zeros — so the
 * same result bit for bit, in about half the time (F has ~45 of 324 entries, Φ ~150).
 */
export interface Nonzeros {
  cnt: Uint8Array;
  idx: Uint8Array;
}

export function makeNonzeros(): Nonzeros {
  return { cnt: new Uint8Array(NE), idx: new Uint8Array(NE * NE) };
}

export function findNonzeros(A: Float64Array, nz: Nonzeros): void {
  checkSize('findNonzeros', 'A', A, NE * NE, NE_SHAPE);
  const { cnt, idx } = nz;
  for (let i = 0; i < NE; i++) {
    const r = i * NE;
    let c = 0;
    for (let k = 0; k < NE; k++) if (A[r + k] !== 0) idx[r + c++] = k;
    cnt[i] = c;
  }
}

/** C = A B (18×18, C fully overwritten) with the nonzeros of A listed in nzA; sums over k in increasing order. */
function mulSparseLeft(A: Float64Array, nzA: Nonzeros, B: Float64Array, C: Float64Array): void {
  const n = NE;
  const { cnt, idx } = nzA;
  C.fill(0);
  for (let i = 0; i < n; i++) {
    const r = i * n;
    const c = cnt[i]!;
    for (let m = 0; m < c; m++) {
      const k = idx[r + m]!;
      const f = A[r + k]!;
      const rk = k * n;
      for (let j = 0; j < n; j++) C[r + j] = C[r + j]! + f * B[rk + j]!;
    }
  }
}

export interface DiscScratch {
  F2: Float64Array;
  F3: Float64Array;
  FQ: Float64Array;
  qc: Float64Array;
  nzF: Nonzeros;
  nzF2: Nonzeros;
  nzFQ: Nonzeros;
}

export function makeDiscScratch(): DiscScratch {
  return { F2: new Float64Array(NE * NE), F3: new Float64Array(NE * NE), FQ: new Float64Array(NE * NE), qc: new Float64Array(NE), nzF: makeNonzeros(), nzF2: makeNonzeros(), nzFQ: makeNonzeros() };
}

/** Diagonal of the continuous noise Qc (the accelerometer/gyro white noise maps through Ĉ, which leaves an isotropic density unchanged). */
export function fillQcDiag(qc: Float64Array, mp: ErrorModelParams): void {
  for (let i = 0; i < 3; i++) {
    qc[E_P + i] = 0;
    qc[E_V + i] = mp.accelNoiseDensity ** 2;
    qc[E_A + i] = mp.gyroNoiseDensity ** 2;
    qc[E_BA + i] = mp.accelBiasWalk ** 2;
    qc[E_BG + i] = mp.gyroBiasWalk ** 2;
    qc[E_GM + i] = 0;
  }
}

/** Φ and Qd (18×18 each, fully overwritten) for a step Δt with the continuous F. */
export function discretize(F: Float64Array, dtSec: number, mp: ErrorModelParams, Phi: Float64Array, Qd: Float64Array, s: DiscScratch): void {
  checkSize('discretize', 'F', F, NE * NE, NE_SHAPE);
  checkSize('discretize', 'Phi', Phi, NE * NE, NE_SHAPE);
  checkSize('discretize', 'Qd', Qd, NE * NE, NE_SHAPE);
  const n = NE;
  const t = dtSec, t2 = t * t, t3 = t2 * t;
  const F2 = s.F2;
  // F² (F is sparse: its nonzeros only)
  findNonzeros(F, s.nzF);
  mulSparseLeft(F, s.nzF, F, F2);
  // F³ = F² F (the third hop carries gyro bias → attitude → velocity → position)
  const F3 = s.F3;
  findNonzeros(F2, s.nzF2);
  mulSparseLeft(F2, s.nzF2, F, F3);
  // Φ = I + FΔt + ½F²Δt² + ⅙F³Δt³
  for (let i = 0; i < n * n; i++) Phi[i] = F[i]! * t + 0.5 * F2[i]! * t2 + (F3[i]! * t3) / 6;
  for (let i = 0; i < n; i++) Phi[i * n + i] = Phi[i * n + i]! + 1;
  const qc = s.qc;
  fillQcDiag(qc, mp);
  const FQ = s.FQ;
  // F Qc (Qc diagonal)
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) FQ[i * n + j] = F[i * n + j]! * qc[j]!;
  // Qd = QcΔt + ½(FQc + QcFᵀ)Δt² + ⅓ F Qc Fᵀ Δt³
  findNonzeros(FQ, s.nzFQ);
  const { cnt, idx } = s.nzFQ;
  for (let i = 0; i < n; i++) {
    const r = i * n;
    const c = cnt[i]!;
    for (let j = i; j < n; j++) {
      let fqf = 0;
      for (let m = 0; m < c; m++) {
        const k = idx[r + m]!;
        fqf += FQ[r + k]! * F[j * n + k]!;
      }
      let v = 0.5 * (FQ[r + j]! + FQ[j * n + i]!) * t2 + (fqf * t3) / 3;
      if (i === j) v += qc[i]! * t;
      Qd[r + j] = v;
      Qd[j * n + i] = v;
    }
  }
  // Gauss–Markov block exactly: φ = e^{−Δt/τ}, q = σ²(1 − e^{−2Δt/τ}); it is decoupled from the rest
  for (let i = 0; i < 3; i++) {
    const ii = E_GM + i;
    const sigma = i < 2 ? mp.gmSigmaHM : mp.gmSigmaVM;
    for (let j = 0; j < n; j++) {
      Phi[ii * n + j] = 0;
      Phi[j * n + ii] = 0;
      Qd[ii * n + j] = 0;
      Qd[j * n + ii] = 0;
    }
    Phi[ii * n + ii] = gmPhi(dtSec, mp.gmTauSec);
    // a tiny floor keeps the smoother's predicted covariance positive definite when σ = 0
    Qd[ii * n + ii] = Math.max(gmQ(dtSec, { sigmaM: sigma, tauSec: mp.gmTauSec }), 1e-12);
  }
}

const defaultNz = makeNonzeros();

/**
 * P ← Φ P Φᵀ + Qd in place (18×18), over the nonzeros of Φ only; symmetrized from the upper triangle.
 * `nz` is scratch for Φ's nonzeros (a module-level one when omitted).
 */
export function propagateCovariance(Phi: Float64Array, Qd: Float64Array, P: Float64Array, tmp: Float64Array, nz: Nonzeros = defaultNz): void {
  checkSize('propagateCovariance', 'Phi', Phi, NE * NE, NE_SHAPE);
  checkSize('propagateCovariance', 'Qd', Qd, NE * NE, NE_SHAPE);
  checkSize('propagateCovariance', 'P', P, NE * NE, NE_SHAPE);
  checkSize('propagateCovariance', 'tmp', tmp, NE * NE, NE_SHAPE);
  const n = NE;
  findNonzeros(Phi, nz);
  // tmp = Φ P
  mulSparseLeft(Phi, nz, P, tmp);
  // P = (Φ P) Φᵀ + Qd; upper triangle mirrored, since rounding would otherwise drift P from symmetry
  const { cnt, idx } = nz;
  for (let i = 0; i < n; i++) {
    const ri = i * n;
    for (let j = i; j < n; j++) {
      const rj = j * n;
      const c = cnt[j]!;
      let acc = Qd[ri + j]!;
      for (let m = 0; m < c; m++) {
        const k = idx[rj + m]!;
        acc += tmp[ri + k]! * Phi[rj + k]!;
      }
      P[ri + j] = acc;
      P[rj + i] = acc;
    }
  }
}

/** A ← Φ A (18×18), for the transition accumulated between epochs; `nz` as in propagateCovariance (Φ's nonzeros found again when omitted). */
export function leftMultiply(Phi: Float64Array, A: Float64Array, tmp: Float64Array, nz?: Nonzeros): void {
  checkSize('leftMultiply', 'Phi', Phi, NE * NE, NE_SHAPE);
  checkSize('leftMultiply', 'A', A, NE * NE, NE_SHAPE);
  checkSize('leftMultiply', 'tmp', tmp, NE * NE, NE_SHAPE);
  if (!nz) {
    nz = defaultNz;
    findNonzeros(Phi, nz);
  }
  mulSparseLeft(Phi, nz, A, tmp);
  A.set(tmp);
}

/**
 * A ← Φ when A is the identity: the value of leftMultiply(Φ, I) exactly (a zero of Φ, skipped there,
 * leaves +0; every other element is Φᵢⱼ·1 plus zeros).
 */
export function setFromIdentityProduct(Phi: Float64Array, A: Float64Array): void {
  checkSize('setFromIdentityProduct', 'Phi', Phi, NE * NE, NE_SHAPE);
  checkSize('setFromIdentityProduct', 'A', A, NE * NE, NE_SHAPE);
  for (let i = 0; i < NE * NE; i++) {
    const v = Phi[i]!;
    A[i] = v === 0 ? 0 : v;
  }
}

/** Pack the upper triangle of a symmetric 18×18 into out[off..off+171). */
export function packSym(P: Float64Array, out: Float64Array, off: number): void {
  checkSize('packSym', 'P', P, NE * NE, NE_SHAPE);
  if (out.length < off + NE_PACKED) throw sizeError('packSym', 'out', out.length, off + NE_PACKED, `packed ${NE_SHAPE} at offset ${off}`, true);
  let m = off;
  for (let i = 0; i < NE; i++) for (let j = i; j < NE; j++) out[m++] = P[i * NE + j]!;
}

export function unpackSym(src: Float64Array, off: number, P: Float64Array): void {
  checkSize('unpackSym', 'P', P, NE * NE, NE_SHAPE);
  if (src.length < off + NE_PACKED) throw sizeError('unpackSym', 'src', src.length, off + NE_PACKED, `packed ${NE_SHAPE} at offset ${off}`, true);
  let m = off;
  for (let i = 0; i < NE; i++)
    for (let j = i; j < NE; j++) {
      const v = src[m++]!;
      P[i * NE + j] = v;
      P[j * NE + i] = v;
    }
}

/**
 * Pack Φ compactly: the error model only couples rows p, v, φ (0..8) to columns 0..14; the bias and
 * Gauss–Markov rows are diagonal, and so are all products of such matrices.
 */
export function packPhi(Phi: Float64Array, out: Float64Array, off: number): void {
  checkSize('packPhi', 'Phi', Phi, NE * NE, NE_SHAPE);
  if (out.length < off + PHI_COMPACT) throw sizeError('packPhi', 'out', out.length, off + PHI_COMPACT, `compact Φ at offset ${off}`, true);
  let m = off;
  for (let i = 0; i < 9; i++) for (let j = 0; j < 15; j++) out[m++] = Phi[i * NE + j]!;
  for (let i = 9; i < NE; i++) out[m++] = Phi[i * NE + i]!;
}

export function unpackPhi(src: Float64Array, off: number, Phi: Float64Array): void {
  checkSize('unpackPhi', 'Phi', Phi, NE * NE, NE_SHAPE);
  if (src.length < off + PHI_COMPACT) throw sizeError('unpackPhi', 'src', src.length, off + PHI_COMPACT, `compact Φ at offset ${off}`, true);
  Phi.fill(0);
  let m = off;
  for (let i = 0; i < 9; i++) for (let j = 0; j < 15; j++) Phi[i * NE + j] = src[m++]!;
  for (let i = 9; i < NE; i++) Phi[i * NE + i] = src[m++]!;
}
