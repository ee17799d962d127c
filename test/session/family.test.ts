/**
 * Acceptance on the scenario family (src/simulate/family.ts, ranges in src/simulate/family-spec.ts):
 * 64 seeded logs of seven kinds — walking survey, 10 Hz delivery van, urban stop-and-go, 5 Hz survey
 * drone, tight circling walker, degraded deep urban, and real dynamics (the smartLoc ground-truth
 * drives, Reisdorf et al., TU Chemnitz, CC BY-SA 4.0, test/fixtures/smartloc, with simulated
 * receiver errors) — each read by the normal CSV reader and processed with the default
 * configuration plus only the time zone a user would set. Scoring: test/helpers/family-score.ts.
 *
 * Acceptance, pooled per kind over its logs with a floor per log:
 * - smoothed/raw horizontal RMSE ≤ 1.00 on every log; pooled ≤ 0.85 on the synthetic kinds and
 *   ≤ 0.95 on real dynamics (a smoother must not make a log worse than its fixes);
 * - 95% horizontal ellipse and ±1.96 sd_up hold the truth 90–99% of the time pooled, no log below 0.80;
 * - outlier recall ≥ 0.95 and precision ≥ 0.85 pooled;
 * - false alarms on clean fixes ≤ 2 × the gate's nominal rate (1 − gate.probability) pooled;
 * - the degraded deep-urban logs are named as outside what the model describes in summary.json.
 * Criteria the processor does not meet yet are `test.fails` with the measured figure beside them
 * (KNOWN_SHORTFALLS), so that a change that meets one shows up as a failing "expected fail": then
 * move it out of the table.
 *
 * HINDCAST_WRITE_VALIDATION=1 also writes docs/validation-family.md and README.md's pooled table from this run.
 */
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, test } from 'vitest';
import { FAMILY_KINDS, familySpecs, type FamilyKind } from '../../src/simulate/family-spec.js';
import { validationMarkdown, withReadmeFamilyTable } from '../helpers/family-doc.js';
import { poolScores, type FamilyScore, type PooledScore } from '../helpers/family-score.js';
import { poolByKind, POOLED_COLUMNS, pooledRow, runFamily, textTable } from '../helpers/family-run.js';

const REPO = join(import.meta.dirname, '..', '..');
const BASE_SEED = 1;

/**
 * Measured shortfalls of the current processor on base seed 1 (kind:criterion → figure). Each is a
 * test that must fail; delete its line when a change meets the criterion.
 */
const KNOWN_SHORTFALLS: Record<string, string> = {
  'walk:coverage-floor': '0 log(s) below 0.80 horizontally, 1 vertically (lowest 0.556)',
  'walk:false-alarms': '52 false alarms, 3.7× nominal',
  'van:every-log-ratio': '2 of 8 logs above 1.00, worst 1.039 (van-08)',
  'van:coverage-floor': '1 log(s) below 0.80 horizontally (lowest 0.786), 1 vertically (lowest 0.744)',
  'van:outliers': 'recall 0.802, precision 0.935 (324 outlier fixes)',
  'urban:every-log-ratio': '1 of 9 logs above 1.00, worst 1.374 (urban-08)',
  'urban:pooled-ratio': 'pooled 0.947',
  'urban:coverage-h': 'pooled 0.794',
  'urban:coverage-floor': '3 log(s) below 0.80 horizontally (lowest 0.463), 1 vertically (lowest 0.731)',
  'urban:outliers': 'recall 0.865, precision 0.856 (275 outlier fixes)',
  'urban:false-alarms': '40 false alarms, 8.7× nominal',
  'drone:every-log-ratio': '4 of 9 logs above 1.00, worst 1.130 (drone-01)',
  'drone:pooled-ratio': 'pooled 0.931',
  'drone:coverage-h': 'pooled 0.878',
  'drone:coverage-u': 'pooled 0.994',
  'drone:coverage-floor': '2 log(s) below 0.80 horizontally (lowest 0.490), 0 vertically',
  'drone:outliers': 'recall 0.705, precision 0.822 (958 outlier fixes)',
  'drone:false-alarms': '146 false alarms, 7.4× nominal',
  'circle:every-log-ratio': '1 of 8 logs above 1.00, worst 1.010 (circle-04)',
  'circle:pooled-ratio': 'pooled 0.896',
  'circle:coverage-h': 'pooled 0.716',
  'circle:coverage-floor': '3 log(s) below 0.80 horizontally (lowest 0.257), 1 vertically (lowest 0.798)',
  'circle:outliers': 'recall 0.928, precision 0.922 (152 outlier fixes)',
  'circle:false-alarms': '12 false alarms, 5.1× nominal',
  'degraded:coverage-h': 'pooled 1.000',
  'degraded:coverage-u': 'pooled 0.884',
  'degraded:coverage-floor': '0 log(s) below 0.80 horizontally, 2 vertically (lowest 0.750)',
  'degraded:false-alarms': '24 false alarms, 9.0× nominal',
  'real:every-log-ratio': '1 of 12 logs above 1.00, worst 1.149 (real-08)',
  'real:outliers': 'recall 0.853, precision 0.777 (273 outlier fixes)',
  'real:false-alarms': '67 false alarms, 13.8× nominal',
};

