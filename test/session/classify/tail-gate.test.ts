/**
 * The gate fitted to the tails of a log's errors (src/session/classify/tail-gate.ts):
 * - the exponential-power shape from the ratio of the deviate's 0.95 and 0.75 quantiles, against
 *   the closed forms of its two named members (Box & Tiao 1973 §3.2.1: β = 2 the normal, β = 1 the
 *   Laplace distribution);
 * - the threshold factor against a hand derivation for the Laplace case;
 * - the fit on seeded statistics: χ² (Gaussian errors) leaves the gate alone, Student t errors
 *   widen it, the same large values in runs (misfit) do not;
 * - on a heavy-tailed log of the scenario family, fewer clean fixes flagged, the outliers still found.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { fitTailGate, HEAVY_SHAPE, MAX_CLUSTERING, MAX_FACTOR, shapeForRatio, thresholdFactor } from '../../../src/session/classify/tail-gate.js';
import { chiSquareQuantile } from '../../../src/estimation/chi-square.js';
import { Rng } from '../../../src/simulate/rng.js';
import { familySpecs } from '../../../src/simulate/family-spec.js';
import { generateFamilyLog } from '../../../src/simulate/family.js';
import { smartlocReader } from '../../helpers/family-run.js';
import { runFamilyLog } from '../../helpers/family-score.js';

// Φ⁻¹(0.875) and Φ⁻¹(0.975): the 0.75 and 0.95 quantiles of |Z| (common practice, standard normal table)
const Z875 = 1.1503493803760079;
const Z975 = 1.959963984540054;

describe('exponential-power shape from the quantile ratio', () => {
  it('the normal ratio Φ⁻¹(0.975)/Φ⁻¹(0.875) = 1.7038 gives β = 2 (Box & Tiao §3.2.1; nothing widened)', () => {
    expect(shapeForRatio(Z975 / Z875 - 1e-9)).toBe(2);
    expect(shapeForRatio(1.5)).toBe(2);
  });
  it('the Laplace ratio ln 20 / ln 4 = 2.16096 gives β = 1 (|X| exponential: quantile −ln(1 − p); derived; tol 1e-6)', () => {
    expect(Math.abs(shapeForRatio(Math.log(20) / Math.log(4)) - 1)).toBeLessThan(1e-6);
  });
  it('a ratio beyond the search range stops at its lower bound 0.5', () => {
    expect(shapeForRatio(50)).toBe(0.5);
  });
});

describe('threshold factor', () => {
  it('is 1 for Gaussian tails at the Gaussian bulk (tol 1e-9)', () => {
    expect(Math.abs(thresholdFactor(2, Z875, 0.9995) - 1)).toBeLessThan(1e-9);
  });
  it('Laplace at p = 0.95: (Φ⁻¹(0.875) · ln 20 / ln 4 ÷ Φ⁻¹(0.975))² = 1.6086 (derived by hand; tol 1e-3)', () => {
    const expected = ((Z875 * Math.log(20)) / Math.log(4) / Z975) ** 2;
    expect(Math.abs(expected - 1.6086)).toBeLessThan(1e-3);
    expect(Math.abs(thresholdFactor(1, Z875, 0.95) - expected)).toBeLessThan(1e-6);
  });
  it('is held to [1, MAX_FACTOR]', () => {
    expect(thresholdFactor(0.6, Z875, 0.9995)).toBe(MAX_FACTOR);
    expect(thresholdFactor(2, 0.5, 0.9995)).toBe(1);
  });
});

/** Seeded review statistics of n fixes with three measured axes, each axis's standardized error from `draw`. */
function statistics(n: number, draw: (k: number) => number) {
  const T = new Float64Array(n), dof = new Uint8Array(n).fill(3), offered = new Uint8Array(n).fill(1);
  for (let k = 0; k < n; k++) T[k] = draw(k) ** 2 + draw(k) ** 2 + draw(k) ** 2;
  return [{ T, dof, offered }];
}

