/**
 * The review statistic written out for n = 3 (src/estimation/review.ts) against its previous form
 * (generic loops with covIndex, kept verbatim in test/helpers/reference-review.ts): T, dof and the
 * residuals compared with Object.is at every epoch of smoothed histories (used and left out), and on
 * seeded random states and covariances with signed zeros, for n = 3 and n = 4 models.
 */
import { describe, expect, it } from 'vitest';
import { makeAxisModel } from '../../src/models/axis-model.js';
import { forwardFilter } from '../../src/estimation/track-filter.js';
import { smoothInPlace } from '../../src/estimation/track-smoother.js';
import { reviewStatistic, reviewStatisticsRange } from '../../src/estimation/review.js';
import { reviewThresholds } from '../../src/session/review-decisions.js';
import { refReviewStatistic } from '../helpers/reference-review.js';
import { segmentCase } from '../helpers/history-compare.js';

function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

describe('reviewStatistic: the n = 3 form against the generic reference', () => {
  it.each([
    ['vehicle', 5, 1],
    ['drone', 7, 5],
  ] as const)('%s seed %i at %i Hz, every epoch', (kind, seed, rateHz) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz);
    const h = forwardFilter(models, data, opt);
    smoothInPlace(models, data, h);
    const na = new Float64Array(models.length), nb = new Float64Array(models.length);
    for (let k = 0; k < data.N; k++)
      for (const used of [true, false]) {
        const a = reviewStatistic(models, h.x, h.P, k, data.z, data.r, used, na);
        const b = refReviewStatistic(models, h.x, h.P, k, data.z, data.r, used, nb);
        expect(Object.is(a.T, b.T)).toBe(true);
        expect(a.dof).toBe(b.dof);
        for (let i = 0; i < na.length; i++) expect(Object.is(na[i], nb[i])).toBe(true);
      }
  });

  it.each([
    ['vehicle', 5, 1],
    ['drone', 7, 5],
  ] as const)('reviewStatisticsRange = the reference reviewStatistic epoch by epoch (%s seed %i at %i Hz; n = 3 and a 4-state vertical)', (kind, seed, rateHz) => {
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
          const st = refReviewStatistic(ms, h.x, h.P, k, data.z, data.r, kept[k] === 1, nu);
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

  it('seeded random states, covariances and H rows with signed zeros (n = 3 and 4)', () => {
    const r = rng(4242);
    const pick = (): number => {
      const u = r();
      return u < 0.1 ? 0 : u < 0.2 ? -0 : (r() - 0.5) * 10 ** Math.floor(r() * 6 - 3);
    };
    const m3 = makeAxisModel({ motion: 'cv', q: 0.5, gm: { sigmaM: 1.5, tauSec: 60 } });
    const m4 = makeAxisModel({ motion: 'ca', q: 0.5, gm: { sigmaM: 1.5, tauSec: 60 } });
    const m3b = makeAxisModel({ motion: 'ca', q: 0.5, gm: null });
    for (const models of [[m3, m3, m3b], [m3, m3, m4], [m4, m4]]) {
      const K = 200;
      const x = models.map((m) => Float64Array.from({ length: K * m.n }, pick));
      const P = models.map((m) => Float64Array.from({ length: K * (m.n === 3 ? 6 : m.n * m.n) }, pick));
      const z = models.map(() => Float64Array.from({ length: K }, () => (r() < 0.1 ? NaN : pick())));
      const rr = models.map(() => Float64Array.from({ length: K }, () => (r() < 0.1 ? 0 : r() * 4)));
      const na = new Float64Array(models.length), nb = new Float64Array(models.length);
      for (let k = 0; k < K; k++) {
        // an unusual H row now and then (the kernel must not rely on [1, 0, 1])
        for (const m of models) if (r() < 0.3) for (let i = 0; i < m.n; i++) m.h[i] = pick();
        for (const used of [true, false]) {
          const a = reviewStatistic(models, x, P, k, z, rr, used, na);
          const b = refReviewStatistic(models, x, P, k, z, rr, used, nb);
          expect(Object.is(a.T, b.T)).toBe(true);
          expect(a.dof).toBe(b.dof);
          for (let i = 0; i < na.length; i++) expect(Object.is(na[i], nb[i])).toBe(true);
        }
      }
    }
  });
});
