/**
 * The forward filter and the smoother on histories whose north covariances are east's array
 * (allocateHistory's shareHorizontal: no copy of east's covariance into north's, no sharing test
 * per epoch, the step matrices looked up only when Δt changes) against the same runs on ordinary
 * histories (two arrays, north's covariances written in their own): gated passes with
 * re-acquisitions, full ungated passes, windowed re-runs (tol 0 and 1e-6) and their re-smoothing,
 * element by element with Object.is (north's covariances against the two-array run's own array).
 * The two-array runs are checked against the textbook filter in forward-filter.test.ts. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { allocateHistory, forwardFilter, historyOf, type FilterHistory, type SegmentData } from '../../src/estimation/track-filter.js';
import { resmoothWindows, smoothInto } from '../../src/estimation/track-smoother.js';
import { expectSameHistory, segmentCase, withBurst } from '../helpers/history-compare.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';
import { rng } from '../helpers/park-miller.js';

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 5, 1, false],
  ['vehicle', 6, 10, false],
  ['drone', 7, 5, false],
  ['vehicle', 1, 1, true],
  ['walk', 8, 1, false],
];

describe('filter and smoother with one east/north covariance array = on two arrays', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s)', (kind, seed, rateHz, noHeight) => {
    const c = segmentCase(kind, seed, rateHz, noHeight);
    const { models, opt } = c;
    let reacquired = 0;
    for (const data of [c.data, withBurst(c.data)])
      {
        const one = true;
        const N = data.N;
        const alloc = () => allocateHistory(N, models, one);
        // gated pass
        const ga = forwardFilter(models, data, opt, alloc());
        const gb = forwardFilter(models, data, opt, allocateHistory(N, models));
        expectSameHistory(ga, gb);
        expect(ga.P[1] === ga.P[0]).toBe(one);
        expect(gb.P[1] === gb.P[0]).toBe(false);
        reacquired += ga.reacquired.length;
        // its smoothing (re-acquisition noise in the steps)
        const sa0 = historyOf(ga, alloc().x, alloc().P);
        const sb0 = historyOf(gb, allocateHistory(N, models).x, allocateHistory(N, models).P);
        smoothInto(models, data, ga, sa0);
        smoothInto(models, data, gb, sb0);
        expectSameHistory(sa0, sb0);
        // ungated passes from the gate's decisions, then windowed re-runs
        const work: SegmentData = { ...data, use: Uint8Array.from(data.use, (u, k) => (u === 0 ? 0 : ga.accepted[k] ? 2 : 0)) };
        const workB: SegmentData = { ...work, use: work.use.slice() };
        const fa: FilterHistory = forwardFilter(models, work, opt, alloc());
        const fb: FilterHistory = forwardFilter(models, workB, opt, allocateHistory(N, models));
        expectSameHistory(fa, fb);
        const sa = historyOf(fa, alloc().x, alloc().P);
        const sb = historyOf(fb, allocateHistory(N, models).x, allocateHistory(N, models).P);
        smoothInto(models, work, fa, sa);
        smoothInto(models, workB, fb, sb);
        expectSameHistory(sa, sb);
        const r = rng(seed * 31 + (one ? 1 : 0));
        for (const tol of [0, 1e-6, 1e-6, 0]) {
          const changed: number[] = [];
          for (let k = 1; k < N; k++)
            if (data.use[k] !== 0 && r() < 0.003) {
              work.use[k] = workB.use[k] = work.use[k] === 2 ? 0 : 2;
              changed.push(k);
            }
          const wa: number[] = [], wb: number[] = [];
          forwardFilter(models, work, opt, fa, { changed, tol, windows: wa });
          forwardFilter(models, workB, opt, fb, { changed, tol, windows: wb });
          expect(wa).toEqual(wb);
          expectSameHistory(fa, fb);
          const ca: number[] = [], cb: number[] = [];
          expect(resmoothWindows(models, work, fa, sa, wa, null, tol, ca)).toBe(resmoothWindows(models, workB, fb, sb, wb, null, tol, cb));
          expect(ca).toEqual(cb);
          expectSameHistory(sa, sb);
        }
      }
    expect(reacquired).toBeGreaterThan(0);
  });
});
