/**
 * The WebAssembly kernels (src/estimation/ins/asm/ins-kernels.ts through
 * src/estimation/ins/kernels.ts) against the TypeScript ones (src/estimation/ins/rts.ts,
 * error-model.ts, scalar-update.ts): the same results bit for bit (Object.is)
 * - RTS step: seeded steps with covariances of mixed scales and a Φ with the error model's
 *   structure, a chain of steps fed back as the smoother feeds them, and a step whose P⁻ is not
 *   positive definite (both refuse and leave their outputs alone);
 * - filter: seeded runs of F from turning, accelerating attitudes → Φ, Qd, P ← ΦPΦᵀ + Qd, the
 *   accumulated transition, and scalar Joseph updates with the filter's measurement rows, in turn;
 * - whole IMU-aided sessions (every array of the result).
 * The build must have produced the module: the test fails if the TypeScript fallback is what loads,
 * since the speed figures in docs/performance.md depend on it.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { NE } from '../../src/estimation/ins/error-model.js';
import { E_A, E_BA, E_GM, E_P, E_V, fillErrorF, NE_PACKED, packPhi, packSym, PHI_COMPACT, type ErrorModelParams } from '../../src/estimation/ins/error-model.js';
import { insKernelKind, makeInsKernels, makeInsRtsKernel, preferInsKernels, type InsFilterKernel, type InsRtsKernel } from '../../src/estimation/ins/kernels.js';
import { quatFromEuler, quatRotateBody, quatToDcm } from '../../src/models/ins/attitude.js';
import { processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { Rng } from '../../src/simulate/rng.js';
import { phiOf, spd } from './matrices.js';
import { makeImuCase } from './helpers.js';

const n = NE;

/** Φ P Φᵀ + Q (plain loops): a P⁻ consistent with Pf and Φ. */
function predicted(Phi: Float64Array, Pf: Float64Array, q: number): Float64Array {
  const T = new Float64Array(n * n), Pm = new Float64Array(n * n);
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) for (let k = 0; k < n; k++) T[i * n + j] += Phi[i * n + k]! * Pf[k * n + j]!;
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) {
    for (let k = 0; k < n; k++) Pm[i * n + j] += T[i * n + k]! * Phi[j * n + k]!;
    if (i === j) Pm[i * n + j] += q;
  }
  return Pm;
}

function expectSame(a: Float64Array, b: Float64Array, what: string): void {
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) expect([what, i, a[i]]).toEqual([what, i, b[i]]);
}

const EM: ErrorModelParams = {
  accelNoiseDensity: 0.004, gyroNoiseDensity: 0.0004, accelBiasWalk: 2e-4, gyroBiasWalk: 2e-5,
  gmSigmaHM: 1.5, gmSigmaVM: 3, gmTauSec: 80, earthRateEnu: Float64Array.of(0, 5.5e-5, 4.6e-5),
};

const SCALES = [
  Array(n).fill(1),
  [3, 3, 5, 0.1, 0.1, 0.2, 1e-3, 1e-3, 5e-3, 0.05, 0.05, 0.05, 1e-4, 1e-4, 1e-4, 1.5, 1.5, 3],
];

function load(k: InsRtsKernel, Pf: Float64Array, Pm: Float64Array, Phi: Float64Array, Ps: Float64Array, dNext: Float64Array): void {
  k.Pf.set(Pf);
  k.Pm.set(Pm);
  k.Phi.set(Phi);
  k.Ps.set(Ps);
  k.dNext.set(dNext);
}

