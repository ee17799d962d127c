/**
 * The swap test's trial (src/session/classify/review-swaps.ts, trialCost and trySwap) against its
 * definition: the robust cost of a sandwich's neighbourhood after the swap, from a re-run of the
 * forward filter and the RTS smoother over the whole segment with that swap alone. Every sandwich
 * of converged reviews (seeded simulated logs with bursts) is tried both ways; costs agree to
 * rounding and every keep/undo decision is the same.
 */
import { describe, expect, it } from 'vitest';
import { reviewStatisticsRange } from '../../../src/estimation/review.js';
import { allocateHistory, forwardFilter, historyOf, type SegmentData } from '../../../src/estimation/track-filter.js';
import { smoothInto } from '../../../src/estimation/track-smoother.js';
import { reviewSegment } from '../../../src/session/classify/review.js';
import { reviewThresholds } from '../../../src/session/classify/review-decisions.js';
import { applySwap, findSwaps, makeSwapTrial, swapCost, trialCost, trySwap } from '../../../src/session/classify/review-swaps.js';
import { segmentCase } from '../../helpers/history-compare.js';
import type { DecisionLog } from '../../../src/session/result/decision-log.js';

function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

/** Short bursts (2–4 fixes, 8–30 m) at random epochs: the pattern the swap test looks for. */
function withBursts(d: SegmentData, seed: number, count: number): SegmentData {
  const u = rng(seed);
  const z = d.z.map((a) => a.slice());
  for (let b = 0; b < count; b++) {
    const k0 = 20 + Math.floor(u() * (d.N - 40));
    const len = 2 + Math.floor(u() * 3);
    const dx = (u() < 0.5 ? -1 : 1) * (8 + 22 * u());
    const dy = (u() < 0.5 ? -1 : 1) * (8 + 22 * u());
    for (let k = k0; k < k0 + len; k++) {
      z[0]![k] += dx;
      z[1]![k] += dy;
    }
  }
  return { ...d, z };
}

