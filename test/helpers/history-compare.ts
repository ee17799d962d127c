/**
 * Shared by the bit-for-bit tests of the filter and smoother's fast paths against their general
 * paths (test/estimation/forward-filter.test.ts, smoother-share.test.ts, one-horizontal-cov.test.ts):
 * a segment of a seeded scenario, and a comparison of two histories with Object.is on every element.
 */
import { expect } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { axisParamsFromConfig, buildAxisModels, filterOptions } from '../../src/session/prepare/axis-params.js';
import { prepareSession, segmentData } from '../../src/session/prepare/prepare.js';
import type { FilterHistory, SegmentData } from '../../src/estimation/track-filter.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';
import type { ScenarioKind } from '../../src/simulate/truth.js';

export function firstDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return i;
  return a.length === b.length ? -1 : a.length;
}

export function expectSameHistory(a: FilterHistory, b: FilterHistory): void {
  expect(a.N).toBe(b.N);
  for (let ax = 0; ax < a.x.length; ax++) {
    expect(firstDiff(a.x[ax]!, b.x[ax]!)).toBe(-1);
    expect(firstDiff(a.P[ax]!, b.P[ax]!)).toBe(-1);
  }
  expect(firstDiff(a.nis, b.nis)).toBe(-1);
  expect(firstDiff(a.dof, b.dof)).toBe(-1);
  expect(firstDiff(a.threshold, b.threshold)).toBe(-1);
  expect(firstDiff(a.accepted, b.accepted)).toBe(-1);
  expect(firstDiff(a.logLik, b.logLik)).toBe(-1);
  expect(a.reacquired).toEqual(b.reacquired);
  expect([...a.extraQ.keys()]).toEqual([...b.extraQ.keys()]);
  for (const [k, e] of a.extraQ) e.forEach((v, ax) => expect(firstDiff(v, b.extraQ.get(k)![ax]!)).toBe(-1));
}

/** A segment of a seeded scenario and its models (heights dropped for `noHeight`). */
export function segmentCase(kind: ScenarioKind, seed: number, rateHz: number, noHeight = false) {
  const cfg = loadConfig({ profile: kind === 'walk' ? 'pedestrian' : kind });
  const sc = simulate(defaultSpec(kind, seed, { rateHz }));
  let csv = scenarioCsv(sc);
  if (noHeight) {
    // drop the height column
    const lines = csv.split('\n');
    const hi = lines[0]!.split(',').indexOf('height');
    csv = lines.map((l) => (l ? l.split(',').filter((_, i) => i !== hi).join(',') : l)).join('\n');
  }
  const series = readFixCsv(csv, 's.csv', cfg);
  const ps = prepareSession(series, cfg);
  const p = axisParamsFromConfig(cfg);
  const models = buildAxisModels(p, ps.hasHeight);
  let best = ps.segments[0]!;
  for (const s of ps.segments) if (s[1] - s[0] > best[1] - best[0]) best = s;
  const { data } = segmentData(ps, best, p, cfg.segments.bridgeFactor);
  return { models, data, opt: filterOptions(cfg, p) };
}

/** A step of at least 40 fixes and 8 s displaced by 60 m horizontally from a third of the way in (the gate rejects them and re-acquires). */
export function withBurst(d: SegmentData): SegmentData {
  const z = d.z.map((a) => a.slice());
  let k = Math.floor(d.N / 3);
  const t0 = d.tSec[k]!;
  // at least 40 fixes and 8 s, longer than the default re-acquisition duration (5.5 s), so the filter re-acquires at every rate
  for (let n = 0; (n < 40 || d.tSec[k]! - t0 < 8) && k < d.N; k++) {
    if (!Number.isFinite(z[0]![k]!)) continue;
    z[0]![k] += 60;
    z[1]![k] -= 45;
    n++;
  }
  return { ...d, z };
}