/** Student t with ν dof scaled to unit variance (z / √(χ²_ν/ν) · √((ν−2)/ν)). */
function student(rng: Rng, nu: number): number {
  let chi = 0;
  for (let i = 0; i < nu; i++) chi += rng.normal() ** 2;
  return (rng.normal() / Math.sqrt(chi / nu)) * Math.sqrt((nu - 2) / nu);
}

describe('fit on seeded statistics', () => {
  it('Gaussian errors (T ~ χ²(3)): the configured gate', () => {
    const rng = new Rng(11);
    const g = fitTailGate(statistics(8000, () => rng.normal()), 0.9995)!;
    console.log(`Gaussian: ratio ${g.quantileRatio.toFixed(3)}, shape ${g.shape.toFixed(2)}, clustering ${g.clustering.toFixed(3)}`);
    expect(g.shape).toBeGreaterThan(HEAVY_SHAPE);
    expect(g.factor).toBe(1);
    expect(g.probability).toBe(0.9995);
  });
  it('Student t errors with 4 dof: shape below HEAVY_SHAPE, isolated, the gate widened', () => {
    const rng = new Rng(12);
    const g = fitTailGate(statistics(8000, () => student(rng, 4)), 0.9995)!;
    console.log(`Student t4: ratio ${g.quantileRatio.toFixed(3)}, shape ${g.shape.toFixed(2)}, clustering ${g.clustering.toFixed(3)}, factor ${g.factor.toFixed(2)}`);
    expect(g.shape).toBeLessThan(HEAVY_SHAPE);
    expect(g.clustering).toBeLessThan(0.1);
    expect(g.factor).toBeGreaterThan(1);
    // the probability that gives factor × the χ²(3) threshold
    expect(Math.abs(chiSquareQuantile(g.probability, 3) - g.factor * chiSquareQuantile(0.9995, 3))).toBeLessThan(1e-6 * chiSquareQuantile(g.probability, 3));
  });
  it('the same heavy errors in runs of 20 fixes (model misfit): clustered, the gate left alone', () => {
    const rng = new Rng(13);
    // one Student-t scale factor per run of 20 fixes: large statistics come together
    let s = 1;
    const g = fitTailGate(statistics(8000, (k) => {
      if (k % 20 === 0) s = Math.abs(student(rng, 3)) + 0.3;
      return s * rng.normal();
    }), 0.9995)!;
    console.log(`runs: ratio ${g.quantileRatio.toFixed(3)}, shape ${g.shape.toFixed(2)}, clustering ${g.clustering.toFixed(3)}`);
    expect(g.shape).toBeLessThan(HEAVY_SHAPE);
    expect(g.clustering).toBeGreaterThan(MAX_CLUSTERING);
    expect(g.factor).toBe(1);
  });
  it('too few fixes: no fit', () => {
    const rng = new Rng(14);
    expect(fitTailGate(statistics(100, () => rng.normal()), 0.9995)).toBeNull();
  });
});

describe('on a heavy-tailed log of the scenario family', () => {
  // family seed 1, van-02: 10 Hz, Student t white errors with 4 dof, jump and ramp bursts
  const spec = familySpecs(1).find((s) => s.id === 'van-02')!;
  const log = generateFamilyLog(spec, smartlocReader(join(import.meta.dirname, '..', '..', '..')));
  const on = runFamilyLog(log);
  const off = runFamilyLog(log, { gate: { fitTails: false } });
  it('flags far fewer clean fixes and still finds the outliers', () => {
    console.log(`van-02 (t4): false alarms ${off.fp} → ${on.fp}, recall ${off.recall.toFixed(3)} → ${on.recall.toFixed(3)}, RMSE ratio ${off.ratio.toFixed(3)} → ${on.ratio.toFixed(3)}`);
    expect(spec.receiver.tail).toEqual({ kind: 'student', nu: 4 });
    expect(on.summary.info).toHaveProperty('tailGate');
    expect(on.fp).toBeLessThanOrEqual(off.fp / 4);
    expect(on.recall).toBeGreaterThanOrEqual(off.recall - 0.02);
    expect(on.ratio).toBeLessThanOrEqual(off.ratio + 0.01);
  });
});
