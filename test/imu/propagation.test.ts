/**
 * Covariance propagation of the IMU error state (src/estimation/ins/error-model.ts):
 * 1. the nonzero-list kernels (discretize, propagateCovariance, leftMultiply, setFromIdentityProduct)
 *    equal the dense zero-skipping loops they replaced bit for bit (Object.is), over a seeded run of
 *    turning, accelerating attitudes with Earth rotation;
 * 2. the reduced-rate propagation the filter uses (mechanization at the IMU rate, Φ and Qd over
 *    intervals of 0.1 s or 1 s with F at the interval means of C_nb and f^n; Groves 2013 §14.2.4 —
 *    from memory) against propagation at every 100 Hz sample: over 60 s the position, velocity and
 *    attitude sigmas agree within 1% and the position–attitude cross-covariances within 1% of the
 *    product of their sigmas, also at 1 s through hard turns (tolerances chosen here: the
 *    interval-mean F is exact for constant C and f, and second order in their change over the step
 *    otherwise; measured worst cases: 0.1 s 7e-7 / 9e-7, 1 s 6e-5 / 9e-5, 1 s in hard turns
 *    1.4e-3 / 5.1e-3).
 */
import { describe, expect, it } from 'vitest';
import {
  discretize, E_A, E_P, E_V, fillErrorF, leftMultiply, makeDiscScratch, makeNonzeros, NE, propagateCovariance, setFromIdentityProduct, type ErrorModelParams,
} from '../../src/estimation/ins/error-model.js';
import { quatFromEuler, quatRotateBody, quatToDcm } from '../../src/models/ins/attitude.js';
import { Rng } from '../../src/simulate/rng.js';
import { discretizeDense, leftMultiplyDense, propagateCovarianceDense } from './reference-error-model.js';

const n = NE;
const em: ErrorModelParams = {
  accelNoiseDensity: 0.004, gyroNoiseDensity: 0.0004, accelBiasWalk: 2e-4, gyroBiasWalk: 2e-5,
  gmSigmaHM: 1.5, gmSigmaVM: 3, gmTauSec: 80, earthRateEnu: Float64Array.of(0, 5.5e-5, 4.6e-5),
};

/**
 * A seeded attitude and specific-force history at 100 Hz: a turning, pitching vehicle with varying
 * acceleration; `turn` scales the yaw rate (1: sd ≈ 0.03 rad/s; 15: sd ≈ 0.45 rad/s, hard urban turns
 * with up to ~4 m/s² of lateral specific force).
 */
function motion(seed: number, steps: number, turn = 1) {
  const rng = new Rng(seed);
  const q = new Float64Array(4);
  quatFromEuler(0.02, -0.03, rng.uniform(-3, 3), q, 0);
  const C: Float64Array[] = [], f: Float64Array[] = [];
  let wz = 0, ax = 0;
  for (let k = 0; k < steps; k++) {
    wz = 0.98 * wz + 0.02 * rng.normal() * 0.3 * turn;
    ax = 0.98 * ax + 0.02 * rng.normal() * 2;
    const c = new Float64Array(9);
    quatToDcm(q, 0, c);
    const fb = Float64Array.of(ax, 0.3 * wz * 10, 9.81 + 0.05 * rng.normal());
    C.push(c);
    f.push(Float64Array.of(c[0]! * fb[0]! + c[1]! * fb[1]! + c[2]! * fb[2]!, c[3]! * fb[0]! + c[4]! * fb[1]! + c[5]! * fb[2]!, c[6]! * fb[0]! + c[7]! * fb[1]! + c[8]! * fb[2]!));
    quatRotateBody(q, 0, 0.001 * rng.normal() * 0.01, 0.002 * rng.normal() * 0.01, wz * 0.01);
  }
  return { C, f };
}

function initialP(): Float64Array {
  const P = new Float64Array(n * n);
  const d = [4, 4, 9, 0.04, 0.04, 0.04, 1e-4, 1e-4, 3e-3, 0.01, 0.01, 0.01, 3.6e-5, 3.6e-5, 3.6e-5, 2.25, 2.25, 9];
  for (let i = 0; i < n; i++) P[i * n + i] = d[i]!;
  P[0 * n + 15] = P[15 * n + 0] = 1.5; // a GNSS update's correlation of position and fix error
  return P;
}

