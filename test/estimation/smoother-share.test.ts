/**
 * The smoother's east/north sharing decided per epoch (where the two horizontal covariances read by
 * the RTS step at k are the same numbers, north's result is a copy of east's) against the same
 * smoothing with north given an equal but distinct model object (then north is computed on its own
 * at every epoch): smoothed histories and windowed re-smoothing compared element by element with
 * Object.is, on shared histories and on histories whose north covariance differs from east's in a
 * few epochs (there the sharing smoother must compute north alone too), in place, out of place and
 * under a shared per-epoch q scale. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { makeAxisModel } from '../../src/models/axis-model.js';
import { allocateHistory, forwardFilter, historyOf, type FilterHistory, type SegmentData } from '../../src/estimation/track-filter.js';
import { resmoothWindows, smoothInPlace, smoothInto } from '../../src/estimation/track-smoother.js';
import { expectSameHistory, segmentCase } from '../helpers/history-compare.js';
import { rng } from '../helpers/park-miller.js';

function clone(h: FilterHistory): FilterHistory {
  const c = historyOf(h, h.x.map((a) => a.slice()), h.P.map((a) => a.slice()));
  return { ...c, extraQ: new Map(h.extraQ), reacquired: h.reacquired.slice() };
}

/** North's covariance nudged by one ulp-scale factor in a few short runs of epochs (no longer the same numbers there). */
function perturbNorth(h: FilterHistory, seed: number): void {
  const r = rng(seed);
  const P1 = h.P[1]!;
  for (let run = 0; run < 5; run++) {
    const k0 = Math.floor(r() * (h.N - 20));
    for (let k = k0; k < k0 + 1 + Math.floor(r() * 10); k++) P1[k * 6] *= 1 + 1e-12;
  }
}

describe('smoother: east/north sharing per epoch = north computed on its own', () => {
  it.each([
    ['vehicle', 5, 1, false],
    ['vehicle', 6, 10, false],
    ['drone', 7, 5, false],
    ['vehicle', 1, 1, true],
  ] as const)('%s seed %i at %i Hz (no height: %s)', (kind, seed, rateHz, noHeight = false) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const separate = [models[0]!, makeAxisModel(models[0]!.params), ...models.slice(2)];
    const ms = models;
    for (const perturb of [false, true]) {
        const f = forwardFilter(ms, data, opt);
        if (perturb) perturbNorth(f, seed);
        // in place
        const a = clone(f), b = clone(f);
        smoothInPlace(ms, data, a);
        smoothInPlace(separate, data, b);
        expectSameHistory(a, b);
        // out of place, then windowed re-smoothing after re-runs of the filter
        const u0 = Uint8Array.from(data.use, (u, k) => (u === 0 ? 0 : f.accepted[k] ? 2 : 0));
        const work: SegmentData = { ...data, use: u0 };
        const fa = forwardFilter(ms, work, opt);
        if (perturb) perturbNorth(fa, seed + 1);
        const fb = clone(fa);
        const sa = historyOf(fa, allocateHistory(data.N, ms).x, allocateHistory(data.N, ms).P);
        const sb = historyOf(fb, allocateHistory(data.N, ms).x, allocateHistory(data.N, ms).P);
        smoothInto(ms, work, fa, sa);
        smoothInto(separate, work, fb, sb);
        expectSameHistory(sa, sb);
        {
          // under a shared per-epoch q scale
          const q = ms.map(() => Float64Array.from({ length: data.N }, (_, k) => 1 + (k % 5) / 10));
          q[1] = q[0]!;
          const sa2 = clone(sa), sb2 = clone(sb);
          smoothInto(ms, work, fa, sa2, q);
          smoothInto(separate, work, fb, sb2, q);
          expectSameHistory(sa2, sb2);
        }
        const r = rng(seed + 17);
        for (const tol of [0, 1e-6, 0, 1e-6]) {
          const changed: number[] = [];
          for (let k = 1; k < work.N; k++)
            if (data.use[k] !== 0 && r() < 0.002) {
              work.use[k] = work.use[k] === 2 ? 0 : 2;
              changed.push(k);
            }
          const windows: number[] = [];
          forwardFilter(ms, work, opt, fa, { changed, tol, windows });
          // the same filtered history for both (forwardFilter is checked in forward-filter.test.ts)
          for (let ax = 0; ax < ms.length; ax++) {
            fb.x[ax]!.set(fa.x[ax]!);
            fb.P[ax]!.set(fa.P[ax]!);
          }
          if (perturb) {
            // a difference inside a window too
            const k = windows.length ? windows[0]! + 1 : 1;
            fa.P[1]![k * 6 + 3] *= 1 + 1e-12;
            fb.P[1]![k * 6 + 3] = fa.P[1]![k * 6 + 3]!;
          }
          const ca: number[] = [], cb: number[] = [];
          const na = resmoothWindows(ms, work, fa, sa, windows, null, tol, ca);
          const nb = resmoothWindows(separate, work, fb, sb, windows, null, tol, cb);
          // and under a shared per-epoch q scale (into copies of the smoothed histories)
          const qs = Float64Array.from({ length: data.N }, (_, k) => 1 + (k % 7) / 10);
          const q = ms.map(() => qs);
          const sa2 = clone(sa), sb2 = clone(sb), ca2: number[] = [], cb2: number[] = [];
          expect(resmoothWindows(ms, work, fa, sa2, windows, q, tol, ca2)).toBe(resmoothWindows(separate, work, fb, sb2, windows, q, tol, cb2));
          expect(ca2).toEqual(cb2);
          expectSameHistory(sa2, sb2);
          expect(na).toBe(nb);
          expect(ca).toEqual(cb);
          expectSameHistory(sa, sb);
        }
      }
  });
});