const check = (id: string) => (id in KNOWN_SHORTFALLS ? test.fails : test);

let scores: FamilyScore[] = [];
const pooled = new Map<string, PooledScore>();

beforeAll(() => {
  scores = runFamily(familySpecs(BASE_SEED), REPO);
  for (const p of poolByKind(scores)) pooled.set(p.kind, p);
  console.log(`scenario family, base seed ${BASE_SEED}, ${scores.length} logs\n${textTable(POOLED_COLUMNS, [...pooled.values()].map(pooledRow))}`);
  if (process.env.HINDCAST_WRITE_VALIDATION === '1') {
    writeFileSync(join(REPO, 'docs', 'validation-family.md'), validationMarkdown(BASE_SEED, scores));
    const readme = join(REPO, 'README.md');
    writeFileSync(readme, withReadmeFamilyTable(readFileSync(readme, 'utf8'), BASE_SEED, scores));
  }
}, 300_000);

test('the family holds at least 60 logs, every kind at least 8, and every log was processed', () => {
  expect(scores.length).toBeGreaterThanOrEqual(60);
  for (const k of FAMILY_KINDS) expect(scores.filter((s) => s.kind === k).length).toBeGreaterThanOrEqual(8);
  for (const s of scores) expect(s.epochs).toBeGreaterThan(100);
});

/**
 * A session quality verdict in a summary.json entry: the value of the first field whose name holds
 * "verdict" (at any depth), as text; undefined without one. A verdict names the session as outside
 * what the model describes unless it reads ok/good/nominal/pass/consistent.
 */
function verdictOf(v: unknown): string | undefined {
  if (v === null || typeof v !== 'object') return undefined;
  for (const [k, x] of Object.entries(v as Record<string, unknown>)) {
    // a verdict record ({ verdict: 'good', reasons: [...] }) is read for its own verdict field
    if (/verdict/i.test(k)) return typeof x === 'string' ? x : (verdictOf(x) ?? JSON.stringify(x));
    const inner = verdictOf(x);
    if (inner !== undefined) return inner;
  }
  return undefined;
}
const namesProblem = (verdict: string | undefined) => verdict !== undefined && !/^\W*(ok|good|nominal|pass|consistent)/i.test(verdict);

describe.each(FAMILY_KINDS)('family kind %s', (kind: FamilyKind) => {
  const list = () => scores.filter((s) => s.kind === kind);
  const P = () => pooled.get(kind) ?? poolScores(kind, list());
  const limit = kind === 'real' ? 0.95 : 0.85;

  check(`${kind}:every-log-ratio`)('smoothed/raw horizontal RMSE ≤ 1.00 on every log', () => {
    const over = list().filter((s) => !(s.ratio <= 1)).map((s) => `${s.id} ${s.ratio.toFixed(3)}`);
    expect(over).toEqual([]);
  });

  check(`${kind}:pooled-ratio`)(`pooled smoothed/raw horizontal RMSE ≤ ${limit}`, () => {
    expect(P().ratio).toBeLessThanOrEqual(limit);
  });

  check(`${kind}:coverage-h`)('pooled: the 95% ellipse holds the truth 90–99% of the time', () => {
    expect(P().coverH95).toBeGreaterThanOrEqual(0.9);
    expect(P().coverH95).toBeLessThanOrEqual(0.99);
  });

  check(`${kind}:coverage-u`)('pooled: ±1.96 sd_up holds the truth 90–99% of the time', () => {
    expect(P().coverU95).toBeGreaterThanOrEqual(0.9);
    expect(P().coverU95).toBeLessThanOrEqual(0.99);
  });

  check(`${kind}:coverage-floor`)('no log below 0.80 coverage, horizontal or vertical', () => {
    const low = list().filter((s) => !(s.coverH95 >= 0.8 && s.coverU95 >= 0.8)).map((s) => `${s.id} ${s.coverH95.toFixed(3)}/${s.coverU95.toFixed(3)}`);
    expect(low).toEqual([]);
  });

  check(`${kind}:outliers`)('pooled: outlier recall ≥ 0.95 and precision ≥ 0.85', () => {
    expect(P().injected).toBeGreaterThan(20);
    expect(P().recall).toBeGreaterThanOrEqual(0.95);
    expect(P().precision).toBeGreaterThanOrEqual(0.85);
  });

  check(`${kind}:false-alarms`)('pooled: false alarms on clean fixes at most 2 × the gate’s nominal rate', () => {
    expect(P().falseAlarmRatio).toBeLessThanOrEqual(2);
  });

  if (kind === 'degraded') {
    check('degraded:named')('summary.json names every degraded log as outside what the model describes, and not most other logs', () => {
      for (const s of list()) expect(namesProblem(verdictOf(s.summary)), `${s.id}: verdict ${verdictOf(s.summary)}`).toBe(true);
      // the verdict discriminates: at least half of the survey/mapping/consumer-grade logs pass
      const others = scores.filter((s) => s.kind !== 'degraded' && s.grade !== 'phone');
      expect(others.filter((s) => !namesProblem(verdictOf(s.summary))).length).toBeGreaterThanOrEqual(others.length / 2);
    });
  }
});