describe('WebAssembly kernels = TypeScript kernels, bit for bit', () => {
  afterAll(() => preferInsKernels('wasm'));

  it('the build produced the WebAssembly kernel and it loads', () => {
    expect(insKernelKind()).toBe('wasm');
    expect(makeInsRtsKernel().kind).toBe('wasm');
    expect(makeInsRtsKernel('js').kind).toBe('js');
    expect(makeInsKernels(EM).filter.kind).toBe('wasm');
    expect(makeInsKernels(EM, 'js').filter.kind).toBe('js');
  });

  it.each([1, 2, 3])('filter, seed %i: 400 steps of Φ, Qd, propagation, accumulation and scalar updates', (seed) => {
    const rng = new Rng(seed);
    const w = makeInsKernels(EM, 'wasm').filter, j = makeInsKernels(EM, 'js').filter;
    const P0 = spd(rng, SCALES[1]!);
    for (const k of [w, j]) {
      k.P.set(P0);
      k.dx.fill(0);
    }
    const q = new Float64Array(4), C = new Float64Array(9), fNav = new Float64Array(3);
    quatFromEuler(0.02, -0.03, rng.uniform(-3, 3), q, 0);
    let identity = true;
    for (let t = 0; t < 400; t++) {
      quatRotateBody(q, 0, 0.01 * rng.normal(), 0.01 * rng.normal(), 0.3 * rng.normal());
      quatToDcm(q, 0, C);
      for (let i = 0; i < 3; i++) fNav[i] = (i === 2 ? 9.81 : 0) + 2 * rng.normal();
      const dt = [0.1, 1, 0.01 * (1 + Math.floor(rng.uniform(0, 100)))][t % 3]!;
      for (const k of [w, j]) {
        fillErrorF(k.F, C, fNav, EM);
        k.discretize(dt);
        k.propagate();
        k.accumulate(identity);
      }
      identity = t % 5 === 4;
      expectSame(w.Phi, j.Phi, `Φ ${t}`);
      expectSame(w.Qd, j.Qd, `Qd ${t}`);
      expectSame(w.P, j.P, `P ${t}`);
      expectSame(w.PhiAcc, j.PhiAcc, `Φacc ${t}`);
      if (identity) {
        // an epoch: position fix rows with a lever arm, then a velocity row; the estimate reset after
        for (const k of [w, j]) k.dx.fill(0);
        for (let a = 0; a < 4; a++) {
          const h = new Float64Array(NE);
          if (a < 3) {
            h[E_P + a] = 1;
            h[E_GM + a] = 1;
            h[E_A + ((a + 1) % 3)] = 0.3 * rng.normal();
          } else {
            h[E_V + 1] = 1;
            h[E_BA] = 1e-3 * rng.normal();
          }
          const nu = 2 * rng.normal(), r = rng.uniform(0.01, 4);
          const S = [w, j].map((k) => {
            k.h.set(h);
            return k.scalarUpdate(nu, r);
          });
          expect(Object.is(S[0], S[1])).toBe(true);
          expectSame(w.dx, j.dx, `dx ${t} ${a}`);
          expectSame(w.P, j.P, `P after update ${t} ${a}`);
        }
      }
    }
  });

  it.each([0, 1])('200 seeded single steps, scale set %i', (si) => {
    const rng = new Rng(100 + si);
    const w = makeInsRtsKernel('wasm'), j = makeInsRtsKernel('js');
    for (let t = 0; t < 200; t++) {
      const Pf = spd(rng, SCALES[si]!), Ps = spd(rng, SCALES[si]!), Phi = phiOf(rng);
      const Pm = predicted(Phi, Pf, 1e-3 * rng.uniform(0.1, 10));
      const dNext = new Float64Array(n).map(() => rng.normal());
      load(w, Pf, Pm, Phi, Ps, dNext);
      load(j, Pf, Pm, Phi, Ps, dNext);
      expect(w.step()).toBe(true);
      expect(j.step()).toBe(true);
      expectSame(w.dx, j.dx, `dx ${t}`);
      expectSame(w.Ps, j.Ps, `Ps ${t}`);
    }
  });

  it('a chain of 500 steps with Ps and dx fed back, as the smoother runs it', () => {
    const rng = new Rng(7);
    const w = makeInsRtsKernel('wasm'), j = makeInsRtsKernel('js');
    const Ps0 = spd(rng, SCALES[1]!);
    w.Ps.set(Ps0);
    j.Ps.set(Ps0);
    w.dx.fill(0);
    j.dx.fill(0);
    for (let t = 0; t < 500; t++) {
      const Pf = spd(rng, SCALES[1]!), Phi = phiOf(rng);
      const Pm = predicted(Phi, Pf, 1e-4);
      const corr = new Float64Array(n).map(() => 0.01 * rng.normal());
      for (const k of [w, j]) {
        k.Pf.set(Pf);
        k.Pm.set(Pm);
        k.Phi.set(Phi);
        for (let i = 0; i < n; i++) k.dNext[i] = k.dx[i]! + corr[i]!;
        expect(k.step()).toBe(true);
      }
      expectSame(w.dx, j.dx, `dx ${t}`);
      expectSame(w.Ps, j.Ps, `Ps ${t}`);
    }
  });

  it('from the packed history: loadPf and stepPacked unpack as unpackSym and unpackPhi, and step alike', () => {
    const rng = new Rng(11);
    const w = makeInsRtsKernel('wasm'), j = makeInsRtsKernel('js');
    const K = 5;
    const hP = new Float64Array(K * NE_PACKED), hM = new Float64Array(K * NE_PACKED), hPhi = new Float64Array(K * PHI_COMPACT);
    for (let k = 0; k < K; k++) {
      const Pf = spd(rng, SCALES[1]!), Phi = phiOf(rng);
      packSym(Pf, hP, k * NE_PACKED);
      packSym(predicted(Phi, Pf, 1e-3), hM, k * NE_PACKED);
      packPhi(Phi, hPhi, k * PHI_COMPACT);
    }
    const Ps0 = spd(rng, SCALES[1]!);
    for (const k of [w, j]) {
      k.Ps.set(Ps0);
      k.Phi.fill(7); // stale values the unpacking must clear
    }
    for (let k = K - 2; k >= 0; k--) {
      for (const kk of [w, j]) {
        kk.loadPf(hP, k * NE_PACKED);
        kk.dNext.fill(0.1);
        expect(kk.stepPacked(hM, (k + 1) * NE_PACKED, hPhi, (k + 1) * PHI_COMPACT)).toBe(true);
      }
      expectSame(w.Pf, j.Pf, `Pf ${k}`);
      expectSame(w.Pm, j.Pm, `Pm ${k}`);
      expectSame(w.Phi, j.Phi, `Phi ${k}`);
      expectSame(w.Ps, j.Ps, `Ps ${k}`);
      expectSame(w.dx, j.dx, `dx ${k}`);
    }
  });

  it('P⁻ not positive definite: both refuse and leave Ps and dx as they were', () => {
    const rng = new Rng(9);
    const w = makeInsRtsKernel('wasm'), j = makeInsRtsKernel('js');
    const Pf = spd(rng, SCALES[0]!), Ps = spd(rng, SCALES[0]!), Phi = phiOf(rng);
    const Pm = predicted(Phi, Pf, 0);
    Pm[5 * n + 5] = -1;
    const dNext = new Float64Array(n).map(() => rng.normal());
    for (const k of [w, j]) {
      load(k, Pf, Pm, Phi, Ps, dNext);
      k.dx.fill(0.25);
      expect(k.step()).toBe(false);
      expectSame(k.Ps, Ps, `Ps ${k.kind}`);
      expect([...k.dx].every((v) => v === 0.25)).toBe(true);
    }
  });

  it('whole IMU-aided sessions (two seeded drives): every array of the result the same', async () => {
    for (const seed of [11, 23]) {
      const c = makeImuCase(seed, {}, {}, 'vehicle');
      preferInsKernels('js');
      const a = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x');
      preferInsKernels('wasm');
      const b = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x');
      let arrays = 0;
      for (const key of Object.keys(a) as Array<keyof typeof a>) {
        const va = a[key], vb = b[key];
        if (va instanceof Float64Array) {
          expectSame(va, vb as Float64Array, `${seed} ${String(key)}`);
          arrays++;
        }
      }
      expect(arrays).toBeGreaterThan(5);
      expect(JSON.stringify(b.outliers)).toBe(JSON.stringify(a.outliers));
    }
  }, 60_000);
});
