/**
 * Kalman kernels (src/estimation/kalman.ts) and the CV motion block (src/models/motion.ts):
 * steady-state gains against the alpha–beta closed forms, and the Joseph update against the
 * textbook form computed with ml-matrix.
 * Sources: Kalata, "The tracking index: a generalized parameter for α-β and α-β-γ target trackers",
 * IEEE Trans. AES-20(2):174–182 (1984); Bar-Shalom, Li, Kirubarajan, "Estimation with Applications
 * to Tracking and Navigation" (2001) §6.5; values in test/reference/reference-values.md.
 */
import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { innovation, makeScratch, predict, updateJoseph } from '../../src/estimation/kalman.js';
import { fillMotionQ } from '../../src/models/motion.js';
import { Rng } from '../../src/simulate/rng.js';

/** Iterate predict → innovation → Joseph update with a position fix until the gain stops changing. */
function steadyGain(F: Float64Array, Q: Float64Array, r: number): { K: number[]; iterations: number } {
  const n = 2;
  const s = makeScratch(n);
  const h = Float64Array.of(1, 0);
  const x = new Float64Array(n);
  const P = Float64Array.of(1e6, 0, 0, 1e6);
  const out = new Float64Array(1);
  let K = [NaN, NaN];
  for (let it = 1; it <= 5000; it++) {
    predict(n, F, Q, x, 0, P, 0, x, 0, P, 0, s);
    const nu = innovation(n, h, 0, r, x, 0, P, 0, s, out);
    const S = out[0]!;
    const Knew = [s.w[0]! / S, s.w[1]! / S];
    updateJoseph(n, h, nu, S, r, x, 0, P, 0, s);
    if (Math.abs(Knew[0]! - K[0]!) < 1e-15 && Math.abs(Knew[1]! - K[1]!) < 1e-15) return { K: Knew, iterations: it };
    K = Knew;
  }
  return { K, iterations: Infinity };
}

describe('steady-state CV filter = alpha–beta filter (discrete white-noise acceleration)', () => {
  // [λ, α, β]: Kalata 1984 / Bar-Shalom et al. 2001 §6.5, table in reference-values.md; tol 1e-8
  const TABLE: Array<[number, number, number]> = [
    [0.5, 0.6283734572, 0.3048058984],
    [1, 0.75, 0.5],
    [2, 0.8541019662, 0.7639320225],
    [4, 0.9282032303, 1.0717967697],
  ];
  const TOL = 1e-8;
  // a non-unit step and noise so that K₂ = β/T and λ = σw T²/σv are really exercised
  const T = 0.5;
  const sigmaV = 2;
  it.each(TABLE)('λ = %f → α = %f, β = %f (Kalata 1984; tol 1e-8)', (lambda, alpha, beta) => {
    const sigmaW = (lambda * sigmaV) / (T * T);
    const q = sigmaW * sigmaW;
    const F = Float64Array.of(1, T, 0, 1);
    // discrete white-noise acceleration: Q = σw² [[T⁴/4, T³/2], [T³/2, T²]]
    const Q = Float64Array.of((q * T ** 4) / 4, (q * T ** 3) / 2, (q * T ** 3) / 2, q * T * T);
    const { K, iterations } = steadyGain(F, Q, sigmaV * sigmaV);
    expect(iterations).toBeLessThan(5000);
    expect(Math.abs(K[0]! - alpha)).toBeLessThan(TOL);
    expect(Math.abs(K[1]! * T - beta)).toBeLessThan(TOL);
    // identity λ² = β²/(1 − α) (Kalata 1984), on the filter's own gains; tol 1e-7 (derived)
    expect(Math.abs((K[1]! * T) ** 2 / (1 - K[0]!) - lambda * lambda)).toBeLessThan(1e-7 * Math.max(1, lambda * lambda));
  });
  it('the closed form itself reproduces the table (reference-values.md formulas; tol 1e-10)', () => {
    for (const [l, a, b] of TABLE) {
      const s = Math.sqrt(l * l + 8 * l);
      expect(Math.abs(-(l * l + 8 * l - (l + 4) * s) / 8 - a)).toBeLessThan(1e-10);
      expect(Math.abs((l * l + 4 * l - l * s) / 4 - b)).toBeLessThan(1e-10);
    }
  });
});