describe('swap trial', () => {
  for (const [kind, seed, rate] of [['vehicle', 5, 10], ['vehicle', 9, 1], ['drone', 4, 5]] as const) {
    it(`equals a whole-segment re-run for every sandwich (${kind} seed ${seed}, ${rate} Hz)`, () => {
      const base = segmentCase(kind, seed, rate);
      const { models, opt } = base;
      const data = withBursts(base.data, seed, Math.floor(base.data.N / (rate >= 5 ? 150 : 40)));
      const N = data.N;
      const offered = data.use.slice();
      const ro = { probability: 0.999, maxPasses: 10, guardSec: Math.max(5 / rate, 5), swaps: false };
      const th = reviewThresholds(ro.probability);
      const out = reviewSegment(models, data, offered, opt, ro);
      // the converged review's histories, as full passes
      const cur: SegmentData = { ...data, use: out.data.use.slice() };
      const hf = forwardFilter(models, cur, opt, allocateHistory(N, models));
      const s0 = allocateHistory(N, models);
      const hs = historyOf(hf, s0.x, s0.P);
      smoothInto(models, cur, hf, hs, opt.qScale);
      const kept = out.kept.slice();
      const T = new Float64Array(N).fill(NaN), dof = new Uint8Array(N), thr = new Float64Array(N).fill(NaN);
      const nu = new Float64Array(models.length);
      reviewStatisticsRange(models, hs.x, hs.P, 0, N - 1, data.z, data.r, offered, kept, T, dof, thr, th.reject, nu);
      const swaps = findSwaps(N, offered, kept, data.tSec, ro.guardSec);
      expect(swaps.length).toBeGreaterThanOrEqual(3);
      const tr = makeSwapTrial(models);
      let keptCount = 0;
      for (const sw of swaps) {
        const before = swapCost(sw, offered, kept, T, thr);
        // the reference: the swap alone, the whole segment re-run
        const k2 = kept.slice();
        applySwap(sw, k2, false);
        const use = Uint8Array.from(offered, (o, k) => (o === 0 ? 0 : k2[k] ? 2 : 0));
        const rf = forwardFilter(models, { ...data, use }, opt, allocateHistory(N, models));
        const r0 = allocateHistory(N, models);
        const rs = historyOf(rf, r0.x, r0.P);
        smoothInto(models, { ...data, use }, rf, rs, opt.qScale);
        const T2 = T.slice(), d2 = dof.slice(), thr2 = thr.slice();
        reviewStatisticsRange(models, rs.x, rs.P, sw.window[0], sw.window[1], data.z, data.r, offered, k2, T2, d2, thr2, th.reject, nu);
        const refAfter = swapCost(sw, offered, k2, T2, thr2);
        // the trial, on the neighbourhood only
        const k3 = kept.slice();
        applySwap(sw, k3, false);
        const after = trialCost(tr, sw, models, cur, opt, hf, hs, offered, k3, th.reject, nu);
        expect(Math.abs(after - refAfter)).toBeLessThan(1e-6 * (1 + Math.abs(refAfter)));
        // trySwap: the same decision, kept restored when undone, the data's use untouched
        const k4 = kept.slice();
        const useBefore = cur.use.slice();
        const keep = trySwap(tr, sw, models, cur, opt, hf, hs, offered, k4, T, thr, th.reject, nu);
        expect(keep).toBe(refAfter < before);
        expect(Array.from(k4)).toEqual(Array.from(keep ? k2 : kept));
        expect(Array.from(cur.use)).toEqual(Array.from(useBefore));
        if (keep) keptCount++;
      }
      // (the count is printed for the record; bursts make some swaps worth keeping, not all)
      console.log(`${kind} seed ${seed}: ${swaps.length} sandwiches, ${keptCount} swaps kept`);
    });
  }

  it('keeps the swap of a kept burst between rejected good fixes (and its cost is the re-run\'s)', () => {
    const { models, opt, data: d0 } = segmentCase('vehicle', 5, 10);
    const N = d0.N;
    // a clean stretch: three fixes displaced by 25 m and kept, two good fixes on each side rejected
    let k0 = Math.floor(N / 2);
    while (!(d0.use[k0 - 2] && d0.use[k0 - 1] && d0.use[k0] && d0.use[k0 + 1] && d0.use[k0 + 2] && d0.use[k0 + 3] && d0.use[k0 + 4])) k0++;
    const z = d0.z.map((a) => a.slice());
    for (let k = k0; k < k0 + 3; k++) z[0]![k] += 25;
    const data: SegmentData = { ...d0, z };
    const offered = data.use.slice();
    const kept = Uint8Array.from(offered, (o) => (o ? 1 : 0));
    for (const k of [k0 - 2, k0 - 1, k0 + 3, k0 + 4]) kept[k] = 0;
    const cur: SegmentData = { ...data, use: Uint8Array.from(offered, (o, k) => (o === 0 ? 0 : kept[k] ? 2 : 0)) };
    const hf = forwardFilter(models, cur, opt, allocateHistory(N, models));
    const s0 = allocateHistory(N, models);
    const hs = historyOf(hf, s0.x, s0.P);
    smoothInto(models, cur, hf, hs, opt.qScale);
    const th = reviewThresholds(0.999);
    const T = new Float64Array(N).fill(NaN), dof = new Uint8Array(N), thr = new Float64Array(N).fill(NaN);
    const nu = new Float64Array(models.length);
    reviewStatisticsRange(models, hs.x, hs.P, 0, N - 1, data.z, data.r, offered, kept, T, dof, thr, th.reject, nu);
    const sw = findSwaps(N, offered, kept, data.tSec, 5).find((s) => s.keptRun[0] === k0);
    expect(sw?.keptRun).toEqual([k0, k0 + 1, k0 + 2]);
    expect(sw?.rejected).toEqual([k0 - 2, k0 - 1, k0 + 3, k0 + 4]);
    const k2 = kept.slice();
    // the decision log: the neighbours' earlier rejections, replaced by the swap's record
    const log: DecisionLog = new Map(sw!.rejected.map((k) => [k, { test: 'review' as const, statistic: T[k]!, threshold: thr[k]!, dof: dof[k]! }]));
    expect(trySwap(makeSwapTrial(models), sw!, models, cur, opt, hf, hs, offered, k2, T, thr, th.reject, nu, log)).toBe(true);
    for (const k of sw!.keptRun) expect(k2[k]).toBe(0);
    for (const k of sw!.rejected) expect(k2[k]).toBe(1);
    // the run left out is the swap test's: the cost with it kept (before) above the cost without
    expect([...log.keys()].sort((a, b) => a - b)).toEqual(sw!.keptRun);
    const before = swapCost(sw!, offered, kept, T, thr);
    for (const k of sw!.keptRun) {
      const d = log.get(k)!;
      expect(d.test).toBe('swap');
      expect(d.statistic).toBe(before);
      expect(d.statistic).toBeGreaterThan(d.threshold);
    }
  });
});
