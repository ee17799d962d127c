/**
 * The second calibration round on the exact gradient (estimation/track-score.ts through the chain
 * rule of calibrate.ts: the white sigma, the quality-column and reported-sigma exponents, the
 * horizontal parameters shared by east and north, the vertical time constant shared or its own)
 * against the same round on difference gradients, from the same start with the same held-fixed
 * decisions: the same maximum (log-likelihood within 0.01; every estimate within a tenth of its
 * standard error, or within 1% / 0.01 at a bound: the acceptance bound of the fast calibration), on
 * logs whose columns take each branch of the chain rule, and on every log of the scenario family
 * (familySpecs(1), the one the test suite judges). Seeded.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import type { HindcastConfig } from '../../../src/config/schema.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession } from '../../../src/session/calibrate/calibrate.js';
import { axisParamsFromConfig } from '../../../src/session/prepare/axis-params.js';
import { prepareSession } from '../../../src/session/prepare/prepare.js';
import { heldFixedDecisions } from '../../helpers/held-decisions.js';
import { FIX_QUALITY_FACTOR } from '../../../src/session/prepare/fix-noise.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';
import { gaussian } from '../../helpers/park-miller.js';
import { smartlocReader } from '../../helpers/family-run.js';
import { generateFamilyLog } from '../../../src/simulate/family.js';
import { familySpecs } from '../../../src/simulate/family-spec.js';

/** A 1 Hz walk east with a gentle climb and a correlated error, 1500 fixes; the extra columns by `kind`, the white noise following them. */
function walkCsv(kind: 'reported' | 'quality', seed: number): string {
  const g = gaussian(seed);
  const head = kind === 'reported' ? 'time,lat,lon,height,sd_east,sd_north,sd_up' : 'time,lat,lon,height,fix_quality';
  const rows = [head];
  let b = 0;
  for (let i = 0; i < 1500; i++) {
    const block = Math.floor(i / 50) % 3 === 2;
    // east and north report different sigmas (no shared covariance recursion)
    const sdE = block ? 2 : 0.5, sdN = block ? 1.4 : 0.7, sdU = block ? 3 : 1;
    const q = block ? 5 : 4;
    // the noise follows the reported sigmas half-way (α_r inside its bounds), the fix quality fully
    const half = (sd: number, med: number) => med * Math.sqrt(sd / med);
    const sE = kind === 'reported' ? half(sdE, 0.5) : (0.3 * FIX_QUALITY_FACTOR[q]!) / FIX_QUALITY_FACTOR[4]!;
    const sN = kind === 'reported' ? half(sdN, 0.7) : sE, sU = kind === 'reported' ? half(sdU, 1) : 2 * sE;
    b = 0.98 * b + 0.2 * g();
    const e = 1.2 * i + 3 * Math.sin(i / 40) + sE * g() + b, n = 2 * Math.cos(i / 70) + sN * g() + b, u = 0.01 * i + sU * g();
    const lat = 47.0 + n / 111_195, lon = 8.0 + e / (111_195 * Math.cos((47 * Math.PI) / 180));
    const t = new Date(Date.UTC(2026, 4, 3, 9, 0, i)).toISOString();
    rows.push(kind === 'reported' ? `${t},${lat.toFixed(9)},${lon.toFixed(9)},${(400 + u).toFixed(3)},${sdE},${sdN},${sdU}` : `${t},${lat.toFixed(9)},${lon.toFixed(9)},${(400 + u).toFixed(3)},${q}`);
  }
  return rows.join('\n') + '\n';
}

function compare(name: string, csv: string, cfg: HindcastConfig): void {
  const ps = prepareSession(readFixCsv(csv, `${name}.csv`, cfg), cfg);
  const prior = axisParamsFromConfig(cfg, ps.factors.reported);
  const r1 = calibrateSession(ps, cfg, prior, FIRST_ROUND);
  expect(r1.info.status, name).toBe('estimated');
  // the held-fixed decisions as processSession makes them (the two-sided review under the first round)
  const uses = heldFixedDecisions(ps, cfg, r1.params);
  const exact = calibrateSession(ps, cfg, prior, DEFAULT_CALIBRATION, r1.params, uses);
  const diff = calibrateSession(ps, cfg, prior, { ...DEFAULT_CALIBRATION, gradient: 'difference' }, r1.params, uses);
  expect(exact.info.method, name).toContain('exact gradient');
  expect(diff.info.method, name).not.toContain('exact gradient');
  expect(Math.abs(exact.info.logLikelihood - diff.info.logLikelihood), `${name}: ${exact.info.logLikelihood} vs ${diff.info.logLikelihood}`).toBeLessThan(0.01);
  for (const [nm, e] of Object.entries(exact.info.estimates)) {
    const d = diff.info.estimates[nm as keyof typeof diff.info.estimates]!;
    if (Number.isFinite(e!.se) && !e!.atBound) {
      expect(Math.abs(e!.value - d.value) / e!.se, `${name}: ${nm} ${e!.value} vs ${d.value} (se ${e!.se})`).toBeLessThan(0.1);
      // the standard errors from the exact gradient's differences against the second differences of the objective
      expect(Math.abs(e!.se - d.se) / d.se, `${name}: se of ${nm} ${e!.se} vs ${d.se}`).toBeLessThan(0.1);
    } else expect(Math.abs(e!.value - d.value), `${name}: ${nm} ${e!.value} vs ${d.value}`).toBeLessThan(nm.endsWith('Exponent') ? 0.01 : 0.01 * Math.abs(d.value));
  }
}

describe('calibration: the exact gradient reaches the difference gradient’s maximum', () => {
  it('reported sigmas, east and north different (exponent α_r, no shared recursion)', () => {
    compare('reported', walkCsv('reported', 31), loadConfig());
  }, 60000);
  it('fix-quality column with height (exponent α_q)', () => {
    compare('quality', walkCsv('quality', 32), loadConfig());
  }, 60000);
  it('HDOP and satellite columns, vehicle, the vertical time constant its own', () => {
    const cfg = loadConfig({ overrides: { noise: { verticalCorrelationTime: 'own' } } });
    compare('vehicle-own-tau', scenarioCsv(simulate(defaultSpec('vehicle', 4))), cfg);
  }, 60000);
  it('HDOP and satellite columns, vehicle, no height', () => {
    const text = scenarioCsv(simulate(defaultSpec('vehicle', 5)));
    // drop the height column
    const lines = text.trimEnd().split('\n');
    const iH = lines[0]!.split(',').indexOf('height');
    compare('vehicle-2d', lines.map((l) => l.split(',').filter((_, i) => i !== iH).join(',')).join('\n') + '\n', loadConfig());
  }, 60000);

  const read = smartlocReader(new URL('../../..', import.meta.url).pathname);
  it.each(familySpecs(1).map((sp) => [sp.id, sp] as const))('family log %s', (_id, spec) => {
    const log = generateFamilyLog(spec, read);
    compare(spec.id, log.written.text, loadConfig({ overrides: log.written.config as Record<string, unknown> }));
  }, 60000);
});
