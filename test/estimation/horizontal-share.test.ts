/**
 * East and north share one model and the same measurement variances, so their covariances are the
 * same numbers: the filter and smoother compute them once (horizontalShare). Checked here against
 * the separate computation (a second model object with the same parameters turns the sharing off),
 * bit for bit, on gated logs with outliers and re-acquisitions, and on a log where it must stay off.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { makeAxisModel } from '../../src/models/axis-model.js';
import { axisParamsFromConfig, buildAxisModels, filterOptions } from '../../src/session/prepare/axis-params.js';
import { prepareSession, segmentData } from '../../src/session/prepare/prepare.js';
import { forwardFilter, horizontalShare, type SegmentData } from '../../src/estimation/track-filter.js';
import { smoothInPlace } from '../../src/estimation/track-smoother.js';
import { defaultSpec, scenarioCsv, simulate, type ScenarioKind } from '../../src/simulate/scenario.js';

function firstDiff(a: Float64Array, b: Float64Array): number {
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return i;
  return a.length === b.length ? -1 : a.length;
}

const CASES: Array<[ScenarioKind, number, number]> = [
  ['vehicle', 5, 1],
  ['vehicle', 6, 10],
  ['drone', 7, 5],
];

describe('shared east/north covariances', () => {
  it.each(CASES)('%s seed %i at %i Hz: the same bits as two separate computations', (kind, seed, rateHz) => {
    const cfg = loadConfig({ profile: kind });
    const series = readFixCsv(scenarioCsv(simulate(defaultSpec(kind, seed, { rateHz }))), 's.csv', cfg);
    const ps = prepareSession(series, cfg);
    const p = axisParamsFromConfig(cfg);
    const shared = buildAxisModels(p, ps.hasHeight);
    // the same parameters in a second object: horizontalShare is false, every axis computed alone
    const separate = [shared[0]!, makeAxisModel(shared[0]!.params), ...shared.slice(2)];
    const opt = filterOptions(cfg, p);
    let reacquired = 0;
    for (const seg of ps.segments) {
      const { data } = segmentData(ps, seg, p, cfg.segments.bridgeFactor);
      if (data.N < 3) continue;
      expect(horizontalShare(shared, data, null, null)).toBe(true);
      expect(horizontalShare(separate, data, null, null)).toBe(false);
      const a = forwardFilter(shared, data, opt);
      const b = forwardFilter(separate, data, opt);
      reacquired += a.reacquired.length;
      expect(a.reacquired).toEqual(b.reacquired);
      expect(Array.from(a.accepted)).toEqual(Array.from(b.accepted));
      for (let ax = 0; ax < shared.length; ax++) {
        expect(firstDiff(a.x[ax]!, b.x[ax]!)).toBe(-1);
        expect(firstDiff(a.P[ax]!, b.P[ax]!)).toBe(-1);
      }
      smoothInPlace(shared, data, a);
      smoothInPlace(separate, data, b);
      for (let ax = 0; ax < shared.length; ax++) {
        expect(firstDiff(a.x[ax]!, b.x[ax]!)).toBe(-1);
        expect(firstDiff(a.P[ax]!, b.P[ax]!)).toBe(-1);
      }
    }
    // the scenarios' outlier bursts make the gate re-acquire, so the inflated steps are covered too
    if (kind === 'vehicle' && rateHz === 1) expect(reacquired).toBeGreaterThan(0);
  });

  it('stays off when east and north variances differ at one epoch', () => {
    const cfg = loadConfig({ profile: 'vehicle' });
    const series = readFixCsv(scenarioCsv(simulate(defaultSpec('vehicle', 8, { rateHz: 1 }))), 's.csv', cfg);
    const ps = prepareSession(series, cfg);
    const p = axisParamsFromConfig(cfg);
    const models = buildAxisModels(p, ps.hasHeight);
    const { data } = segmentData(ps, ps.segments[0]!, p, cfg.segments.bridgeFactor);
    const k = data.use.findIndex((u, i) => u !== 0 && i > 10);
    const r1 = data.r[1]!.slice();
    r1[k] *= 4;
    const d: SegmentData = { ...data, r: [data.r[0]!, r1, ...data.r.slice(2)] };
    expect(horizontalShare(models, d, null, null)).toBe(false);
    const h = forwardFilter(models, d, filterOptions(cfg, p));
    // the north covariance differs from the east one after that epoch (computed, not copied)
    expect(firstDiff(h.P[0]!, h.P[1]!)).toBeGreaterThanOrEqual(k * 6);
    expect(firstDiff(h.P[0]!, h.P[1]!)).toBeLessThan(h.P[0]!.length);
  });
});
