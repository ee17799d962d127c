/**
 * Exact discretization of the motion models (src/models/motion.ts), the Gauss–Markov fix error
 * (src/models/gauss-markov.ts) and their composition (src/models/axis-model.ts), against numerical
 * discretization of the continuous model ẋ = A x + L w, E[w(t) w(s)ᵀ] = Qc δ(t − s):
 *   Φ = e^{AΔt},  Q = ∫₀^Δt e^{Aτ} L Qc Lᵀ e^{Aᵀτ} dτ.
 * Two independent ways: Van Loan, "Computing integrals involving the matrix exponential", IEEE
 * Trans. Automatic Control 23(3):395–404 (1978), and composite Simpson integration of the integrand.
 * Stationary variance of the Gauss–Markov state: Brown & Hwang, "Introduction to Random Signals and
 * Applied Kalman Filtering", 4th ed. (2012), §2.9.
 * Tolerance 1e-9 relative per element (common practice for double-precision exp of small matrices).
 */
import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { fillMotionF, fillMotionQ, motionDim, type MotionKind } from '../../src/models/motion.js';
import { gmPhi, gmQ } from '../../src/models/gauss-markov.js';
import { makeAxisModel } from '../../src/models/axis-model.js';

/** Matrix exponential by scaling and squaring with a Taylor series (Moler & Van Loan 2003, method 3). */
function expm(A: Matrix): Matrix {
  const n = A.rows;
  let norm = 0;
  for (let i = 0; i < n; i++) {
    let s = 0;
    for (let j = 0; j < n; j++) s += Math.abs(A.get(i, j));
    norm = Math.max(norm, s);
  }
  const sq = Math.max(0, Math.ceil(Math.log2(norm / 0.25)));
  const B = A.clone().mul(2 ** -sq);
  let term = Matrix.eye(n);
  let E = Matrix.eye(n);
  for (let k = 1; k <= 30; k++) {
    term = term.mmul(B).mul(1 / k);
    E = E.add(term);
  }
  for (let i = 0; i < sq; i++) E = E.mmul(E);
  return E;
}

/** Van Loan (1978): expm([[−A, L Qc Lᵀ], [0, Aᵀ]] Δt) = [[·, E12], [0, E22]], Φ = E22ᵀ, Q = Φ E12. */
function vanLoan(A: Matrix, W: Matrix, dt: number): { Phi: Matrix; Q: Matrix } {
  const n = A.rows;
  const M = Matrix.zeros(2 * n, 2 * n);
  M.setSubMatrix(A.clone().mul(-dt), 0, 0);
  M.setSubMatrix(W.clone().mul(dt), 0, n);
  M.setSubMatrix(A.transpose().mul(dt), n, n);
  const E = expm(M);
  const Phi = E.subMatrix(n, 2 * n - 1, n, 2 * n - 1).transpose();
  const Q = Phi.mmul(E.subMatrix(0, n - 1, n, 2 * n - 1));
  return { Phi, Q };
}

/** Composite Simpson rule for ∫₀^Δt e^{Aτ} W e^{Aᵀτ} dτ with m (even) intervals. */
function simpson(A: Matrix, W: Matrix, dt: number, m: number): Matrix {
  const n = A.rows;
  let S = Matrix.zeros(n, n);
  const h = dt / m;
  for (let i = 0; i <= m; i++) {
    const e = expm(A.clone().mul(i * h));
    const w = i === 0 || i === m ? 1 : i % 2 ? 4 : 2;
    S = S.add(e.mmul(W).mmul(e.transpose()).mul((w * h) / 3));
  }
  return S;
}

/** Continuous model of one axis: kinematic chain driven at the highest derivative, optional GM error. */
function continuous(kind: MotionKind, q: number, gm: { sigmaM: number; tauSec: number } | null): { A: Matrix; W: Matrix } {
  const k = motionDim(kind);
  const n = k + (gm ? 1 : 0);
  const A = Matrix.zeros(n, n);
  const W = Matrix.zeros(n, n);
  for (let i = 0; i + 1 < k; i++) A.set(i, i + 1, 1);
  W.set(k - 1, k - 1, q);
  if (gm) {
    // ḃ = −b/τ + w, spectral density 2σ²/τ keeps Var(b) = σ² (Brown & Hwang §2.9)
    A.set(k, k, -1 / gm.tauSec);
    W.set(k, k, (2 * gm.sigmaM * gm.sigmaM) / gm.tauSec);
  }
  return { A, W };
}

function expectRelClose(got: ArrayLike<number>, want: Matrix, tol: number, what: string): void {
  const n = want.rows;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      const w = want.get(i, j);
      const g = got[i * n + j]!;
      if (w === 0) expect(Math.abs(g), `${what}[${i}][${j}]`).toBeLessThan(1e-300 + tol * 1e-6);
      else expect(Math.abs(g - w) / Math.abs(w), `${what}[${i}][${j}] = ${g} vs ${w}`).toBeLessThan(tol);
    }
}

const DTS = [0.01, 0.1, 1, 2.5, 10, 60];
const TOL = 1e-9;

