/**
 * The calibration's handling of fast logs (thinning), of the quality columns' exponents and of
 * the vertical correlation time (src/session/calibrate/calibrate.ts). Seeded simulator logs
 * (src/simulate/scenario.ts); default configuration unless stated.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { FIRST_ROUND, calibrateSession, calibrationStride, calibrationWindows } from '../../../src/session/calibrate/calibrate.js';
import { axisParamsFromConfig, buildAxisModels } from '../../../src/session/prepare/axis-params.js';
import { prepareSession } from '../../../src/session/prepare/prepare.js';
import { defaultSpec, scenarioCsv, simulate, type ScenarioSpec } from '../../../src/simulate/scenario.js';
import { runScenario, calibrationEstimates } from '../../helpers/score.js';

const cfg = loadConfig();

function prepared(spec: ScenarioSpec, c = cfg) {
  return prepareSession(readFixCsv(scenarioCsv(simulate(spec)), 's.csv', c), c);
}

describe('calibrationStride and calibrationWindows (4000-epoch budget)', () => {
  // rate, duration → stride (smallest that brings the log to 4000 epochs, at most the one reaching 1 s), chunks or whole
  test.each([
    [1, 1200, 1, false],
    [1, 7200, 1, true],
    [5, 600, 1, false],
    [5, 1200, 2, false],
    [10, 1440, 4, false],
    [10, 6000, 10, true],
  ] as const)('%i Hz, %i s: stride %i, in chunks: %s', (rateHz, durationSec, stride, chunked) => {
    const spec = defaultSpec('vehicle', 3, { rateHz, durationSec });
    spec.errors = { ...spec.errors, gaps: [], burstsPer100: 0 };
    const ps = prepared(spec);
    expect(calibrationStride(ps, cfg.segments.bridgeFactor, 4000)).toBe(stride);
    const w = calibrationWindows(ps, cfg.segments.bridgeFactor, 4000);
    expect(w !== null).toBe(chunked);
    // chunks: four, each 1000 thinned epochs (1000 × stride at the log's rate)
    if (w) for (const c of w) expect(c.len).toBe(1000 * stride);
  });
});

describe('the quality columns’ exponents', () => {
  /** A 10 Hz van whose white noise follows HDOP to the power `influence` (satellite count tied to HDOP). */
  const van = (seed: number, influence: number): ScenarioSpec => {
    const s = defaultSpec('vehicle', seed, { rateHz: 10, durationSec: 1440 });
    s.errors = { ...s.errors, whiteSigmaHM: 0.6, whiteSigmaVM: 1.0, gmSigmaHM: 0.8, gmSigmaVM: 1.4, gmTauSec: 60, burstsPer100: 0.1, hdopInfluence: influence };
    return s;
  };

  test('weakly informative HDOP (influence 0.3), 10 Hz, seeds 1–3: DOP exponent ≤ 0.5; clean fixes flagged ≤ 2.5 × the gate’s nominal rate pooled', () => {
    let fp = 0, clean = 0;
    for (const seed of [1, 2, 3]) {
      const sc = simulate(van(seed, 0.3));
      const { r, s } = runScenario(sc);
      const est = calibrationEstimates(r);
      console.log(`van seed ${seed}: DOP exponent ${est.hdopExponent!.value.toFixed(3)}, satellite exponent ${est.satsExponent!.value.toFixed(3)}, clean fixes flagged ${s.fp}, precision ${s.precision.toFixed(3)}`);
      expect(est.hdopExponent!.value).toBeLessThanOrEqual(0.5);
      fp += s.fp;
      clean += sc.fixes.filter((f) => !f.outlier && !f.invalid).length;
    }
    // nominal: 1 − gate probability per clean fix (before the two-sided review, which re-admits)
    const nominal = clean * (1 - cfg.gate.probability);
    console.log(`van pooled: ${fp} clean fixes flagged of ${clean} (nominal ${nominal.toFixed(1)})`);
    expect(fp).toBeLessThanOrEqual(2.5 * nominal);
  });

  // the session's estimate (the second round's, over the whole log with the decisions held fixed):
  // the first round alone reads at most 1,200 epochs and only starts the second
  test.each([1, 2, 3])('proportional HDOP (drone, 5 Hz, seed %i): DOP exponent ≥ 0.7', (seed) => {
    const { r } = runScenario(simulate(defaultSpec('drone', seed)));
    const est = calibrationEstimates(r);
    expect(est.hdopExponent!.value).toBeGreaterThanOrEqual(0.7);
    expect(est.satsExponent!.value).toBeGreaterThanOrEqual(0);
    expect(est.satsExponent!.value).toBeLessThanOrEqual(1);
  });

  test('a log without quality columns has no exponents', () => {
    const spec = defaultSpec('vehicle', 2);
    spec.errors = { ...spec.errors, varyHdop: false };
    const ps = prepared(spec);
    const { info } = calibrateSession(ps, cfg, axisParamsFromConfig(cfg), FIRST_ROUND);
    expect(info.estimates.hdopExponent).toBeUndefined();
    expect(info.estimates.satsExponent).toBeUndefined();
  });
});

