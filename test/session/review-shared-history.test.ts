/**
 * reviewSegment with one covariance array for east and north (where
 * horizontalShare holds, every pass writes north's covariance as a copy of east's, so the histories
 * hold one array for both) against its previous form, kept verbatim in
 * test/helpers/reference-review-segment.ts: the same passes, decisions, statistics and histories,
 * compared with Object.is on every element (north's covariances against the reference's own array).
 * With the swap test off: the reference tries the sandwiches by swapping all of them and re-running
 * the segment twice, which the current form replaces by a trial of each on its neighbourhood
 * (test/session/review-swap-trial.test.ts checks that against whole-segment re-runs).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { reviewOptions } from '../../src/session/axis-params.js';
import { reviewSegment, type ReviewOptions, type ReviewOutcome } from '../../src/session/review.js';
import { refReviewSegment } from '../helpers/reference-review-segment.js';
import { expectSameHistory, firstDiff, segmentCase } from '../helpers/history-compare.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';
import type { SegmentData } from '../../src/estimation/track-filter.js';

function expectSameOutcome(a: ReviewOutcome, b: ReturnType<typeof refReviewSegment>): void {
  expect(a.passes).toBe(b.passes);
  expect(a.converged).toBe(b.converged);
  expect(firstDiff(a.kept, b.kept)).toBe(-1);
  expect(firstDiff(a.gateRejected, b.gateRejected)).toBe(-1);
  expect(firstDiff(a.data.use, b.data.use)).toBe(-1);
  expect(firstDiff(a.T, b.T)).toBe(-1);
  expect(firstDiff(a.dof, b.dof)).toBe(-1);
  expect(firstDiff(a.threshold, b.threshold)).toBe(-1);
  expectSameHistory(a.history, b.history);
}

function copyData(d: SegmentData): SegmentData {
  return { N: d.N, tSec: d.tSec.slice(), z: d.z.map((v) => v.slice()), r: d.r.map((v) => v.slice()), use: d.use.slice() };
}

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 1, 1, false],
  ['vehicle', 2, 10, false],
  ['vehicle', 5, 10, true],
  ['walk', 3, 1, false],
  ['drone', 4, 5, false],
  ['drone', 6, 5, true],
];

describe('review with one east/north covariance array against the reference form', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): the same outcome bit for bit', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const ro: ReviewOptions = { ...reviewOptions(loadConfig({ profile: kind === 'walk' ? 'pedestrian' : kind }), 1 / rateHz), swaps: false };
    const variants: ReviewOptions[] = [ro, { ...ro, windowed: false }, { ...ro, maxPasses: 2 }];
    for (const v of variants) {
      const a = reviewSegment(models, copyData(data), data.use.slice(), opt, v);
      const b = refReviewSegment(models, copyData(data), data.use.slice(), opt, v);
      expectSameOutcome(a, b);
      // the histories do hold one array for both (and the reference two)
      expect(a.history.P[1]).toBe(a.history.P[0]);
      expect(b.history.P[1]).not.toBe(b.history.P[0]);
      // starting from given decisions (the final run of processSession)
      const init = { kept: b.kept, gateRejected: b.gateRejected };
      expectSameOutcome(reviewSegment(models, copyData(data), data.use.slice(), opt, v, init), refReviewSegment(models, copyData(data), data.use.slice(), opt, v, init));
    }
  });

  it('keeps two arrays where east and north differ (one variance changed): the same outcome', () => {
    const { models, data, opt } = segmentCase('vehicle', 7, 10);
    let k = 0;
    while (!Number.isFinite(data.r[1]![k]!)) k++;
    data.r[1]![k + 100] = data.r[1]![k + 100]! * 1.5 || 4;
    const ro: ReviewOptions = { ...reviewOptions(loadConfig({ profile: 'vehicle' }), 0.1), swaps: false };
    const a = reviewSegment(models, copyData(data), data.use.slice(), opt, ro);
    const b = refReviewSegment(models, copyData(data), data.use.slice(), opt, ro);
    expectSameOutcome(a, b);
    expect(a.history.P[1]).not.toBe(a.history.P[0]);
  });
});
