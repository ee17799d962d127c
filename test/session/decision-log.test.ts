/**
 * Every flagged fix names the test that decided, with that test's statistic and threshold: on
 * seeded simulator logs with outlier bursts (walk, vehicle, drone; bursts raised to 3 per 100
 * fixes), no flagged fix shows a statistic at or below the threshold of the test it is said to have
 * failed, every rejected fix has a deciding test, the margin is statistic / threshold − 1, the ids
 * are unique, and outliers.csv carries the same figures.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { STATUS } from '../../src/session/result/result.js';
import { outliersCsv, OUTLIER_COLUMNS } from '../../src/output/outliers-csv.js';
import { DEFAULT_ERRORS, defaultSpec, scenarioCsv, simulate, type ScenarioKind } from '../../src/simulate/scenario.js';
import { parse } from 'csv-parse/sync';
import { applyReviewDecisions, reviewThresholds } from '../../src/session/classify/review-decisions.js';
import type { DecisionLog } from '../../src/session/result/decision-log.js';

const CASES: Array<[ScenarioKind, number]> = [
  ['walk', 1], ['walk', 2], ['vehicle', 3], ['vehicle', 5], ['drone', 4], ['drone', 6],
];

describe.each(CASES)('deciding tests of %s seed %i (bursts 3 per 100 fixes)', (kind, seed) => {
  const cfg = loadConfig();
  const sc = simulate(defaultSpec(kind, seed, { durationSec: 600, errors: { ...DEFAULT_ERRORS[kind], burstsPer100: 3 } }));
  const series = readFixCsv(scenarioCsv(sc), `${kind}-${seed}.csv`, cfg);
  const r = processSession(series, cfg, `${kind}-${seed}`);
  const tested = r.outliers.filter((o) => o.test !== 'invalid' && o.test !== 'user');

  test('there are flagged fixes of the filter to judge', () => {
    expect(tested.length).toBeGreaterThan(3);
  });

  test('every flagged fix shows a statistic above the threshold of the test that decided', () => {
    for (const o of tested) {
      expect(['forward-gate', 'backward-gate', 'review', 'swap']).toContain(o.test);
      expect(o.testStatistic, `${o.id} ${o.test}`).toBeGreaterThan(o.testThreshold);
      // relative margin, to rounding (1e-12)
      expect(Math.abs(o.margin - (o.testStatistic / o.testThreshold - 1))).toBeLessThan(1e-12);
      expect(o.margin).toBeGreaterThan(0);
    }
  });

  test('no rejected fix is taken back: its review statistic exceeds the re-admission threshold', () => {
    for (const o of tested) expect(o.statistic, o.id).toBeGreaterThan(o.readmitThreshold);
  });

  test('the detail names the deciding test and its figures', () => {
    const word = { 'forward-gate': 'forward chi-square gate', 'backward-gate': 'time-reversed chi-square gate', review: 'two-sided review', swap: 'swap test' } as const;
    for (const o of tested) {
      expect(o.detail).toContain(word[o.test as keyof typeof word]);
      expect(o.detail).toContain(o.testStatistic.toFixed(2));
    }
  });

  test('one record per flagged epoch, ids unique', () => {
    let flagged = 0;
    for (let j = 0; j < r.N; j++) if (r.fix[j]! >= 0 && r.status[j] === STATUS.outlier) flagged++;
    const invalidOutOfTrack = r.outliers.filter((o) => o.test === 'invalid').length;
    expect(r.outliers.length).toBeGreaterThanOrEqual(flagged);
    expect(r.outliers.length).toBeLessThanOrEqual(flagged + invalidOutOfTrack);
    expect(new Set(r.outliers.map((o) => o.id)).size).toBe(r.outliers.length);
    for (const o of r.outliers) expect(o.id).toMatch(new RegExp(`^L${o.line}(-\\d+)?$`));
  });

  test('outliers.csv carries the id, the test and its figures (3 decimals)', () => {
    const rows = parse(outliersCsv(r), { columns: true }) as Array<Record<string, string>>;
    expect(Object.keys(rows[0]!)).toEqual([...OUTLIER_COLUMNS]);
    expect(rows.length).toBe(r.outliers.length);
    rows.forEach((row, i) => {
      const o = r.outliers[i]!;
      expect(row.id).toBe(o.id);
      expect(row.test).toBe(o.test);
      if (o.test === 'invalid' || o.test === 'user') {
        expect(row.statistic).toBe('');
        return;
      }
      expect(Number(row.statistic)).toBeCloseTo(o.testStatistic, 3);
      expect(Number(row.threshold)).toBeCloseTo(o.testThreshold, 3);
      expect(Number(row.statistic)).toBeGreaterThan(Number(row.threshold));
    });
  });
});

describe('the decision log of the review step (applyReviewDecisions)', () => {
  // five gated fixes 1 s apart, guard 2 s: the worst failing one is rejected, its neighbour within
  // the guard waits; a rejected fix that passes the re-admission threshold comes back
  const th = reviewThresholds(0.999);
  test.each([
    { name: 'rejects the worst within the guard and records its T and threshold', T: [1, 30, 20, 1, 1], kept: [1, 1, 1, 1, 1], out: [1], logged: { 1: 30 } },
    { name: 're-admits a clearly consistent fix and drops its entry', T: [1, 1, 1, 1, 1], kept: [1, 0, 1, 1, 1], out: [], logged: {} },
  ])('$name', ({ T, kept, out, logged }) => {
    const N = T.length;
    const offered = new Uint8Array(N).fill(1);
    const k = Uint8Array.from(kept);
    const dof = new Uint8Array(N).fill(2);
    const thr = new Float64Array(N).fill(th.reject[2]!);
    const log: DecisionLog = new Map([[1, { test: 'forward-gate', statistic: 50, threshold: 13.8, dof: 2 }]]);
    applyReviewDecisions(N, offered, k, Float64Array.from(T), dof, thr, Float64Array.from({ length: N }, (_, i) => i), th, 2, log);
    expect([...k.keys()].filter((i) => !k[i])).toEqual(out);
    expect(Object.fromEntries([...log].map(([i, d]) => [i, d.statistic]))).toEqual(logged);
    for (const d of log.values()) {
      expect(d.test).toBe('review');
      expect(d.threshold).toBe(th.reject[2]);
    }
  });
});
