/**
 * Wrong sizes handed to the filter, likelihood and smoother fail at once with a message naming the
 * entry point, the array and the sizes expected (the kernels index flat arrays unchecked, so a
 * short array would otherwise read undefined and spread NaN). Right sizes, and longer arrays viewed
 * by N, pass.
 */
import { describe, expect, it } from 'vitest';
import { allocateHistory, forwardFilter, type SegmentData } from '../../src/estimation/track-filter.js';
import { forwardLogLik, makeLogLikWork } from '../../src/estimation/track-loglik.js';
import { smoothInPlace, smoothInto } from '../../src/estimation/track-smoother.js';
import { checkHistory, checkSegment } from '../../src/estimation/segment.js';
import { segmentCase } from '../helpers/history-compare.js';

const { models, data, opt } = segmentCase('vehicle', 3, 1, false);
const N = data.N;

function withShort(field: 'tSec' | 'use' | 'z1' | 'r2'): SegmentData {
  const d: SegmentData = { ...data, z: data.z.slice(), r: data.r.slice() };
  if (field === 'tSec') d.tSec = data.tSec.subarray(0, N - 1);
  if (field === 'use') d.use = data.use.subarray(0, N - 1);
  if (field === 'z1') d.z[1] = data.z[1]!.subarray(0, N - 5);
  if (field === 'r2') d.r[2] = data.r[2]!.subarray(0, 3);
  return d;
}

describe('size checks at the kernels entry points', () => {
  it.each([
    ['tSec', /forwardFilter: tSec has \d+ elements, expected at least N = \d+/],
    ['use', /forwardFilter: use has \d+ elements/],
    ['z1', /forwardFilter: z\[1\] has \d+ elements/],
    ['r2', /forwardFilter: r\[2\] has 3 elements/],
  ] as const)('forwardFilter rejects a short %s', (field, msg) => {
    expect(() => forwardFilter(models, withShort(field), opt)).toThrow(msg);
  });

  it('forwardFilter rejects a history of another length or axis count', () => {
    expect(() => forwardFilter(models, data, opt, allocateHistory(N - 1, models))).toThrow(/forwardFilter: the history holds \d+ epochs, the segment \d+/);
    expect(() => forwardFilter(models, data, opt, allocateHistory(N, models.slice(0, 2)))).toThrow(/forwardFilter: the history has 2 axes, the models 3/);
  });

  it('the smoother rejects a history whose covariance array is short, naming the axis', () => {
    const f = forwardFilter(models, data, opt);
    const bad = { ...f, P: [f.P[0]!, f.P[1]!, f.P[2]!.subarray(0, 6 * (N - 1))] };
    expect(() => smoothInPlace(models, data, bad)).toThrow(/smoothInPlace: P\[2\] has \d+ elements, expected N × 6/);
    expect(() => smoothInto(models, data, f, bad)).toThrow(/smoothInto: P\[2\]/);
  });

  it('forwardLogLik rejects a short segment and a short rScale', () => {
    const lopt = { ...opt, likelihood: true };
    expect(() => forwardLogLik(models, withShort('z1'), lopt, [1, 1, 1], makeLogLikWork(3))).toThrow(/forwardLogLik: z\[1\]/);
    expect(() => forwardLogLik(models, data, lopt, [1, 1], makeLogLikWork(3))).toThrow(/forwardLogLik: rScale has 2 elements/);
  });

  it('accepts the right sizes and arrays longer than N (views sliced by N)', () => {
    expect(() => checkSegment('t', models, data)).not.toThrow();
    const longer: SegmentData = { ...data, N: N - 10 };
    expect(() => checkSegment('t', models, longer)).not.toThrow();
    expect(() => checkHistory('t', models, forwardFilter(models, data, opt), N)).not.toThrow();
    expect(() => checkSegment('t', [], data)).toThrow(/t: 0 axis models/);
  });
});
