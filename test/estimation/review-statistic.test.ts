/**
 * The review statistic of src/estimation/review.ts against its formula evaluated with ml-matrix:
 * per measured axis ν = z − H xˢ, var(ν) = R − H Pˢ Hᵀ (floored at MIN_RESIDUAL_SHARE · R) for a
 * fix the smoother used, R + H Pˢ Hᵀ for one left out, T = Σ ν²/var(ν), dof = the axes measured
 * (de Jong 1988; de Jong & Penzer 1998, smoothed measurement disturbances; the floor is this
 * project's, see review.ts). Tolerance 1e-12 relative: T to T, ν to the larger of |z|, |H xˢ|.
 * Cases: every epoch of smoothed histories (used and left out), seeded random states, SPD
 * covariances and H rows for n = 3 and n = 4 models; and reviewStatisticsRange against
 * reviewStatistic epoch by epoch (the same arithmetic written out, so Object.is).
 */
import { describe, expect, it } from 'vitest';
import { Matrix } from 'ml-matrix';
import { makeAxisModel, type AxisModel } from '../../src/models/axis-model.js';
import { covIndex, covStride, forwardFilter } from '../../src/estimation/track-filter.js';
import { smoothInPlace } from '../../src/estimation/track-smoother.js';
import { MIN_RESIDUAL_SHARE, reviewStatistic, reviewStatisticsRange } from '../../src/estimation/review.js';
import { reviewThresholds } from '../../src/session/classify/review-decisions.js';
import { segmentCase } from '../helpers/history-compare.js';

/** Tolerance of the statistic against its formula, relative. */
const REL_TOL = 1e-12;

function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

/** Axes whose kept-fix variance took the floor (the random case must reach it). */
let floored = 0;

/** T, dof and the residuals of epoch k from the formula, with ml-matrix on the unpacked covariances. */
function formula(models: AxisModel[], x: Float64Array[], P: Float64Array[], k: number, z: Float64Array[], r: Float64Array[], used: boolean) {
  let T = 0, dof = 0;
  const nu: number[] = [], hx: number[] = [];
  models.forEach((m, a) => {
    const zk = z[a]![k]!;
    if (!Number.isFinite(zk)) {
      nu.push(NaN);
      hx.push(NaN);
      return;
    }
    const n = m.n, o = k * covStride(n);
    const H = new Matrix([Array.from(m.h)]);
    const xs = Matrix.columnVector(Array.from(x[a]!.subarray(k * n, k * n + n)));
    const Ps = Matrix.zeros(n, n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) Ps.set(i, j, P[a]![o + covIndex(n, i, j)]!);
    const Hx = H.mmul(xs).get(0, 0);
    const HPH = H.mmul(Ps).mmul(H.transpose()).get(0, 0);
    const rk = r[a]![k]!;
    const v = used ? Math.max(rk - HPH, MIN_RESIDUAL_SHARE * rk) : rk + HPH;
    if (used && rk - HPH < MIN_RESIDUAL_SHARE * rk) floored++;
    nu.push(zk - Hx);
    hx.push(Hx);
    T += (zk - Hx) ** 2 / v;
    dof++;
  });
  return { T, dof, nu, hx };
}

function expectFormula(models: AxisModel[], x: Float64Array[], P: Float64Array[], k: number, z: Float64Array[], r: Float64Array[], used: boolean, nuOut: Float64Array): void {
  const got = reviewStatistic(models, x, P, k, z, r, used, nuOut);
  const want = formula(models, x, P, k, z, r, used);
  expect(got.dof).toBe(want.dof);
  // T: 1e-12 relative
  expect(Math.abs(got.T - want.T)).toBeLessThanOrEqual(REL_TOL * Math.abs(want.T));
  for (let a = 0; a < models.length; a++) {
    if (Number.isNaN(want.nu[a]!)) {
      expect(nuOut[a]).toBeNaN();
      continue;
    }
    // ν: 1e-12 relative to the larger of |z|, |H xˢ|
    expect(Math.abs(nuOut[a]! - want.nu[a]!)).toBeLessThanOrEqual(REL_TOL * Math.max(Math.abs(z[a]![k]!), Math.abs(want.hx[a]!)));
  }
}

