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
import { reviewStatistic } from '../../src/estimation/review.js';
import { refReviewStatistic } from '../helpers/reference-review.js';
import { segmentCase } from '../helpers/history-compare.js';

function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

describe('reviewStatistic: the n = 3 form against the previous one', () => {
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
