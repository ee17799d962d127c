/**
 * forwardFilter against the textbook Kalman filter (test/helpers/textbook-track.ts: predict
 * x = F x, P = F P Fᵀ + Q; S = H P Hᵀ + R; K = P Hᵀ S⁻¹; Joseph update), run on the filter's own
 * decisions (which fixes updated the state, the re-acquisition noise it recorded): states and
 * covariances at 1e-12 relative (norm-wise, see expectNearTrack), NIS at 1e-12 relative, the gate
 * (a gated fix is used iff its NIS ≤ the χ²(dof) quantile; Bar-Shalom, Li, Kirubarajan 2001 §5.4),
 * and the log-likelihood terms (−½ (Σ log 2πS + NIS), the NIS capped at the gate for a rejected
 * fix: this project's rule, see track-filter.ts) at 1e-12 relative. Both loops are checked: the
 * shared n = 3 one (no likelihood) and the general one (likelihood on). The prior is 100 m², 25
 * (m/s)², 1 (m/s²)² here instead of the default 10⁶ m²: the first update's cancellation of a 10⁶
 * variance leaves ~1e-11 relative in any implementation. Then contracts within the current code,
 * bit for bit (Object.is): the shared loop against the general one, a used history against a fresh
 * one, and windowed re-runs (resume) against full re-runs.
 * Cases: seeded scenarios, gated passes with outlier bursts and re-acquisitions (forward and
 * time-reversed), logs without height, a vertical axis with missing values, user-kept fixes.
 */
import { describe, expect, it } from 'vitest';
import { chiSquareQuantile } from '../../src/estimation/chi-square.js';
import { forwardFilter, type FilterOptions, type SegmentData } from '../../src/estimation/track-filter.js';
import { reversed } from '../../src/session/classify/review.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';
import { expectSameHistory, segmentCase, withBurst } from '../helpers/history-compare.js';
import { expectNearTrack, textbookFilter } from '../helpers/textbook-track.js';
import { rng } from '../helpers/park-miller.js';

/** Tolerance against the textbook filter, relative. */
const REL_TOL = 1e-12;
const PRIOR: [number, number, number] = [100, 25, 1];

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 5, 1, false],
  ['vehicle', 6, 10, false],
  ['vehicle', 1, 1, true],
  ['drone', 7, 5, false],
  ['walk', 3, 1, false],
];

/** The segment as simulated, with a burst, with some user-kept fixes, and (with height) some heights missing. */
function variants(data: SegmentData, seed: number, rateHz: number): SegmentData[] {
  const r = rng(seed * 7919 + rateHz);
  const use = data.use.slice();
  const zU = data.z.length > 2 ? data.z[2]!.slice() : null;
  for (let k = 1; k < data.N; k++) {
    if (use[k] === 1 && r() < 0.01) use[k] = 2;
    if (zU && Number.isFinite(zU[k]!) && r() < 0.02) zU[k] = NaN;
  }
  const out: SegmentData[] = [data, withBurst(data), { ...data, use }];
  if (zU) out.push({ ...data, use, z: [data.z[0]!, data.z[1]!, zU] });
  return out;
}

describe('forwardFilter equals the textbook filter on its own decisions', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): states, covariances, NIS, gate, log-likelihood', (kind, seed, rateHz, noHeight) => {
    const c = segmentCase(kind, seed, rateHz, noHeight);
    const { models } = c;
    const opt: FilterOptions = { ...c.opt, priorVar: PRIOR };
    let reacq = 0, rejected = 0, kept = 0;
    for (const d of variants(c.data, seed, rateHz))
      for (const dd of [d, reversed(d)])
        for (const likelihood of [false, true]) {
          const h = forwardFilter(models, dd, { ...opt, likelihood });
          reacq += h.reacquired.length;
          const t = textbookFilter(models, dd, opt, h.accepted, h.extraQ);
          // states and covariances: 1e-12 relative
          expectNearTrack(models, h, t, REL_TOL);
          for (let k = 0; k < dd.N; k++) {
            expect(h.dof[k]).toBe(t.dof[k]);
            if (t.dof[k] === 0) {
              expect(h.accepted[k]).toBe(0);
              expect(h.nis[k]).toBeNaN();
              expect(h.logLik[k]).toBe(0);
              continue;
            }
            const nis = t.nis[k]!, thr = chiSquareQuantile(opt.gateProbability, t.dof[k]!);
            // NIS: 1e-12 relative (to 1 when below it)
            expect(Math.abs(h.nis[k]! - nis)).toBeLessThanOrEqual(REL_TOL * Math.max(nis, 1));
            expect(h.threshold[k]).toBe(thr);
            // the gate: used iff kept by the user or NIS ≤ threshold (skipping NIS within rounding of it)
            if (dd.use[k] === 2) kept++;
            if (Math.abs(nis - thr) > 1e-9 * thr) expect(h.accepted[k]).toBe(dd.use[k] === 2 || nis <= thr ? 1 : 0);
            if (!h.accepted[k]) rejected++;
            // log-likelihood term: 1e-12 relative
            const ll = likelihood ? -0.5 * (t.logDet[k]! + (h.accepted[k] ? nis : thr)) : 0;
            expect(Math.abs(h.logLik[k]! - ll)).toBeLessThanOrEqual(REL_TOL * Math.abs(ll));
          }
        }
    expect(reacq).toBeGreaterThan(0);
    expect(rejected).toBeGreaterThan(0);
    expect(kept).toBeGreaterThan(0);
  });
});

