/**
 * The simulator's error-model options (src/simulate/scenario.ts): how strongly the white noise
 * follows the written HDOP (hdopInfluence) and a vertical correlation time of its own (gmTauVSec).
 * Absent, they reproduce the proportional, shared-time-constant draws exactly. Seeded.
 */
import { describe, expect, test } from 'vitest';
import { defaultSpec, simulate, type ScenarioSpec } from '../../src/simulate/scenario.js';

/** A model-kind log with white noise only (no correlated error, bursts, gaps or invalid rows), varying HDOP. */
function whiteOnly(seed: number, extra: Partial<ScenarioSpec['errors']> = {}): ScenarioSpec {
  const s = defaultSpec('model', seed, { durationSec: 7200 });
  s.errors = { ...s.errors, gmSigmaHM: 0, gmSigmaVM: 0, burstsPer100: 0, gaps: [], nullIslandRows: 0, varyHdop: true, ...extra };
  return s;
}

/** RMS of the horizontal white error of fixes with HDOP above `hi` over that of fixes below `lo`. */
function rmsRatio(spec: ScenarioSpec, lo: number, hi: number): number {
  const sc = simulate(spec);
  let sHi = 0, nHi = 0, sLo = 0, nLo = 0;
  for (const f of sc.fixes) {
    const [e, n] = sc.frame.geodeticToEnu(f.latDeg, f.lonDeg, f.heightM);
    const d2 = (e - f.truthEnu[0]) ** 2 + (n - f.truthEnu[1]) ** 2;
    if (f.hdop >= hi) (sHi += d2), nHi++;
    else if (f.hdop <= lo) (sLo += d2), nLo++;
  }
  expect(nHi).toBeGreaterThan(100);
  expect(nLo).toBeGreaterThan(100);
  console.log(`HDOP ≥ ${hi}: ${nHi} fixes, ≤ ${lo}: ${nLo}; ratio ${Math.sqrt(sHi / nHi / (sLo / nLo)).toFixed(3)}`);
  return Math.sqrt(sHi / nHi / (sLo / nLo));
}

describe('simulator error options', () => {
  test('absent options draw the same fixes as influence 1 and a vertical time constant equal to the horizontal one', () => {
    const base = defaultSpec('vehicle', 5);
    const a = simulate(base).fixes;
    const b = simulate({ ...base, errors: { ...base.errors, hdopInfluence: 1, gmTauVSec: base.errors.gmTauSec } }).fixes;
    expect(b).toEqual(a);
  });

  // HDOP ≥ 1.3 against ≤ 0.9: proportional noise gives a ratio ≥ 1.3/0.9 ≈ 1.44 in expectation
  // (lower bound 1.3 for sampling); ignored HDOP gives 1 (±0.1 for some hundreds of fixes a group)
  test.each([
    [1, 1.3, 3],
    [0, 0.9, 1.1],
  ] as const)('hdopInfluence %f: high-HDOP/low-HDOP error ratio within [%f, %f]', (influence, lo, hi) => {
    const ratio = rmsRatio(whiteOnly(3, { hdopInfluence: influence }), 0.9, 1.3);
    expect(ratio).toBeGreaterThanOrEqual(lo);
    expect(ratio).toBeLessThanOrEqual(hi);
  });

  test('gmTauVSec: the vertical correlated error decorrelates at its own rate (lag-30 s autocorrelation)', () => {
    const spec = defaultSpec('model', 8, { durationSec: 7200 });
    spec.errors = { ...spec.errors, whiteSigmaHM: 0.01, whiteSigmaVM: 0.01, burstsPer100: 0, gaps: [], nullIslandRows: 0, varyHdop: false, gmTauSec: 10, gmTauVSec: 300 };
    const sc = simulate(spec);
    const err = sc.fixes.map((f) => {
      const p = sc.frame.geodeticToEnu(f.latDeg, f.lonDeg, f.heightM);
      return [p[0] - f.truthEnu[0], p[2] - f.truthEnu[2]];
    });
    const acf = (axis: number, lag: number) => {
      let num = 0, den = 0;
      for (let i = 0; i + lag < err.length; i++) num += err[i]![axis]! * err[i + lag]![axis]!;
      for (const e of err) den += e[axis]! ** 2;
      return num / den;
    };
    // e^{−30/10} ≈ 0.05 and e^{−30/300} ≈ 0.90 (first-order Gauss–Markov); ±0.15 for a 2-hour sample
    expect(Math.abs(acf(0, 30) - Math.exp(-3))).toBeLessThan(0.15);
    expect(Math.abs(acf(1, 30) - Math.exp(-0.1))).toBeLessThan(0.15);
  });
});
