/**
 * segmentDataRange (the filter inputs of a range of a segment's epochs) equals
 * the slice of the whole segment's data (segmentData, then sliceSegment), element for element with
 * Object.is: ranges at the start, the end, inside, of one epoch and empty, over logs with gaps,
 * invalid fixes, user decisions and without height. Seeded.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { sliceSegment } from '../../../src/session/prepare/prepare.js';
import { axisParamsFromConfig } from '../../../src/session/prepare/axis-params.js';
import { prepareSession, segmentData, segmentDataRange } from '../../../src/session/prepare/prepare.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';
import type { SegmentData } from '../../../src/estimation/track-filter.js';

function same(a: ArrayLike<number>, b: ArrayLike<number>): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

function expectSameData(a: SegmentData, b: SegmentData): void {
  expect(a.N).toBe(b.N);
  expect(Object.keys(a)).toEqual(Object.keys(b));
  expect(same(a.tSec, b.tSec)).toBe(true);
  expect(same(a.use, b.use)).toBe(true);
  expect(a.z.length).toBe(b.z.length);
  for (let ax = 0; ax < a.z.length; ax++) {
    expect(same(a.z[ax]!, b.z[ax]!)).toBe(true);
    expect(same(a.r[ax]!, b.r[ax]!)).toBe(true);
  }
}

describe('segmentDataRange', () => {
  it.each([
    ['vehicle', 5, 1, false],
    ['drone', 7, 5, false],
    ['vehicle', 1, 1, true],
  ] as const)('%s seed %i at %i Hz (no height: %s): the slice of the whole segment', (kind, seed, rateHz, noHeight) => {
    const cfg = loadConfig({ profile: kind });
    let csv = scenarioCsv(simulate(defaultSpec(kind, seed, { rateHz })));
    if (noHeight) {
      const lines = csv.split('\n');
      const hi = lines[0]!.split(',').indexOf('height');
      csv = lines.map((l) => (l ? l.split(',').filter((_, i) => i !== hi).join(',') : l)).join('\n');
    }
    const series = readFixCsv(csv, 's.csv', cfg);
    const decisions = new Map<number, 'keep' | 'reject'>();
    for (let i = 3; i < series.n; i += 37) decisions.set(i, i % 2 ? 'keep' : 'reject');
    const ps = prepareSession(series, cfg, decisions);
    const p = { ...axisParamsFromConfig(cfg), sigmaHorizontalM: 1.7, sigmaVerticalM: 3.1 };
    for (const seg of ps.segments) {
      const whole = segmentData(ps, seg, p, cfg.segments.bridgeFactor).data;
      const N = whole.N;
      const ranges: Array<[number, number]> = [[0, N], [0, Math.min(N, 10)], [Math.max(0, N - 7), N], [N >> 2, (3 * N) >> 2], [N >> 1, (N >> 1) + 1], [N >> 1, N >> 1]];
      for (const [a, b] of ranges) expectSameData(segmentDataRange(ps, seg, p, cfg.segments.bridgeFactor, a, b), sliceSegment(whole, a, b));
    }
  });
});
