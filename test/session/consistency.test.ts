/**
 * Statistical consistency on truth that follows the model exactly (simulate kind "model": white
 * acceleration dynamics, white + Gauss–Markov fix errors).
 * NEES: Bar-Shalom, Li, Kirubarajan (2001) §5.4.2: over N Monte Carlo runs, N·ε̄ₖ ~ χ²(N·d) at
 * each epoch for a consistent estimator; about 95% of epochs must fall in the two-sided 95% band.
 * Calibration recovery: maximum-likelihood estimates against the simulator's true parameters.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { chiSquareQuantile } from '../../src/estimation/chi-square.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { prepareSession } from '../../src/session/prepare/prepare.js';
import { processSession } from '../../src/session/process-session.js';
import { runPrepared } from '../../src/session/products/final-run.js';
import { type AxisParams } from '../../src/session/prepare/axis-params.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';
import { calibrationEstimates } from '../helpers/score.js';

const cfg = loadConfig();
const TRUE: AxisParams = {
  motion: 'cv',
  qHorizontal: 0.5,
  qVertical: 0.05,
  sigmaHorizontalM: 1.5,
  sigmaVerticalM: 3.0,
  gmHorizontalSigmaM: 1.5,
  gmVerticalSigmaM: 2.5,
  gmTauSec: 45,
};

describe('NEES of the smoothed horizontal position (model-matched truth, true parameters)', () => {
  test('at least 90% of epochs inside the 95% chi-square band over 24 runs', () => {
    const runs = 24;
    const durationSec = 400;
    let sums: Float64Array | null = null;
    let count = 0;
    for (let seed = 1; seed <= runs; seed++) {
      const sc = simulate(defaultSpec('model', 900 + seed, { durationSec }));
      const series = readFixCsv(scenarioCsv(sc), `model-${seed}.csv`, cfg);
      const r = runPrepared(prepareSession(series, cfg), cfg, TRUE, `model-${seed}`);
      if (!sums) sums = new Float64Array(r.N);
      expect(r.N).toBe(sums.length);
      for (let j = 0; j < r.N; j++) {
        const [te, tn] = sc.truthEnuAt(r.tSec[j]!);
        const [e, n] = sc.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, 0);
        // ε = eᵀ P⁻¹ e with the (diagonal) horizontal covariance
        sums[j] += (e - te) ** 2 / r.sdEnu[0][j]! ** 2 + (n - tn) ** 2 / r.sdEnu[1][j]! ** 2;
      }
      count++;
    }
    const d = 2 * count;
    const lo = chiSquareQuantile(0.025, d);
    const hi = chiSquareQuantile(0.975, d);
    let inside = 0;
    let mean = 0;
    for (const s of sums!) {
      if (s >= lo && s <= hi) inside++;
      mean += s / count / sums!.length;
    }
    const share = inside / sums!.length;
    console.log(`NEES: mean ${mean.toFixed(3)} (expected 2), ${(100 * share).toFixed(1)}% of ${sums!.length} epochs inside [${lo.toFixed(1)}, ${hi.toFixed(1)}] for χ²(${d})`);
    expect(share).toBeGreaterThanOrEqual(0.9);
    expect(mean).toBeGreaterThan(1.6);
    expect(mean).toBeLessThan(2.4);
  });
});

describe('calibration recovers the simulator parameters on a long log (2 h at 1 Hz)', () => {
  test('white noise and process noise within 25%; the correlated error within its reported uncertainty', () => {
    const sc = simulate(defaultSpec('model', 4242, { durationSec: 7200 }));
    const r = processSession(readFixCsv(scenarioCsv(sc), 'long.csv', cfg), cfg, 'long');
    const est = calibrationEstimates(r);
    const line = Object.entries(est).map(([k, v]) => `${k}=${v.value.toPrecision(3)}±${v.se.toPrecision(2)}`).join(' ');
    console.log(`estimates: ${line}`);
    const within = (k: keyof AxisParams, tol: number) => expect(Math.abs(est[k]!.value / (TRUE[k] as number) - 1)).toBeLessThanOrEqual(tol);
    within('sigmaHorizontalM', 0.25);
    within('sigmaVerticalM', 0.25);
    within('qHorizontal', 0.25);
    within('qVertical', 0.25);
    // the slow correlated error is weakly identified next to slow motion: its estimate must be
    // within three of its own standard errors of the truth (the report shows those errors)
    for (const k of ['gmHorizontalSigmaM', 'gmVerticalSigmaM', 'gmTauSec'] as const) {
      const e = est[k]!;
      expect(Number.isFinite(e.se)).toBe(true);
      expect(Math.abs(e.value - TRUE[k])).toBeLessThanOrEqual(3 * e.se);
    }
  });
});

describe('calibration recovers the correlated error where it is identifiable: static 2-hour logs at 1 Hz', () => {
  // With the platform still, the motion model's process noise goes to (near) its lower bound and the
  // wander of the fixes is the correlated error, so its sigma and time constant are identified.
  // (On the moving log above their standard errors are ±25–100%: the correlated error hides under
  // the motion at every frequency where it has power, so no estimator can pin them to 25% there.)
  test.each([4242, 11, 12])('seed %i: white noise, correlated sigma and time constant within 25%; q near zero; standard errors defined', (seed) => {
    const durationSec = 7200;
    const still = new Float64Array(durationSec * 20 + 1);
    const sc = simulate(defaultSpec('model', seed, { durationSec }), { dtSec: 0.05, e: still, n: still, u: still, durationSec });
    const r = processSession(readFixCsv(scenarioCsv(sc), 'static.csv', cfg), cfg, 'static');
    const est = calibrationEstimates(r);
    console.log(`static seed ${seed}: ${Object.entries(est).map(([k, v]) => `${k}=${v.value.toPrecision(3)}±${v.se.toPrecision(2)}`).join(' ')}`);
    expect(r.warnings.some((w) => w.message.includes('looks static'))).toBe(true);
    for (const k of ['sigmaHorizontalM', 'sigmaVerticalM', 'gmHorizontalSigmaM', 'gmVerticalSigmaM', 'gmTauSec'] as const) {
      expect(Math.abs(est[k]!.value / TRUE[k] - 1)).toBeLessThanOrEqual(0.25);
      // parameters inside their bounds get a standard error even when q sits at its lower bound
      expect(Number.isFinite(est[k]!.se)).toBe(true);
    }
    // still platform: the process noise is estimated (near) zero, not kept at the profile's 0.5 m²/s³
    expect(est.qHorizontal!.value).toBeLessThan(1e-3);
    expect(est.qVertical!.value).toBeLessThan(1e-3);
  });
});
