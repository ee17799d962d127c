/**
 * forwardFilter's loop for its common case (every axis n = 3, north sharing east's covariances, no
 * scales, no likelihood: forwardShared3) against the previous form of forwardFilter, kept verbatim in
 * test/helpers/reference-track-filter.ts: every element of every history array compared with
 * Object.is, the re-acquisitions, their extra noise, and the windows of re-runs. Cases: gated passes
 * with outlier bursts and re-acquisitions (forward and time-reversed), logs without height, a
 * vertical axis with missing values, user-kept fixes, and windowed re-runs (resume) with tolerance
 * 0 and 1e-6 after seeded changes of use. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { forwardFilter, horizontalShare, type SegmentData } from '../../src/estimation/track-filter.js';
import { reversed } from '../../src/session/review.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';
import { refForwardFilter } from '../helpers/reference-track-filter.js';
import { expectSameHistory, segmentCase } from '../helpers/history-compare.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 5, 1, false],
  ['vehicle', 6, 10, false],
  ['vehicle', 1, 1, true],
  ['drone', 7, 5, false],
  ['walk', 3, 1, false],
];

describe('forwardFilter: the shared n = 3 loop against the reference form', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): gated, reversed, re-runs', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    expect(horizontalShare(models, data, null, null)).toBe(true);
    expect(models.length).toBe(noHeight ? 2 : 3);
    const r = rng(seed * 7919 + rateHz);
    // some user-kept fixes, and (with height) some epochs whose height is missing
    const use = data.use.slice();
    const zU = data.z.length > 2 ? data.z[2]!.slice() : null;
    for (let k = 1; k < data.N; k++) {
      if (use[k] === 1 && r() < 0.01) use[k] = 2;
      if (zU && Number.isFinite(zU[k]!) && r() < 0.02) zU[k] = NaN;
    }
    const variants: SegmentData[] = [data, { ...data, use }];
    if (zU) variants.push({ ...data, use, z: [data.z[0]!, data.z[1]!, zU] });
    let reacq = 0;
    for (const d of variants)
      for (const dd of [d, reversed(d)]) {
        const a = forwardFilter(models, dd, opt);
        const b = refForwardFilter(models, dd, opt);
        expectSameHistory(a, b);
        reacq += a.reacquired.length;
        // into a used history (the review reuses its buffers)
        a.extraQ.clear();
        a.reacquired.length = 0;
        expectSameHistory(forwardFilter(models, dd, opt, a), b);
      }
    if (kind === 'vehicle' && rateHz === 1 && !noHeight) expect(reacq).toBeGreaterThan(0);
    // ungated passes and their windowed re-runs after seeded changes of use
    const last = variants[variants.length - 1]!;
    const gate = forwardFilter(models, last, opt);
    const u0 = Uint8Array.from(last.use, (u, k) => (u === 0 ? 0 : gate.accepted[k] ? 2 : 0));
    for (const tol of [0, 1e-6]) {
      const work: SegmentData = { ...last, use: u0.slice() };
      const a = forwardFilter(models, work, opt);
      const b = refForwardFilter(models, work, opt);
      expectSameHistory(a, b);
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
        const wa: number[] = [], wb: number[] = [];
        forwardFilter(models, work, opt, a, { changed, tol, windows: wa });
        refForwardFilter(models, work, opt, b, { changed, tol, windows: wb });
        expect(wa).toEqual(wb);
        expectSameHistory(a, b);
      }
    }
  });

  it('the general loop still runs the cases outside the shared one (likelihood, r scale, q scale)', () => {
    const { models, data, opt } = segmentCase('vehicle', 5, 1);
    const qs = models.map(() => new Float64Array(data.N).fill(1.5));
    for (const o of [{ ...opt, likelihood: true }, { ...opt, rScale: [1.2, 1.2, 0.9] }, { ...opt, qScale: qs }]) expectSameHistory(forwardFilter(models, data, o), refForwardFilter(models, data, o));
  });
});
