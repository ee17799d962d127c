/**
 * The calibration's quasi-Newton maximizer (estimation/bfgs-box.ts, used where the outlier decisions
 * are held fixed) against the plain Nelder–Mead simplex on the same objective: on every log of the
 * accuracy scenarios (walk, vehicle, drone; seeds 1–6) and one log of each kind of the scenario
 * family (familySpecs(1)), the second calibration round, from the same start and with the same
 * held-fixed decisions, must reach the same maximum: log-likelihood within 0.01 and every estimate
 * within a tenth of its standard error (the acceptance bound of the fast calibration). The simplex
 * reference is given a budget of 4000 evaluations and restarted once from its own optimum (common
 * practice for Nelder–Mead, which can stall before the optimum). Seeded.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import type { HindcastConfig } from '../../../src/config/schema.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession, type CalibrationOptions } from '../../../src/session/calibrate/calibrate.js';
import { axisParamsFromConfig } from '../../../src/session/prepare/axis-params.js';
import { prepareSession } from '../../../src/session/prepare/prepare.js';
import { heldFixedDecisions } from '../../helpers/held-decisions.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';
import { generateFamilyLog } from '../../../src/simulate/family.js';
import { FAMILY_KINDS, familySpecs } from '../../../src/simulate/family-spec.js';
import { smartlocReader } from '../../helpers/family-run.js';

const NM: CalibrationOptions = { ...DEFAULT_CALIBRATION, optimizer: 'nelder-mead', maxEvaluations: 4000 };
/** Evaluation counts of the second round per log: [quasi-Newton, Nelder–Mead at the default budget]. */
const counts: Array<[string, number, number]> = [];
/** Logs where the simplex from the common start stalled below the quasi-Newton maximum. */
const stalled: string[] = [];

function check(name: string, csv: string, file: string, cfg: HindcastConfig): void {
  const ps = prepareSession(readFixCsv(csv, file, cfg), cfg);
  const prior = axisParamsFromConfig(cfg, ps.factors.reported);
  const r1 = calibrateSession(ps, cfg, prior, FIRST_ROUND);
  expect(r1.info.status, name).toBe('estimated');
  // the held-fixed decisions as processSession makes them (the two-sided review under the first round)
  const uses = heldFixedDecisions(ps, cfg, r1.params);
  const fast = calibrateSession(ps, cfg, prior, DEFAULT_CALIBRATION, r1.params, uses);
  let ref = calibrateSession(ps, cfg, prior, NM, r1.params, uses);
  const again = calibrateSession(ps, cfg, prior, NM, ref.params, uses);
  if (again.info.logLikelihood > ref.info.logLikelihood) ref = again;
  // where the simplex stopped below the quasi-Newton optimum (family drone-01: 3.7 below; van-01:
  // 0.009 below, τ 2 s off on its flat ridge), the maximum it finds started at that optimum is the
  // reference: it must not improve on it by more than the bound
  if (fast.info.logLikelihood > ref.info.logLikelihood) {
    stalled.push(name);
    ref = calibrateSession(ps, cfg, prior, NM, fast.params, uses);
  }
  const plain = calibrateSession(ps, cfg, prior, { ...DEFAULT_CALIBRATION, optimizer: 'nelder-mead' }, r1.params, uses);
  counts.push([name, fast.info.evaluations, plain.info.evaluations]);
  expect(fast.info.method, name).toContain('quasi-Newton');
  // log-likelihood within 0.01 (acceptance bound)
  expect(Math.abs(fast.info.logLikelihood - ref.info.logLikelihood), `${name}: log-likelihood ${fast.info.logLikelihood} vs ${ref.info.logLikelihood}`).toBeLessThan(0.01);
  for (const [nm, e] of Object.entries(fast.info.estimates)) {
    const r = ref.info.estimates[nm as keyof typeof ref.info.estimates]!;
    // every estimate within 0.1 standard error (acceptance bound); at or near a bound (no standard
    // error) within 1% (log parameters) or 0.01 (the exponents)
    if (Number.isFinite(e!.se) && !e!.atBound) expect(Math.abs(e!.value - r.value) / e!.se, `${name}: ${nm} ${e!.value} vs ${r.value} (se ${e!.se})`).toBeLessThan(0.1);
    else expect(Math.abs(e!.value - r.value), `${name}: ${nm} ${e!.value} vs ${r.value}`).toBeLessThan(nm.endsWith('Exponent') ? 0.01 : 0.01 * Math.abs(r.value));
  }
}

describe('calibration: the quasi-Newton maximizer reaches the simplex maximum', () => {
  for (const kind of ['walk', 'vehicle', 'drone'] as const)
    it.each([1, 2, 3, 4, 5, 6])(`${kind} seed %i (accuracy scenario)`, (seed) => {
      check(`${kind}-${seed}`, scenarioCsv(simulate(defaultSpec(kind, seed))), `${kind}-${seed}.csv`, loadConfig());
    }, 120000);

  const read = smartlocReader(new URL('../../..', import.meta.url).pathname);
  const family = familySpecs(1, Object.fromEntries(FAMILY_KINDS.map((k) => [k, 1])));
  it.each(family.map((s) => [s.id, s] as const))('family log %s', (_id, spec) => {
    const log = generateFamilyLog(spec, read);
    const cfg = loadConfig({ overrides: log.written.config as Record<string, unknown> });
    check(spec.id, log.written.text, log.written.fileName, cfg);
  }, 120000);

  it('needs far fewer evaluations than the simplex (at least 2× fewer in total over the logs)', () => {
    const q = counts.reduce((a, c) => a + c[1], 0), n = counts.reduce((a, c) => a + c[2], 0);
    console.log(counts.map((c) => `${c[0]}: ${c[1]} / ${c[2]}`).join('\n'), `\ntotal quasi-Newton ${q}, Nelder–Mead ${n}; simplex stalled below on ${stalled.join(', ') || 'none'}`);
    expect(counts.length).toBe(18 + FAMILY_KINDS.length);
    expect(2 * q).toBeLessThan(n);
  });
});