describe('the vertical correlation time', () => {
  const spec = () => {
    const s = defaultSpec('vehicle', 4);
    s.errors = { ...s.errors, gmTauSec: 30, gmTauVSec: 120 };
    return s;
  };

  test("'shared' (default): the vertical model uses the horizontal estimate", () => {
    const ps = prepared(spec());
    const { params, info } = calibrateSession(ps, cfg, axisParamsFromConfig(cfg), FIRST_ROUND);
    expect(info.estimates.gmVerticalTauSec).toBeUndefined();
    expect(params.gmVerticalTauSec).toBe(params.gmTauSec);
    expect(buildAxisModels(params, true)[2]!.params.gm!.tauSec).toBe(params.gmTauSec);
  });

  test("'own': estimated apart, and the vertical model uses it", () => {
    const own = { ...cfg, noise: { ...cfg.noise, verticalCorrelationTime: 'own' as const } };
    const ps = prepared(spec(), own);
    const { params, info } = calibrateSession(ps, own, axisParamsFromConfig(own), FIRST_ROUND);
    const tauV = info.estimates.gmVerticalTauSec!.value;
    console.log(`own vertical time constant ${tauV.toFixed(1)} s, horizontal ${params.gmTauSec.toFixed(1)} s (simulated 120 / 30)`);
    expect(tauV).not.toBe(params.gmTauSec);
    expect(buildAxisModels(params, true)[2]!.params.gm!.tauSec).toBe(tauV);
    expect(buildAxisModels(params, true)[0]!.params.gm!.tauSec).toBe(params.gmTauSec);
  });
});

describe('the correlated sigma’s prior centre (noise.correlatedSigmaPrior)', () => {
  // a walk whose receiver has three times the profile's correlated error on every axis (profile 1.5 / 3 m)
  const spec = () => {
    const s = defaultSpec('walk', 5);
    s.errors = { ...s.errors, gmSigmaHM: 4.5, gmSigmaVM: 9, gmTauSec: 60, burstsPer100: 0 };
    return s;
  };
  const vertical = { ...cfg, noise: { ...cfg.noise, correlatedSigmaPrior: 'vertical' as const } };

  test("'vertical': the horizontal sigma follows the vertical evidence above the profile; qV held at ≥ 0.05 qH", () => {
    const ps = prepared(spec());
    const prof = calibrateSession(ps, cfg, axisParamsFromConfig(cfg), FIRST_ROUND);
    const vert = calibrateSession(ps, vertical, axisParamsFromConfig(vertical), FIRST_ROUND);
    const gh = (r: typeof prof) => r.params.gmHorizontalSigmaM, gv = (r: typeof prof) => r.params.gmVerticalSigmaM;
    console.log(`correlated sigma H / V: profile centre ${gh(prof).toFixed(2)} / ${gv(prof).toFixed(2)} m, vertical centre ${gh(vert).toFixed(2)} / ${gv(vert).toFixed(2)} m (simulated 4.5 / 9); qV/qH ${(prof.params.qVertical / prof.params.qHorizontal).toExponential(2)} → ${(vert.params.qVertical / vert.params.qHorizontal).toExponential(2)}`);
    // the vertical series shows more correlated error than the profile's 3 m
    expect(gv(vert)).toBeGreaterThan(3);
    // so the horizontal sigma's centre moves up (by ½ of the vertical's log excess: ~20% here) and
    // the estimate with it: above the profile-centred one by at least 5% (measured 2.11 → 2.30 m)
    expect(gh(vert)).toBeGreaterThan(1.05 * gh(prof));
    // the soft floor (one-sided, 1% at one sd): within 5% of qV = 0.05 qH or above it
    expect(vert.params.qVertical).toBeGreaterThanOrEqual(0.95 * 0.05 * vert.params.qHorizontal);
  });
});
