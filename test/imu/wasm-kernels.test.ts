/**
 * The WebAssembly RTS step (src/estimation/ins/asm/ins-kernels.ts through
 * src/estimation/ins/rts-kernel.ts) against the TypeScript one (src/estimation/ins/rts.ts): the same
 * results bit for bit (Object.is) on seeded steps with covariances of mixed scales and a Φ with the
 * error model's structure, on a chain of steps fed back as the smoother feeds them, on a step whose
 * P⁻ is not positive definite (both refuse and leave their outputs alone), and over whole IMU-aided
 * sessions (every array of the result). The build must have produced the kernel: the test fails if
 * the TypeScript fallback is what loads, since the speed figures in README depend on it.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { NE } from '../../src/estimation/ins/error-model.js';
import { insRtsKernelKind, makeInsRtsKernel, preferInsRtsKernel, type InsRtsKernel } from '../../src/estimation/ins/rts-kernel.js';
import { processImuSession } from '../../src/session/imu-session.js';
import { Rng } from '../../src/simulate/rng.js';
import { makeImuCase } from './helpers.js';

const n = NE;

/** SPD A Aᵀ + εI with per-row scales of metres to micro-radians (like P). */
function spd(rng: Rng, scale: number[]): Float64Array {
  const A = new Float64Array(n * n).map(() => rng.normal());
  const P = new Float64Array(n * n);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = i === j ? 0.1 : 0;
      for (let k = 0; k < n; k++) s += A[i * n + k]! * A[j * n + k]!;
      P[i * n + j] = s * scale[i]! * scale[j]!;
    }
  return P;
}

function phiOf(rng: Rng): Float64Array {
  const F = new Float64Array(n * n);
  for (let i = 0; i < 9; i++) for (let j = 0; j < 15; j++) F[i * n + j] = (i === j ? 1 : 0) + (rng.next() < 0.3 ? 0 : 0.1 * rng.normal());
  for (let i = 9; i < n; i++) F[i * n + i] = i >= 15 ? 0.99 : 1;
  return F;
}

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

describe('WebAssembly RTS step = TypeScript RTS step, bit for bit', () => {
  afterAll(() => preferInsRtsKernel('wasm'));

  it('the build produced the WebAssembly kernel and it loads', () => {
    expect(insRtsKernelKind()).toBe('wasm');
    expect(makeInsRtsKernel().kind).toBe('wasm');
    expect(makeInsRtsKernel('js').kind).toBe('js');
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
      preferInsRtsKernel('js');
      const a = await processImuSession(c.series, c.imuPath, c.cfg, 'x');
      preferInsRtsKernel('wasm');
      const b = await processImuSession(c.series, c.imuPath, c.cfg, 'x');
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
