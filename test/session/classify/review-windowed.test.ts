/**
 * The windowed review loop (filter and smoother re-run only where a decision changed, until the
 * states are back within RERUN_TOL of the previous pass) against the full re-run of every pass:
 * the same decisions and passes; statistics, smoothed states and covariances within a small multiple
 * of the tolerance (each pass can add up to RERUN_TOL where its windows end).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { axisParamsFromConfig, buildAxisModels, filterOptions, reviewOptions } from '../../../src/session/prepare/axis-params.js';
import { prepareSession, segmentData } from '../../../src/session/prepare/prepare.js';
import { RERUN_TOL, reviewSegment, type ReviewOutcome } from '../../../src/session/classify/review.js';
import { defaultSpec, scenarioCsv, simulate, type ScenarioKind } from '../../../src/simulate/scenario.js';

/** Largest |a − b| over the elements (NaN must match NaN; a NaN against a number counts as Infinity). */
function maxDiff(a: Float64Array, b: Float64Array): number {
  if (a.length !== b.length) return Infinity;
  let m = 0;
  for (let i = 0; i < a.length; i++) {
    const an = Number.isNaN(a[i]!), bn = Number.isNaN(b[i]!);
    if (an || bn) {
      if (an !== bn) return Infinity;
      continue;
    }
    m = Math.max(m, Math.abs(a[i]! - b[i]!));
  }
  return m;
}

/** States and covariances: within 20 passes' worth of the tolerance; review statistics (dimensionless χ²) within 1e-3. */
const STATE_TOL = 20 * RERUN_TOL;
const STAT_TOL = 1e-3;

function expectSame(w: ReviewOutcome, f: ReviewOutcome): void {
  expect(w.passes).toBe(f.passes);
  expect(w.converged).toBe(f.converged);
  expect(Array.from(w.kept)).toEqual(Array.from(f.kept));
  expect(Array.from(w.gateRejected)).toEqual(Array.from(f.gateRejected));
  expect(Array.from(w.data.use)).toEqual(Array.from(f.data.use));
  expect(maxDiff(w.T, f.T)).toBeLessThanOrEqual(STAT_TOL);
  expect(maxDiff(w.threshold, f.threshold)).toBe(0);
  for (let a = 0; a < w.history.x.length; a++) {
    expect(maxDiff(w.history.x[a]!, f.history.x[a]!)).toBeLessThanOrEqual(STATE_TOL);
    expect(maxDiff(w.history.P[a]!, f.history.P[a]!)).toBeLessThanOrEqual(STATE_TOL);
  }
  expect(maxDiff(w.history.nis, f.history.nis)).toBeLessThanOrEqual(STAT_TOL);
}

const CASES: Array<[ScenarioKind, number, number]> = [
  ['vehicle', 1, 1],
  ['vehicle', 2, 10],
  ['walk', 3, 1],
  ['drone', 4, 5],
];

describe('windowed review loop', () => {
  it.each(CASES)('%s seed %i at %i Hz: same decisions as full passes, states within tolerance', (kind, seed, rateHz) => {
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