describe('forwardFilter contracts, bit for bit', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): the shared loop gives the general loop\'s history; a used history a fresh one\'s', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const ones = models.map(() => 1);
    const qOnes = models.map(() => new Float64Array(data.N).fill(1));
    for (const d of variants(data, seed, rateHz))
      for (const dd of [d, reversed(d)]) {
        const a = forwardFilter(models, dd, opt);
        // an r scale of 1 and a q scale of 1 take the general loop (the same numbers)
        expectSameHistory(forwardFilter(models, dd, { ...opt, rScale: ones }), a);
        expectSameHistory(forwardFilter(models, dd, { ...opt, qScale: qOnes }), a);
        // into a used history (the review reuses its buffers)
        const used = forwardFilter(models, reversed(dd), opt);
        used.extraQ.clear();
        used.reacquired.length = 0;
        expectSameHistory(forwardFilter(models, dd, opt, used), a);
      }
  });

  it.each(CASES)('%s seed %i at %i Hz (no height: %s): windowed re-runs give the full re-run\'s history (tol 0), or within 1e-5 of it (tol 1e-6)', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const r = rng(seed * 104729 + rateHz);
    const last = variants(data, seed, rateHz).at(-1)!;
    const gate = forwardFilter(models, last, opt);
    const u0 = Uint8Array.from(last.use, (u, k) => (u === 0 ? 0 : gate.accepted[k] ? 2 : 0));
    for (const tol of [0, 1e-6]) {
      const work: SegmentData = { ...last, use: u0.slice() };
      const a = forwardFilter(models, work, opt);
      let recomputed = 0;
      for (let pass = 0; pass < 4; pass++) {
        const changed: number[] = [];
        for (let k = 0; k < work.N; k++)
          if (last.use[k] !== 0 && r() < (pass === 3 ? 0.3 : 0.003)) {
            work.use[k] = work.use[k] === 2 ? 0 : 2;
            changed.push(k);
          }
        if (pass === 0) {
          // a change at the first epoch (re-run from the prior)
          if (changed[0] !== 0) changed.unshift(0);
          work.use[0] = 2;
        }
        const windows: number[] = [];
        forwardFilter(models, work, opt, a, { changed, tol, windows });
        const full = forwardFilter(models, work, opt);
        // the windows: ascending, disjoint, each change inside one
        for (let i = 0; i < windows.length; i += 2) {
          expect(windows[i]!).toBeLessThanOrEqual(windows[i + 1]!);
          if (i > 0) expect(windows[i]!).toBeGreaterThan(windows[i - 1]!);
          recomputed += windows[i + 1]! - windows[i]! + 1;
        }
        for (const k of changed) expect(windows.some((w, i) => i % 2 === 0 && w <= k && k <= windows[i + 1]!)).toBe(true);
        if (tol === 0) expectSameHistory(a, full);
        else
          for (let ax = 0; ax < models.length; ax++) {
            for (let i = 0; i < full.x[ax]!.length; i++) expect(Math.abs(a.x[ax]![i]! - full.x[ax]![i]!)).toBeLessThanOrEqual(1e-5);
            for (let i = 0; i < full.P[ax]!.length; i++) expect(Math.abs(a.P[ax]![i]! - full.P[ax]![i]!)).toBeLessThanOrEqual(1e-5);
          }
      }
      // the re-runs skipped epochs (otherwise the check says nothing about resuming)
      expect(recomputed).toBeLessThan(4 * work.N);
    }
  });
});
