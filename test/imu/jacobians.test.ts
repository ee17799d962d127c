/**
 * Analytic error-state Jacobians against numerical ones: the transition Φ of the error model
 * (accumulated over propagation steps as the filter does) against finite differences of the
 * nonlinear mechanization, and the measurement rows (GNSS with lever arm, non-holonomic body
 * velocity) against finite differences of the measurement functions. Also the O(n²) scalar Joseph
 * update against the O(n³) product form of src/estimation/kalman.ts.
 */
import { describe, expect, it } from 'vitest';
import { earthRateEnu } from '../../src/models/ins/gravity.js';
import { makeMechParams, makeMechScratch, mechanize, NAV_BA, NAV_BG, NAV_LEN, NAV_P, NAV_Q, NAV_V } from '../../src/models/ins/mechanization.js';
import { quatFromEuler, quatRotateNav, quatToDcm } from '../../src/models/ins/attitude.js';
import { discretize, fillErrorF, leftMultiply, makeDiscScratch, NE, propagateCovariance, type ErrorModelParams } from '../../src/estimation/ins/error-model.js';
import { bodyVelocityRow, gnssRow } from '../../src/estimation/ins/measurements.js';
import { applyCorrection } from '../../src/estimation/ins/correction.js';
import { scalarJosephUpdate, makeScalarScratch } from '../../src/estimation/ins/scalar-update.js';
import { innovation, makeScratch, updateJoseph } from '../../src/estimation/kalman.js';
import { Rng } from '../../src/simulate/rng.js';

const D = Math.PI / 180;

function nominal(): Float64Array {
  const x = new Float64Array(NAV_LEN);
  quatFromEuler(4 * D, -6 * D, 120 * D, x, NAV_Q);
  x.set([3, -2, 1], NAV_P);
  x.set([8, -5, 0.4], NAV_V);
  x.set([0.03, -0.02, 0.04], NAV_BA);
  x.set([0.002, -0.001, 0.003], NAV_BG);
  return x;
}

/** δx = b ⊖ a (15 states): position, velocity, attitude (nav frame), biases. */
function minus(b: Float64Array, a: Float64Array, out: Float64Array): void {
  for (let i = 0; i < 3; i++) {
    out[i] = b[NAV_P + i]! - a[NAV_P + i]!;
    out[3 + i] = b[NAV_V + i]! - a[NAV_V + i]!;
    out[9 + i] = b[NAV_BA + i]! - a[NAV_BA + i]!;
    out[12 + i] = b[NAV_BG + i]! - a[NAV_BG + i]!;
  }
  // q_err = q_b ⊗ q_a*  ⇒  φ ≈ 2 vec(q_err)
  const [aw, ax, ay, az] = [a[NAV_Q]!, -a[NAV_Q + 1]!, -a[NAV_Q + 2]!, -a[NAV_Q + 3]!];
  const [bw, bx, by, bz] = [b[NAV_Q]!, b[NAV_Q + 1]!, b[NAV_Q + 2]!, b[NAV_Q + 3]!];
  const w = bw * aw - bx * ax - by * ay - bz * az;
  const s = w < 0 ? -2 : 2;
  out[6] = s * (bw * ax + bx * aw + by * az - bz * ay);
  out[7] = s * (bw * ay - bx * az + by * aw + bz * ax);
  out[8] = s * (bw * az + bx * ay - by * ax + bz * aw);
}

