/**
 * The windowed review loop (filter and smoother re-run only where a decision changed) against the
 * full re-run of every pass: same decisions, statistics and smoothed states, bit for bit.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { axisParamsFromConfig, buildAxisModels, filterOptions, prepareSession, reviewOptions, segmentData } from '../../src/session/process-session.js';
import { reviewSegment, type ReviewOutcome } from '../../src/session/review.js';
import { defaultSpec, scenarioCsv, simulate, type ScenarioKind } from '../../src/simulate/scenario.js';

function sameBits(a: Float64Array, b: Float64Array): number {
  // index of the first element that differs (NaN equals NaN), −1 when none
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return i;
  return a.length === b.length ? -1 : a.length;
}

function expectSame(w: ReviewOutcome, f: ReviewOutcome): void {
  expect(w.passes).toBe(f.passes);
  expect(w.converged).toBe(f.converged);
  expect(Array.from(w.kept)).toEqual(Array.from(f.kept));
  expect(Array.from(w.gateRejected)).toEqual(Array.from(f.gateRejected));
  expect(Array.from(w.data.use)).toEqual(Array.from(f.data.use));
  expect(sameBits(w.T, f.T)).toBe(-1);
  expect(sameBits(w.threshold, f.threshold)).toBe(-1);
  for (let a = 0; a < w.history.x.length; a++) {
    expect(sameBits(w.history.x[a]!, f.history.x[a]!)).toBe(-1);
    expect(sameBits(w.history.P[a]!, f.history.P[a]!)).toBe(-1);
  }
  expect(sameBits(w.history.nis, f.history.nis)).toBe(-1);
}

const CASES: Array<[ScenarioKind, number, number]> = [
  ['vehicle', 1, 1],
  ['vehicle', 2, 10],
  ['walk', 3, 1],
  ['drone', 4, 5],
];

describe('windowed review loop', () => {
  it.each(CASES)('%s seed %i at %i Hz: identical to full passes', (kind, seed, rateHz) => {
    const cfg = loadConfig({ profile: kind === 'walk' ? 'pedestrian' : kind });
    const sc = simulate(defaultSpec(kind, seed, { rateHz }));
    const series = readFixCsv(scenarioCsv(sc), 'w.csv', cfg);
    const ps = prepareSession(series, cfg);
    const p = axisParamsFromConfig(cfg);
    const models = buildAxisModels(p, ps.hasHeight);
    const opt = filterOptions(cfg, p);
    const ro = reviewOptions(cfg, ps.intervalSec);
    let passes = 0;
    for (const seg of ps.segments) {
      const { data } = segmentData(ps, seg, p, cfg.segments.bridgeFactor);
      const offered = data.use.slice();
      const w = reviewSegment(models, data, offered, opt, ro);
      const f = reviewSegment(models, data, offered, opt, { ...ro, windowed: false });
      expectSame(w, f);
      passes += w.passes;
      // from given decisions (the second classification's path)
      const init = { kept: w.kept.map((v, k) => (k % 7 === 0 ? 1 - v : v)), gateRejected: w.gateRejected };
      const wi = reviewSegment(models, data, offered, opt, ro, init);
      expectSame(wi, reviewSegment(models, data, offered, opt, { ...ro, windowed: false }, init));
      passes += wi.passes;
    }
    // more than one pass per review, so the windowed re-runs were exercised
    expect(passes).toBeGreaterThan(2 * ps.segments.length);
  });
});
