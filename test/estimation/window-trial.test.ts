/**
 * windowTrial (src/estimation/window-trial.ts): the smoothed states of a window under changed
 * decisions, from the current histories (forward restart, two-filter fusion at the window's end,
 * RTS down to its start), against a full re-run of the forward filter and the RTS smoother with the
 * new decisions. The two agree in exact arithmetic (Fraser & Potter 1969; RTS equivalence: Särkkä
 * 2013 §8.2, from memory); the tolerance is for rounding (the fusion subtracts informations).
 * Simulated segments (seeded), cv and ca motion models, with and without height, windows inside
 * the segment, at its first epoch and at its last.
 */
import { describe, expect, it } from 'vitest';
import { allocateHistory, covStride, forwardFilter, historyOf, type FilterHistory, type SegmentData } from '../../src/estimation/track-filter.js';
import { smoothInto } from '../../src/estimation/track-smoother.js';
import { makeWindowTrialWork, windowTrial } from '../../src/estimation/window-trial.js';
import { buildAxisModels } from '../../src/session/prepare/axis-params.js';
import { segmentCase } from '../helpers/history-compare.js';

/** Ungated decisions: every fix used (2) except where `drop` says. */
function ungated(d: SegmentData, drop: (k: number) => boolean): Uint8Array {
  return Uint8Array.from(d.use, (u, k) => (u === 0 || drop(k) ? 0 : 2));
}

function smoothed(models: ReturnType<typeof segmentCase>['models'], data: SegmentData, opt: ReturnType<typeof segmentCase>['opt']): { hf: FilterHistory; hs: FilterHistory } {
  const hf = forwardFilter(models, data, opt, allocateHistory(data.N, models));
  const alloc = allocateHistory(data.N, models);
  const hs = historyOf(hf, alloc.x, alloc.P);
  smoothInto(models, data, hf, hs, opt.qScale);
  return { hf, hs };
}

/** Largest |a − b| / (1 + |b|) over the window's states and covariances. */
function worst(models: { n: number }[], x: Float64Array[], P: Float64Array[], ref: FilterHistory, w0: number, len: number): number {
  let e = 0;
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    const ps = covStride(n);
    for (let i = 0; i < len * n; i++) e = Math.max(e, Math.abs(x[a]![i]! - ref.x[a]![w0 * n + i]!) / (1 + Math.abs(ref.x[a]![w0 * n + i]!)));
    for (let i = 0; i < len * ps; i++) e = Math.max(e, Math.abs(P[a]![i]! - ref.P[a]![w0 * ps + i]!) / (1 + Math.abs(ref.P[a]![w0 * ps + i]!)));
  }
  return e;
}

// [scenario, seed, rate, no height, motion]
const CASES: Array<['vehicle' | 'drone' | 'walk', number, number, boolean, 'cv' | 'ca']> = [
  ['vehicle', 5, 10, false, 'cv'],
  ['vehicle', 6, 1, true, 'cv'],
  ['drone', 7, 5, false, 'ca'],
  ['walk', 8, 1, false, 'cv'],
];

describe('windowTrial', () => {
  for (const [kind, seed, rate, noHeight, motion] of CASES) {
    it(`equals a full re-run over the window (${kind} seed ${seed}, ${rate} Hz${noHeight ? ', no height' : ''}, ${motion})`, () => {
      const base = segmentCase(kind, seed, rate, noHeight);
      const models = motion === 'ca' ? buildAxisModels({ motion: 'ca', qHorizontal: 0.5, qVertical: 0.05, sigmaHorizontalM: 1.5, sigmaVerticalM: 3, gmHorizontalSigmaM: 1, gmVerticalSigmaM: 2, gmTauSec: 60 }, base.models.length === 3) : base.models;
      const { data, opt } = base;
      const N = data.N;
      expect(N).toBeGreaterThan(400);
      const oldUse = ungated(data, (k) => k % 97 === 13);
      const cur = smoothed(models, { ...data, use: oldUse }, opt);
      const wk = makeWindowTrialWork(models);
      // windows: inside, at the first epoch, at the last epoch
      const windows: Array<[number, number, number]> = [
        [Math.floor(N / 3), Math.floor(N / 3) + 7, Math.floor(N / 3) + 30],
        [0, 0, 25],
        [N - 40, N - 31, N - 1],
      ];
      let tried = 0;
      for (const [w0, c0, w1] of windows) {
        // swap decisions at epochs c0..c0+5 (used ↔ left out) where there is a fix
        const newUse = oldUse.slice();
        let changed = 0;
        for (let k = c0; k <= Math.min(c0 + 5, w1); k++) if (data.use[k] !== 0) {
          newUse[k] = newUse[k] ? 0 : 2;
          changed++;
        }
        const ref = smoothed(models, { ...data, use: newUse }, opt);
        const len = w1 - w0 + 1;
        const x = models.map((m) => new Float64Array(len * m.n));
        const P = models.map((m) => new Float64Array(len * covStride(m.n)));
        expect(windowTrial(models, data, newUse, opt, cur.hf, cur.hs, w0, c0, w1, x, P, wk)).toBe(true);
        // rounding only (the exact identity; a trial that ignored the fixes after w1 errs by ~1e-1)
        expect(worst(models, x, P, ref.hs, w0, len)).toBeLessThan(1e-9);
        // and it differs from the old smoothed track (the change is seen)
        if (changed > 0) {
          expect(worst(models, x, P, cur.hs, w0, len)).toBeGreaterThan(1e-6);
          tried++;
        }
      }
      expect(tried).toBeGreaterThanOrEqual(2);
    });
  }

  it('fails the fusion test when the information from after the window is left out', () => {
    // the same window with the current smoothed history replaced by the filtered one (no
    // information from after w1): the result is then the filtered-and-smoothed-to-w1 track, not the
    // full smoother's, which is what the fusion step adds
    const { models, data, opt } = segmentCase('vehicle', 5, 10, false);
    const N = data.N;
    const oldUse = ungated(data, () => false);
    const cur = smoothed(models, { ...data, use: oldUse }, opt);
    const newUse = oldUse.slice();
    const w0 = Math.floor(N / 2), c0 = w0 + 3, w1 = w0 + 20;
    for (let k = c0; k < c0 + 4; k++) if (data.use[k]) newUse[k] = 0;
    const ref = smoothed(models, { ...data, use: newUse }, opt);
    const len = w1 - w0 + 1;
    const x = models.map((m) => new Float64Array(len * m.n));
    const P = models.map((m) => new Float64Array(len * covStride(m.n)));
    expect(windowTrial(models, data, newUse, opt, cur.hf, cur.hf, w0, c0, w1, x, P, makeWindowTrialWork(models))).toBe(true);
    expect(worst(models, x, P, ref.hs, w0, len)).toBeGreaterThan(1e-3);
  });
});