describe('error-state transition Φ vs numerical Jacobian of the mechanization', () => {
  it('1 s of a turning, accelerating, tilted vehicle with Earth rotation (10 steps of 0.1 s)', () => {
    const lat = 48;
    const we = earthRateEnu(lat, new Float64Array(3));
    const mp = makeMechParams(lat, 300, true, we);
    const em: ErrorModelParams = { accelNoiseDensity: 0.004, gyroNoiseDensity: 4e-4, accelBiasWalk: 1e-4, gyroBiasWalk: 1e-5, gmSigmaHM: 1.5, gmSigmaVM: 3, gmTauSec: 60, earthRateEnu: we };
    const f = [1.2, 2.5, 9.6];
    const w = [0.02, -0.03, 0.25];
    const dt = 0.01;
    const steps = 100;
    const propagate = (x: Float64Array) => {
      const s = makeMechScratch();
      for (let k = 0; k < steps; k++) mechanize(x, f[0]!, f[1]!, f[2]!, w[0]!, w[1]!, w[2]!, dt, mp, s);
    };
    // analytic: F at the interval means, as the filter does, over 0.1 s steps
    const x = nominal();
    const s = makeMechScratch();
    const Phi = new Float64Array(NE * NE), Qd = new Float64Array(NE * NE), F = new Float64Array(NE * NE), tmp = new Float64Array(NE * NE);
    const acc = new Float64Array(NE * NE);
    for (let i = 0; i < NE; i++) acc[i * NE + i] = 1;
    const disc = makeDiscScratch();
    const sumC = new Float64Array(9), sumF = new Float64Array(3);
    for (let k = 0; k < steps; k++) {
      mechanize(x, f[0]!, f[1]!, f[2]!, w[0]!, w[1]!, w[2]!, dt, mp, s);
      for (let i = 0; i < 9; i++) sumC[i] += s.C[i]! * dt;
      for (let i = 0; i < 3; i++) sumF[i] += s.fNav[i]! * dt;
      if ((k + 1) % 10 === 0) {
        fillErrorF(F, sumC.map((v) => v / 0.1), sumF.map((v) => v / 0.1), em);
        discretize(F, 0.1, em, Phi, Qd, disc);
        leftMultiply(Phi, acc, tmp);
        sumC.fill(0);
        sumF.fill(0);
      }
    }
    // numerical: central differences of the mechanization through ⊕ and ⊖
    const x0 = nominal();
    const ref = nominal();
    propagate(ref);
    const eps = [1e-3, 1e-3, 1e-3, 1e-4, 1e-4, 1e-4, 1e-5, 1e-5, 1e-5, 1e-5, 1e-5, 1e-5, 1e-6, 1e-6, 1e-6];
    const dp = new Float64Array(15), dm = new Float64Array(15);
    let worst = 0;
    for (let j = 0; j < 15; j++) {
      const dx = new Float64Array(NE);
      const xp = x0.slice(), xm = x0.slice();
      dx[j] = eps[j]!;
      applyCorrection(xp, dx);
      dx[j] = -eps[j]!;
      applyCorrection(xm, dx);
      propagate(xp);
      propagate(xm);
      minus(xp, ref, dp);
      minus(xm, ref, dm);
      for (let i = 0; i < 15; i++) {
        const num = (dp[i]! - dm[i]!) / (2 * eps[j]!);
        const ana = acc[i * NE + j]!;
        const err = Math.abs(num - ana) / Math.max(1, Math.abs(num));
        worst = Math.max(worst, err);
        // tolerance: second-order discretization of a 0.1 s step (Δt² terms of the rotation over a turn)
        expect(err, `Φ[${i}][${j}] analytic ${ana} numerical ${num}`).toBeLessThan(2e-3);
      }
    }
    expect(worst).toBeGreaterThan(0);
  });

  it('vertical channel: ∂g/∂h couples δp_u into δv_u (+3.086e-6 s⁻²)', () => {
    const F = new Float64Array(NE * NE);
    const em: ErrorModelParams = { accelNoiseDensity: 1, gyroNoiseDensity: 1, accelBiasWalk: 1, gyroBiasWalk: 1, gmSigmaHM: 1, gmSigmaVM: 1, gmTauSec: 60, earthRateEnu: new Float64Array(3) };
    fillErrorF(F, Float64Array.of(1, 0, 0, 0, 1, 0, 0, 0, 1), Float64Array.of(0, 0, 9.8), em);
    const mp = makeMechParams(45, 0, false, new Float64Array(3));
    const s = makeMechScratch();
    const a = new Float64Array(NAV_LEN), b = new Float64Array(NAV_LEN);
    quatFromEuler(0, 0, 0, a, NAV_Q);
    quatFromEuler(0, 0, 0, b, NAV_Q);
    b[NAV_P + 2] = 100;
    mechanize(a, 0, 0, 9.8, 0, 0, 0, 1, mp, s);
    mechanize(b, 0, 0, 9.8, 0, 0, 0, 1, mp, s);
    expect((b[NAV_V + 2]! - a[NAV_V + 2]!) / 100).toBeCloseTo(F[5 * NE + 2]!, 10);
  });
});

