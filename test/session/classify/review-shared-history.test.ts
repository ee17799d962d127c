/**
 * reviewSegment holds one covariance array for east and north where horizontalShare holds (the same
 * model object, the same measurement variances, measured together): every pass then writes north's
 * covariance as a copy of east's. The copy must be what computing north's covariances gives: the
 * same review with north given an equal but distinct model object (so horizontalShare is false and
 * the filter, smoother and review compute north's covariances in their own array) yields the same
 * passes, decisions, statistics and histories, compared with Object.is on every element; with and
 * without windowed re-runs, the swap test, a pass limit, and given starting decisions.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { reviewOptions } from '../../../src/session/prepare/axis-params.js';
import { reviewSegment, type ReviewOptions, type ReviewOutcome } from '../../../src/session/classify/review.js';
import { expectSameHistory, firstDiff, segmentCase } from '../../helpers/history-compare.js';
import type { AxisModel } from '../../../src/models/axis-model.js';
import type { ScenarioKind } from '../../../src/simulate/truth.js';
import type { SegmentData } from '../../../src/estimation/track-filter.js';

function expectSameOutcome(a: ReviewOutcome, b: ReviewOutcome): void {
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

/** The same models with north's an equal copy of east's (a distinct object: no sharing). */
function separateNorth(models: AxisModel[]): AxisModel[] {
  return [models[0]!, { ...models[0]! }, ...models.slice(2)];
}

const CASES: Array<[ScenarioKind, number, number, boolean]> = [
  ['vehicle', 1, 1, false],
  ['vehicle', 2, 10, false],
  ['vehicle', 5, 10, true],
  ['walk', 3, 1, false],
  ['drone', 4, 5, false],
  ['drone', 6, 5, true],
];

describe('review with one east/north covariance array = with north computed in its own', () => {
  it.each(CASES)('%s seed %i at %i Hz (no height: %s): the same outcome bit for bit', (kind, seed, rateHz, noHeight) => {
    const { models, data, opt } = segmentCase(kind, seed, rateHz, noHeight);
    const apart = separateNorth(models);
    const ro: ReviewOptions = reviewOptions(loadConfig({ profile: kind === 'walk' ? 'pedestrian' : kind }), 1 / rateHz);
    const variants: ReviewOptions[] = [ro, { ...ro, swaps: false }, { ...ro, windowed: false }, { ...ro, maxPasses: 2 }];
    for (const v of variants) {
      const a = reviewSegment(models, copyData(data), data.use.slice(), opt, v);
      const b = reviewSegment(apart, copyData(data), data.use.slice(), opt, v);
      expectSameOutcome(a, b);
      // one array for both where the models are shared, two where they are not
      expect(a.history.P[1]).toBe(a.history.P[0]);
      expect(b.history.P[1]).not.toBe(b.history.P[0]);
      // starting from given decisions (the final run of processSession)
      const init = { kept: b.kept, gateRejected: b.gateRejected };
      expectSameOutcome(reviewSegment(models, copyData(data), data.use.slice(), opt, v, init), reviewSegment(apart, copyData(data), data.use.slice(), opt, v, init));
    }
  });

  it('keeps two arrays where east and north variances differ (one variance changed)', () => {
    const { models, data, opt } = segmentCase('vehicle', 7, 10);
    let k = 0;
    while (!Number.isFinite(data.r[1]![k]!)) k++;
    data.r[1]![k + 100] = data.r[1]![k + 100]! * 1.5 || 4;
    const ro: ReviewOptions = { ...reviewOptions(loadConfig({ profile: 'vehicle' }), 0.1), swaps: false };
    const a = reviewSegment(models, copyData(data), data.use.slice(), opt, ro);
    expect(a.history.P[1]).not.toBe(a.history.P[0]);
    // north's variance differs from east's from the changed epoch on
    expect(a.history.P[1]![(k + 100) * 6]).not.toBe(a.history.P[0]![(k + 100) * 6]);
  });
});
