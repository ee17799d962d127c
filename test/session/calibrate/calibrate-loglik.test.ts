/**
 * calibrateSession's objective takes forwardLogLik (no history) where it applies, and forwardFilter
 * with the likelihood plus totalLogLik otherwise; the two must give the same calibration. Here the
 * same calibration is run twice, once as it is and once with forwardLogLikApplies answering "no"
 * (a module mock, so every evaluation takes the general path): parameters, estimates, standard
 * errors, log-likelihood and evaluation counts compared with Object.is. Cases: a log used whole
 * (short), a 5 Hz log used whole after thinning, one taken in thinned chunks (longer than the
 * 4000-epoch subset even thinned to 1 Hz), one without height, and a second round with held-fixed
 * decisions (kept and rejected fixes, the first epoch of a segment rejected). Seeded.
 */
import { describe, expect, it, vi } from 'vitest';

/** While true, forwardLogLikApplies answers false: the calibration evaluates every objective by forwardFilter. */
const general = vi.hoisted(() => ({ on: false, calls: 0 }));
vi.mock('../../../src/estimation/track-loglik.js', async (importOriginal) => {
  const m = await importOriginal<typeof import('../../../src/estimation/track-loglik.js')>();
  return {
    ...m,
    forwardLogLikApplies: (...a: Parameters<typeof m.forwardLogLikApplies>) => {
      const applies = m.forwardLogLikApplies(...a);
      if (applies) general.calls++;
      return general.on ? false : applies;
    },
  };
});
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession, calibrationStride, calibrationWindows } from '../../../src/session/calibrate/calibrate.js';
import { axisParamsFromConfig } from '../../../src/session/prepare/axis-params.js';
import { prepareSession, segmentData } from '../../../src/session/prepare/prepare.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';
import { rng } from '../../helpers/park-miller.js';

/** calibrateSession with every objective evaluated by forwardFilter and totalLogLik. */
function generalCalibrate(...a: Parameters<typeof calibrateSession>): ReturnType<typeof calibrateSession> {
  general.on = true;
  try {
    return calibrateSession(...a);
  } finally {
    general.on = false;
  }
}

/** Every number of two results the same (Object.is), NaN and −0 included. */
function expectSame(a: unknown, b: unknown, path = ''): void {
  if (typeof a === 'number' && typeof b === 'number') {
    if (!Object.is(a, b)) expect(`${path}: ${a}`).toBe(`${path}: ${b}`);
    return;
  }
  if (a && b && typeof a === 'object' && typeof b === 'object') {
    expect(Object.keys(a).sort()).toEqual(Object.keys(b).sort());
    for (const k of Object.keys(a)) expectSame((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`);
    return;
  }
  expect(a).toEqual(b);
}

function session(seed: number, rateHz: number, durationSec: number, noHeight = false) {
  const cfg = loadConfig({ profile: 'vehicle' });
  const spec = defaultSpec('vehicle', seed, { rateHz });
  spec.durationSec = durationSec;
  let csv = scenarioCsv(simulate(spec));
  if (noHeight) {
    const lines = csv.split('\n');
    const hi = lines[0]!.split(',').indexOf('height');
    csv = lines.map((l) => (l ? l.split(',').filter((_, i) => i !== hi).join(',') : l)).join('\n');
  }
  const ps = prepareSession(readFixCsv(csv, 's.csv', cfg), cfg);
  return { cfg, ps, prior: axisParamsFromConfig(cfg) };
}

describe('calibrateSession: the objective without histories = with the objective by forwardFilter', () => {
  it.each([
    ['whole log (1 Hz, 20 min)', 5, 1, 1200, false, false, 1],
    ['whole log thinned (5 Hz, 20 min)', 6, 5, 1200, false, false, 2],
    ['thinned chunks of a longer log (5 Hz, 80 min)', 6, 5, 4800, false, true, 5],
    ['no height (1 Hz, 20 min)', 1, 1, 1200, true, false, 1],
  ] as const)('%s: first round', (_name, seed, rateHz, dur, noHeight, chunked, stride) => {
    const { cfg, ps, prior } = session(seed, rateHz, dur, noHeight);
    expect(calibrationWindows(ps, cfg.segments.bridgeFactor, 4000) !== null).toBe(chunked);
    expect(calibrationStride(ps, cfg.segments.bridgeFactor, 4000)).toBe(stride);
    general.calls = 0;
    const a = calibrateSession(ps, cfg, prior, FIRST_ROUND);
    // the fast objective was taken (else the comparison below would compare a path with itself)
    expect(general.calls).toBeGreaterThan(0);
    const b = generalCalibrate(ps, cfg, prior, FIRST_ROUND);
    expect(a.info.status).toBe('estimated');
    expectSame(a, b);
  });

  it('second round with held-fixed decisions and standard errors', () => {
    const { cfg, ps, prior } = session(5, 1, 1200);
    const start = calibrateSession(ps, cfg, prior, FIRST_ROUND).params;
    const r = rng(4242);
    const uses = new Map<number, Uint8Array>();
    ps.segments.forEach((seg, si) => {
      const u = segmentData(ps, seg, start, cfg.segments.bridgeFactor).data.use.slice();
      for (let k = 0; k < u.length; k++) if (u[k] !== 0) u[k] = r() < 0.03 ? 0 : 2;
      // a segment whose first epoch is rejected (whole segments are used as they are)
      if (si === 0) u[0] = 0;
      uses.set(si, u);
    });
    const a = calibrateSession(ps, cfg, prior, DEFAULT_CALIBRATION, start, uses);
    const b = generalCalibrate(ps, cfg, prior, DEFAULT_CALIBRATION, start, uses);
    expect(Number.isFinite(a.info.estimates.gmTauSec!.se)).toBe(true);
    expectSame(a, b);
  });
});