describe('measurement rows vs numerical derivatives', () => {
  it('GNSS antenna position with lever arm: z = p + C_nb l', () => {
    const x = nominal();
    const l = [0.8, -0.3, 1.4];
    const C = new Float64Array(9);
    const ant = (y: Float64Array) => {
      quatToDcm(y, NAV_Q, C);
      return [0, 1, 2].map((i) => y[NAV_P + i]! + C[i * 3]! * l[0]! + C[i * 3 + 1]! * l[1]! + C[i * 3 + 2]! * l[2]!);
    };
    quatToDcm(x, NAV_Q, C);
    const u = Float64Array.from([0, 1, 2].map((i) => C[i * 3]! * l[0]! + C[i * 3 + 1]! * l[1]! + C[i * 3 + 2]! * l[2]!));
    const h = new Float64Array(NE);
    for (let a = 0; a < 3; a++) {
      gnssRow(a, u, h);
      for (let j = 0; j < 9; j++) {
        const dx = new Float64Array(NE);
        dx[j] = 1e-6;
        const xp = x.slice();
        applyCorrection(xp, dx);
        dx[j] = -1e-6;
        const xm = x.slice();
        applyCorrection(xm, dx);
        const num = (ant(xp)[a]! - ant(xm)[a]!) / 2e-6;
        expect(Math.abs(num - h[j]!), `H[${a}][${j}]`).toBeLessThan(1e-6);
      }
      expect(h[15 + a]).toBe(1);
    }
  });

  it('non-holonomic body velocity v^b = C_bn v^n (lateral and vertical rows)', () => {
    const x = nominal();
    const C = new Float64Array(9);
    const vb = (y: Float64Array, b: number) => {
      quatToDcm(y, NAV_Q, C);
      return C[b]! * y[NAV_V]! + C[3 + b]! * y[NAV_V + 1]! + C[6 + b]! * y[NAV_V + 2]!;
    };
    const h = new Float64Array(NE);
    for (const b of [1, 2]) {
      quatToDcm(x, NAV_Q, C);
      const pred = bodyVelocityRow(b, C, x, NAV_V, h);
      expect(pred).toBeCloseTo(vb(x, b), 12);
      for (let j = 0; j < 9; j++) {
        const dx = new Float64Array(NE);
        dx[j] = 1e-6;
        const xp = x.slice();
        applyCorrection(xp, dx);
        dx[j] = -1e-6;
        const xm = x.slice();
        applyCorrection(xm, dx);
        const num = (vb(xp, b) - vb(xm, b)) / 2e-6;
        expect(Math.abs(num - h[j]!), `H_nhc[${b}][${j}]`).toBeLessThan(1e-6);
      }
    }
  });
});

describe('O(n²) scalar Joseph update', () => {
  it('equals the O(n³) Joseph product of kalman.ts (random SPD P, sparse h)', () => {
    const rng = new Rng(5);
    const n = NE;
    const A = new Float64Array(n * n).map(() => rng.normal());
    const P = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) { let s = i === j ? 1 : 0; for (let k = 0; k < n; k++) s += A[i * n + k]! * A[j * n + k]!; P[i * n + j] = s; }
    const h = new Float64Array(n);
    h[0] = 1; h[7] = -0.4; h[15] = 1;
    const x1 = new Float64Array(n).map(() => rng.normal()), x2 = x1.slice();
    const P1 = P.slice(), P2 = P.slice();
    const ks = makeScratch(n), out = new Float64Array(1);
    const nu = innovation(n, h, 0.7, 0.25, x1, 0, P1, 0, ks, out);
    updateJoseph(n, h, nu, out[0]!, 0.25, x1, 0, P1, 0, ks);
    let hx = 0;
    for (let i = 0; i < n; i++) hx += h[i]! * x2[i]!;
    scalarJosephUpdate(n, h, 0.7 - hx, 0.25, x2, P2, makeScalarScratch(n));
    for (let i = 0; i < n * n; i++) expect(Math.abs(P1[i]! - P2[i]!)).toBeLessThan(1e-9);
    for (let i = 0; i < n; i++) expect(Math.abs(x1[i]! - x2[i]!)).toBeLessThan(1e-12);
  });
  it('keeps P positive definite under a propagated, many-update run', () => {
    const P = new Float64Array(NE * NE);
    for (let i = 0; i < NE; i++) P[i * NE + i] = 1;
    const Phi = new Float64Array(NE * NE), Q = new Float64Array(NE * NE), tmp = new Float64Array(NE * NE);
    for (let i = 0; i < NE; i++) { Phi[i * NE + i] = 1; Q[i * NE + i] = 1e-8; }
    const h = new Float64Array(NE); h[3] = 1;
    const x = new Float64Array(NE);
    const s = makeScalarScratch(NE);
    for (let k = 0; k < 10000; k++) { propagateCovariance(Phi, Q, P, tmp); scalarJosephUpdate(NE, h, 0, 1e-6, x, P, s); }
    for (let i = 0; i < NE; i++) expect(P[i * NE + i]!).toBeGreaterThan(0);
  });
});