describe('steady-state CV filter, continuous white-noise acceleration (motion.ts Q)', () => {
  it('λc = √(q T³)/σv = 1 → α = 0.7567381983, β = 0.4932157760 (derived, reference-values.md; tol 1e-8)', () => {
    const T = 0.5;
    const sigmaV = 2;
    const q = (sigmaV * sigmaV) / T ** 3; // λc = 1
    const F = Float64Array.of(1, T, 0, 1);
    const Q = new Float64Array(4);
    fillMotionQ('cv', T, q, Q, 2);
    const { K, iterations } = steadyGain(F, Q, sigmaV * sigmaV);
    expect(iterations).toBeLessThan(5000);
    expect(Math.abs(K[0]! - 0.7567381983)).toBeLessThan(1e-8);
    expect(Math.abs(K[1]! * T - 0.493215776)).toBeLessThan(1e-8);
    // the steady-state Riccati relation 6α² + 6αβ + β² − 12β = 0 (derived; tol 1e-9)
    const a = K[0]!, b = K[1]! * T;
    expect(Math.abs(6 * a * a + 6 * a * b + b * b - 12 * b)).toBeLessThan(1e-9);
  });
});

// ---- random SPD matrices and the textbook forms with ml-matrix ----

function randomSpd(rng: Rng, n: number, scale = 1): Matrix {
  const A = new Matrix(n, n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A.set(i, j, rng.normal());
  // A Aᵀ + n·I: well conditioned, positive definite
  return A.mmul(A.transpose()).add(Matrix.eye(n).mul(0.5)).mul(scale);
}
const flat = (M: Matrix) => Float64Array.from(M.to1DArray());
// ml-matrix arithmetic methods work in place: clone before abs()
const maxAbs = (M: Matrix) => M.clone().abs().max();

describe('predict and innovation against the textbook forms (ml-matrix)', () => {
  it.each([2, 3, 4, 6])('n = %d: x⁻ = F x, P⁻ = F P Fᵀ + Q, ν = z − h x⁻, S = h P⁻ hᵀ + r (tol 1e-13 relative)', (n) => {
    const rng = new Rng(100 + n);
    const F = new Matrix(n, n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) F.set(i, j, rng.normal());
    const P = randomSpd(rng, n, 3);
    const Q = randomSpd(rng, n, 0.1);
    const x = Matrix.columnVector(Array.from({ length: n }, () => rng.normal() * 10));
    const s = makeScratch(n);
    // in and out in one buffer at different offsets, as the forward filter uses it
    const xb = new Float64Array(2 * n);
    const Pb = new Float64Array(2 * n * n);
    xb.set(x.to1DArray(), 0);
    Pb.set(P.to1DArray(), 0);
    predict(n, flat(F), flat(Q), xb, 0, Pb, 0, xb, n, Pb, n * n, s);
    const xr = F.mmul(x);
    const Pr = F.mmul(P).mmul(F.transpose()).add(Q);
    const tolP = 1e-13 * maxAbs(Pr);
    for (let i = 0; i < n; i++) {
      expect(Math.abs(xb[n + i]! - xr.get(i, 0))).toBeLessThan(1e-13 * maxAbs(xr));
      for (let j = 0; j < n; j++) {
        expect(Math.abs(Pb[n * n + i * n + j]! - Pr.get(i, j))).toBeLessThan(tolP);
        expect(Pb[n * n + i * n + j]).toBe(Pb[n * n + j * n + i]); // symmetrized
      }
    }
    // the input block is untouched
    expect(Array.from(xb.subarray(0, n))).toEqual(x.to1DArray());
    const h = Matrix.rowVector(Array.from({ length: n }, () => rng.normal()));
    const z = 3.5;
    const r = 0.7;
    const out = new Float64Array(1);
    const nu = innovation(n, flat(h), z, r, xb, n, Pb, n * n, s, out);
    const Sr = h.mmul(Pr).mmul(h.transpose()).get(0, 0) + r;
    expect(Math.abs(nu - (z - h.mmul(xr).get(0, 0)))).toBeLessThan(1e-12 * maxAbs(xr) * maxAbs(h) * n);
    expect(Math.abs(out[0]! - Sr)).toBeLessThan(1e-13 * Sr * n);
    const PhT = Pr.mmul(h.transpose());
    for (let i = 0; i < n; i++) expect(Math.abs(s.w[i]! - PhT.get(i, 0))).toBeLessThan(1e-13 * maxAbs(PhT) * n);
  });
});

describe('Joseph-form update (Bucy & Joseph 1968; Grewal & Andrews 2015 §6.2)', () => {
  const cases = [2, 3, 4, 5, 6].flatMap((n) => [1, 2, 3].map((rep) => [n, rep] as [number, number]));
  it.each(cases)('n = %d (case %d): equals (I − K h) P for the optimal gain, to 1e-12, and is symmetric', (n, rep) => {
    const rng = new Rng(1000 * n + rep);
    const P = randomSpd(rng, n, rng.uniform(0.1, 100));
    const h = Matrix.rowVector(Array.from({ length: n }, () => rng.normal()));
    const r = rng.uniform(0.01, 10);
    const x = Matrix.columnVector(Array.from({ length: n }, () => rng.normal()));
    const z = rng.normal() * 5;
    const s = makeScratch(n);
    const xb = flat(x);
    const Pb = flat(P);
    const out = new Float64Array(1);
    const nu = innovation(n, flat(h), z, r, xb, 0, Pb, 0, s, out);
    updateJoseph(n, flat(h), nu, out[0]!, r, xb, 0, Pb, 0, s);
    // textbook: K = P hᵀ (h P hᵀ + r)⁻¹, x⁺ = x + K ν, P⁺ = (I − K h) P
    const S = h.mmul(P).mmul(h.transpose()).get(0, 0) + r;
    const K = P.mmul(h.transpose()).div(S);
    const xr = x.clone().add(K.clone().mul(z - h.mmul(x).get(0, 0)));
    const Pr = Matrix.eye(n).sub(K.mmul(h)).mmul(P);
    const scale = maxAbs(P);
    for (let i = 0; i < n; i++) {
      expect(Math.abs(xb[i]! - xr.get(i, 0))).toBeLessThan(1e-12 * Math.max(1, maxAbs(xr)));
      expect(Math.abs(s.v[i]! - K.get(i, 0))).toBeLessThan(1e-12 * Math.max(1e-3, maxAbs(K)));
      for (let j = 0; j < n; j++) {
        expect(Math.abs(Pb[i * n + j]! - Pr.get(i, j))).toBeLessThan(1e-12 * scale);
        expect(Pb[i * n + j]).toBe(Pb[j * n + i]);
      }
    }
    // the updated covariance is still positive definite and no larger than the prior along h
    const Pm = Matrix.from1DArray(n, n, Array.from(Pb));
    const hPh = h.mmul(Pm).mmul(h.transpose()).get(0, 0);
    expect(hPh).toBeLessThan(S - r + 1e-12 * scale);
    expect(hPh).toBeGreaterThan(0);
  });

  it('with a suboptimal gain the Joseph form is (I − K h) P (I − K h)ᵀ + K r Kᵀ, not (I − K h) P (tol 1e-12)', () => {
    const n = 3;
    const rng = new Rng(77);
    const P = randomSpd(rng, n, 4);
    const h = Matrix.rowVector([1, 0, 1]);
    const r = 0.5;
    const s = makeScratch(n);
    const Pb = flat(P);
    const xb = new Float64Array(n);
    const out = new Float64Array(1);
    const nu = innovation(n, flat(h), 1, r, xb, 0, Pb, 0, s, out);
    const S = out[0]!;
    // deliberately wrong gain: scale P hᵀ by 0.6 (updateJoseph takes K = s.w / S)
    for (let i = 0; i < n; i++) s.w[i]! *= 0.6;
    updateJoseph(n, flat(h), nu, S, r, xb, 0, Pb, 0, s);
    const K = P.mmul(h.transpose()).mul(0.6 / S);
    const A = Matrix.eye(n).sub(K.mmul(h));
    const Pj = A.mmul(P).mmul(A.transpose()).add(K.mmul(K.transpose()).mul(r));
    const Ps = A.mmul(P);
    let dJ = 0, dS = 0;
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        dJ = Math.max(dJ, Math.abs(Pb[i * n + j]! - Pj.get(i, j)));
        dS = Math.max(dS, Math.abs(Pb[i * n + j]! - Ps.get(i, j)));
      }
    expect(dJ).toBeLessThan(1e-12 * maxAbs(P));
    expect(dS).toBeGreaterThan(1e-3); // the short form would be wrong here
  });
});