describe('motion blocks: F = e^{AΔt} and Q by Van Loan (tol 1e-9 relative)', () => {
  const cases: Array<[MotionKind, number, number]> = [];
  for (const kind of ['cv', 'ca'] as const) for (const dt of DTS) cases.push([kind, dt, kind === 'cv' ? 0.7 : 0.03]);
  it.each(cases)('%s, Δt = %f s, q = %f', (kind, dt, q) => {
    const n = motionDim(kind);
    const { A, W } = continuous(kind, q, null);
    const { Phi, Q } = vanLoan(A, W, dt);
    const F = new Float64Array(n * n).fill(NaN);
    const Qd = new Float64Array(n * n).fill(NaN);
    fillMotionF(kind, dt, F, n);
    fillMotionQ(kind, dt, q, Qd, n);
    expectRelClose(F, Phi, TOL, 'F');
    expectRelClose(Qd, Q, TOL, 'Q');
  });
  it.each([['cv', 0.7], ['ca', 0.03]] as const)('%s: Van Loan and Simpson integration agree (cross-check of the reference; tol 1e-9)', (kind, q) => {
    const { A, W } = continuous(kind, q, null);
    const dt = 2.5;
    const v = vanLoan(A, W, dt).Q;
    const s = simpson(A, W, dt, 400);
    expectRelClose(Float64Array.from(s.to1DArray()), v, TOL, 'Simpson vs Van Loan');
  });
  it('motionDim: cv 2, ca 3', () => {
    expect(motionDim('cv')).toBe(2);
    expect(motionDim('ca')).toBe(3);
  });
});

describe('Gauss–Markov fix error (Brown & Hwang §2.9)', () => {
  const p = { sigmaM: 2.5, tauSec: 45 };
  it.each(DTS)('Δt = %f: φ = e^{−Δt/τ} and Var(w) = σ²(1 − φ²) by Van Loan (tol 1e-9 relative)', (dt) => {
    const A = new Matrix([[-1 / p.tauSec]]);
    const W = new Matrix([[(2 * p.sigmaM ** 2) / p.tauSec]]);
    const { Phi, Q } = vanLoan(A, W, dt);
    expect(Math.abs(gmPhi(dt, p.tauSec) / Phi.get(0, 0) - 1)).toBeLessThan(TOL);
    expect(Math.abs(gmQ(dt, p) / Q.get(0, 0) - 1)).toBeLessThan(TOL);
  });
  it('stationary variance σ² is preserved by any step sequence (Brown & Hwang; tol 1e-12 relative)', () => {
    let P = p.sigmaM ** 2;
    for (const dt of [0.2, 1, 1, 7, 0.05, 300, 3]) {
      const phi = gmPhi(dt, p.tauSec);
      P = phi * phi * P + gmQ(dt, p);
      expect(Math.abs(P / p.sigmaM ** 2 - 1)).toBeLessThan(1e-12);
    }
  });
  it('from zero variance it converges to σ² (tol 1e-12 relative)', () => {
    let P = 0;
    for (let k = 0; k < 2000; k++) {
      const phi = gmPhi(1, p.tauSec);
      P = phi * phi * P + gmQ(1, p);
    }
    expect(Math.abs(P / p.sigmaM ** 2 - 1)).toBeLessThan(1e-12);
  });
  it('keeps full precision for Δt ≪ τ: Var(w) = σ²(2x − 2x² + …), x = Δt/τ (derived; tol 1e-12 relative)', () => {
    const dt = 1e-9;
    const x = dt / p.tauSec;
    const series = p.sigmaM ** 2 * (2 * x - 2 * x * x + (4 / 3) * x ** 3);
    expect(Math.abs(gmQ(dt, p) / series - 1)).toBeLessThan(1e-12);
  });
});

describe('axis model = motion block ⊕ Gauss–Markov state (Van Loan on the composed model; tol 1e-9)', () => {
  const gm = { sigmaM: 3, tauSec: 120 };
  const cases: Array<[MotionKind, number]> = [];
  for (const kind of ['cv', 'ca'] as const) for (const dt of [0.1, 1, 30]) cases.push([kind, dt]);
  it.each(cases)('%s + GM, Δt = %f s', (kind, dt) => {
    const q = kind === 'cv' ? 0.4 : 0.02;
    const m = makeAxisModel({ motion: kind, q, gm });
    expect(m.n).toBe(motionDim(kind) + 1);
    expect(m.iBias).toBe(m.n - 1);
    // H = [1, 0, (0), 1]: the fix measures position plus the error
    expect(Array.from(m.h)).toEqual(kind === 'cv' ? [1, 0, 1] : [1, 0, 0, 1]);
    const { A, W } = continuous(kind, q, gm);
    const { Phi, Q } = vanLoan(A, W, dt);
    const F = new Float64Array(m.n * m.n).fill(NaN);
    const Qd = new Float64Array(m.n * m.n).fill(NaN);
    m.fillF(dt, F);
    m.fillQ(dt, Qd);
    expectRelClose(F, Phi, TOL, 'F');
    expectRelClose(Qd, Q, TOL, 'Q');
    // qScale multiplies the kinematic block only
    m.fillQ(dt, Qd, 3);
    const { Q: Q3 } = vanLoan(A, continuous(kind, 3 * q, gm).W, dt);
    expectRelClose(Qd, Q3, TOL, 'Q(qScale = 3)');
  });
  it('without a Gauss–Markov error (null, or σ = 0) the state is the motion block only', () => {
    expect(makeAxisModel({ motion: 'cv', q: 1, gm: null }).n).toBe(2);
    expect(makeAxisModel({ motion: 'ca', q: 1, gm: { sigmaM: 0, tauSec: 10 } }).n).toBe(3);
    expect(makeAxisModel({ motion: 'ca', q: 1, gm: null }).iBias).toBe(-1);
  });
});