/** Propagate with steps of `every` samples (interval means of C and f), as the filter does; the kernels chosen by `dense`. */
function run(m: ReturnType<typeof motion>, every: number, dense: boolean) {
  const F = new Float64Array(n * n), Phi = new Float64Array(n * n), Qd = new Float64Array(n * n), tmp = new Float64Array(n * n);
  const s = makeDiscScratch(), nz = makeNonzeros();
  const P = initialP();
  const acc = new Float64Array(n * n);
  for (let i = 0; i < n; i++) acc[i * n + i] = 1;
  let first = true;
  const dt = 0.01;
  const sumC = new Float64Array(9), sumF = new Float64Array(3);
  let cnt = 0;
  for (let k = 0; k < m.C.length; k++) {
    for (let i = 0; i < 9; i++) sumC[i] += m.C[k]![i]! * dt;
    for (let i = 0; i < 3; i++) sumF[i] += m.f[k]![i]! * dt;
    if (++cnt < every) continue;
    const T = cnt * dt;
    fillErrorF(F, sumC.map((v) => v / T), sumF.map((v) => v / T), em);
    if (dense) {
      discretizeDense(F, T, em, Phi, Qd, s);
      propagateCovarianceDense(Phi, Qd, P, tmp);
      leftMultiplyDense(Phi, acc, tmp);
    } else {
      discretize(F, T, em, Phi, Qd, s);
      propagateCovariance(Phi, Qd, P, tmp, nz);
      if (first) setFromIdentityProduct(Phi, acc);
      else leftMultiply(Phi, acc, tmp, nz);
    }
    first = false;
    sumC.fill(0);
    sumF.fill(0);
    cnt = 0;
  }
  return { P, acc };
}

describe('IMU error-covariance propagation', () => {
  it('nonzero-list kernels = dense zero-skipping loops, bit for bit (3 seeds × 20 s at 0.1 s and at 0.01 s steps)', () => {
    for (const seed of [1, 2, 3]) {
      const m = motion(seed, 2000);
      for (const every of [10, 1]) {
        const a = run(m, every, false), b = run(m, every, true);
        for (let i = 0; i < n * n; i++) {
          if (!Object.is(a.P[i], b.P[i])) expect([seed, every, 'P', i, a.P[i]]).toEqual([seed, every, 'P', i, b.P[i]]);
          if (!Object.is(a.acc[i], b.acc[i])) expect([seed, every, 'Φ', i, a.acc[i]]).toEqual([seed, every, 'Φ', i, b.acc[i]]);
        }
      }
    }
  });

  // the filter's default step is 1 s (config imu.propagationStepSec); 0.1 s was the default before
  it.each([
    [10, 1],
    [100, 1],
    [100, 15],
  ])('steps of %i samples vs every 100 Hz sample over 60 s (turn scale %i): sigmas of position, velocity, attitude and position–attitude correlations within 1 per cent', (every, turn) => {
    for (const seed of [7, 8]) {
      const m = motion(seed, 6000, turn);
      const lo = run(m, every, false), hi = run(m, 1, false);
      for (const base of [E_P, E_V, E_A])
        for (let i = base; i < base + 3; i++) {
          const a = Math.sqrt(lo.P[i * n + i]!), b = Math.sqrt(hi.P[i * n + i]!);
          expect(Math.abs(a - b) / b).toBeLessThanOrEqual(0.01);
        }
      for (let i = E_P; i < E_P + 3; i++)
        for (let j = E_A; j < E_A + 3; j++) {
          const scale = Math.sqrt(hi.P[i * n + i]! * hi.P[j * n + j]!);
          expect(Math.abs(lo.P[i * n + j]! - hi.P[i * n + j]!) / scale).toBeLessThanOrEqual(1e-2);
        }
    }
  });
});