describe('reviewStatistic equals its formula', () => {
  it.each([
    ['vehicle', 5, 1, false],
    ['drone', 7, 5, false],
    ['vehicle', 1, 1, true],
  ] as const)('%s seed %i at %i Hz (no height: %s), every epoch of the smoothed history, used and left out', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const h = forwardFilter(models, data, opt);
    smoothInPlace(models, data, h);
    const nu = new Float64Array(models.length);
    for (let k = 0; k < data.N; k++) for (const used of [true, false]) expectFormula(models, h.x, h.P, k, data.z, data.r, used, nu);
  });

  it('seeded random states, SPD covariances, H rows and missing axes (n = 3 and 4)', () => {
    const r = rng(4242);
    const m3 = makeAxisModel({ motion: 'cv', q: 0.5, gm: { sigmaM: 1.5, tauSec: 60 } });
    const m4 = makeAxisModel({ motion: 'ca', q: 0.5, gm: { sigmaM: 1.5, tauSec: 60 } });
    const m3b = makeAxisModel({ motion: 'ca', q: 0.5, gm: null });
    const K = 200;
    floored = 0;
    // a random SPD matrix A Aᵀ + 0.1 I scaled by 10^[-2, 2), in the history layout
    const spd = (n: number): number[] => {
      const A = Matrix.zeros(n, n);
      for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) A.set(i, j, r() - 0.5);
      const S = A.mmul(A.transpose()).add(Matrix.eye(n, n).mul(0.1)).mul(10 ** (4 * r() - 2));
      return Array.from({ length: covStride(n) }, (_, e) => {
        for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) if (covIndex(n, i, j) === e) return S.get(i, j);
        return NaN;
      });
    };
    for (const models of [[m3, m3, m3b], [m3, m3, m4], [m4, m4]]) {
      const x = models.map((m) => Float64Array.from({ length: K * m.n }, () => (r() - 0.5) * 200));
      const P = models.map((m) => Float64Array.from(Array.from({ length: K }, () => spd(m.n)).flat()));
      const z = models.map(() => Float64Array.from({ length: K }, () => (r() < 0.1 ? NaN : (r() - 0.5) * 200)));
      const rr = models.map(() => Float64Array.from({ length: K }, () => 0.01 + r() * 4));
      const nu = new Float64Array(models.length);
      for (let k = 0; k < K; k++) {
        // an unusual H row now and then (the kernel must not rely on [1, 0, 1])
        for (const m of models) if (r() < 0.3) for (let i = 0; i < m.n; i++) m.h[i] = r() < 0.3 ? 0 : r() * 2 - 1;
        for (const used of [true, false]) expectFormula(models, x, P, k, z, rr, used, nu);
      }
    }
    expect(floored).toBeGreaterThan(50);
  });
});

describe('reviewStatisticsRange equals reviewStatistic epoch by epoch', () => {
  it.each([
    ['vehicle', 5, 1],
    ['drone', 7, 5],
  ] as const)('%s seed %i at %i Hz; n = 3 and a 4-state vertical', (kind, seed, rateHz) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz);
    const r = rng(seed);
    const offered = Uint8Array.from(data.use, (u) => (u === 0 ? 0 : r() < 0.05 ? 2 : 1));
    const kept = Uint8Array.from(data.use, () => (r() < 0.9 ? 1 : 0));
    const thr = reviewThresholds(0.999).reject;
    const m4 = makeAxisModel({ motion: 'ca', q: 0.05, gm: { sigmaM: 3, tauSec: 60 } });
    for (const ms of [models, [models[0]!, models[1]!, m4]]) {
      const h = forwardFilter(ms, data, opt);
      smoothInPlace(ms, data, h);
      const N = data.N;
      const Ta = new Float64Array(N).fill(NaN), Tb = Ta.slice();
      const da = new Uint8Array(N), db = new Uint8Array(N);
      const tha = new Float64Array(N).fill(NaN), thb = tha.slice();
      const nu = new Float64Array(3);
      const ranges: Array<[number, number]> = [[0, N - 1], [5, 5], [N - 1, N - 1], [10, Math.min(400, N - 1)]];
      for (const [a, b] of ranges) {
        reviewStatisticsRange(ms, h.x, h.P, a, b, data.z, data.r, offered, kept, Ta, da, tha, thr, nu);
        for (let k = a; k <= b; k++) {
          if (offered[k] !== 1) continue;
          const st = reviewStatistic(ms, h.x, h.P, k, data.z, data.r, kept[k] === 1, nu);
          Tb[k] = st.T;
          db[k] = st.dof;
          thb[k] = thr[st.dof]!;
        }
        for (let k = 0; k < N; k++) {
          expect(Object.is(Ta[k], Tb[k])).toBe(true);
          expect(da[k]).toBe(db[k]);
          expect(Object.is(tha[k], thb[k])).toBe(true);
        }
      }
    }
  });
});
