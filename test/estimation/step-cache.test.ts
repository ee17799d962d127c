/**
 * The step cache of the filter and smoother (track-filter.ts, stepMatrices / ensureStep) points the
 * caller's F[a], Q[a] at its slots instead of copying them. Checked here bit for bit (Object.is on
 * every element) against F and Q computed afresh by the model at every epoch: 10 Hz Unix times
 * (whose rounding gives two or three distinct Δt values), gaps, re-acquisition noise at some
 * epochs, a per-epoch q scale, and more distinct steps than the cache has slots. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { makeAxisModel, type AxisModel } from '../../src/models/axis-model.js';
import { allocateHistory, ensureStep, makeStepCache, stepMatrices, type SegmentData } from '../../src/estimation/track-filter.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

function models(): AxisModel[] {
  const h = makeAxisModel({ motion: 'cv', q: 0.5, gm: { sigmaM: 1.5, tauSec: 60 } });
  const v = makeAxisModel({ motion: 'ca', q: 0.05, gm: { sigmaM: 3, tauSec: 60 } });
  return [h, h, v];
}

function times(N: number, seed: number, wild: boolean): Float64Array {
  const r = rng(seed);
  const t = new Float64Array(N);
  t[0] = 1_778_664_600;
  for (let k = 1; k < N; k++) {
    // 10 Hz as parsed from text (k / 10 added to a large base rounds differently per epoch), with gaps
    let step = Math.round(t[k - 1]! * 10 - t[0]! * 10 + 1) / 10 - (t[k - 1]! - t[0]!);
    if (r() < 0.02) step += Math.ceil(r() * 5) / 10;
    if (wild && r() < 0.3) step = 0.05 + r();
    t[k] = t[k - 1]! + step;
  }
  return t;
}

describe('step cache: F and Q by reference', () => {
  it.each([
    [1, false, false],
    [2, true, false],
    [3, false, true],
    [4, true, true],
  ])('seed %i (many distinct steps: %s, q scale: %s): the same bits as computing every step afresh', (seed, wild, scaled) => {
    const ms = models();
    const N = 3000;
    const tSec = times(N, seed, wild);
    const data: SegmentData = { N, tSec, z: [], r: [], use: new Uint8Array(N) };
    const h = allocateHistory(N, ms);
    const r = rng(seed + 100);
    for (let k = 1; k < N; k++)
      if (r() < 0.01) h.extraQ.set(k, ms.map((m) => Float64Array.from({ length: m.n }, () => r() * 10)));
    const qScale = scaled ? ms.map(() => Float64Array.from({ length: N }, () => (r() < 0.5 ? 1 : 1 + r()))) : null;
    const F = ms.map((m) => new Float64Array(m.n * m.n));
    const Q = ms.map((m) => new Float64Array(m.n * m.n));
    const cache = makeStepCache(ms.length, ms.map((m) => m.n));
    const F2 = ms.map((m) => new Float64Array(m.n * m.n));
    const Q2 = ms.map((m) => new Float64Array(m.n * m.n));
    let held = NaN;
    let bad = 0;
    for (let k = 1; k < N; k++) {
      held = ensureStep(ms, data, h, k, qScale, F, Q, cache, held);
      // the reference: no cache, the model's fillF / fillQ into fresh arrays
      stepMatrices(ms, data, h, k, qScale, F2, Q2);
      for (let a = 0; a < ms.length; a++)
        for (let i = 0; i < F2[a]!.length; i++) if (!Object.is(F[a]![i], F2[a]![i]) || !Object.is(Q[a]![i], Q2[a]![i])) bad++;
    }
    expect(bad).toBe(0);
    // the slots were really used (hits), and the own arrays at the extra-noise steps
    expect(cache.dt.some((d) => Number.isFinite(d))).toBe(true);
  });
});
