/**
 * The correlated-error floor of the reported uncertainty (src/session/check/correlated-floor.ts):
 * its arithmetic, that a processed log's reported variances are the smoother's plus Δ with the
 * track unchanged, that the posterior draws carry it as one offset per segment, and that occupied
 * points keep it in their averages.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { correlatedFloor, whiteSigmaM } from '../../../src/session/check/correlated-floor.js';
import type { CorrelatedFloor } from '../../../src/session/result/correlated-floor-info.js';
import { sampleTracks } from '../../../src/session/survey/draws.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';
import type { AxisParams } from '../../../src/session/prepare/axis-params.js';
import { fixSigmaFactors, type FixSigmaFactors } from '../../../src/session/prepare/fix-noise.js';

const P: AxisParams = { motion: 'cv', qHorizontal: 0.5, qVertical: 0.1, sigmaHorizontalM: 2, sigmaVerticalM: 4, gmHorizontalSigmaM: 1.5, gmVerticalSigmaM: 3, gmTauSec: 60 };
const RATIO = { horizontal: 1.25, vertical: 1.25 };

describe('the floor’s arithmetic: Δ = max(0, (ρ σ_w)² − σ_b²)', () => {
  // exact by construction (± 1e-12)
  test.each([
    { w: 2, b: 1.5, rho: 1.25, added: Math.sqrt(6.25 - 2.25), assumed: 2.5 },
    { w: 2, b: 3, rho: 1.25, added: 0, assumed: 3 },
    { w: 1, b: 0.5, rho: 1, added: Math.sqrt(0.75), assumed: 1 },
    { w: 2, b: 1.5, rho: 0, added: 0, assumed: 1.5 },
  ])('white $w m, correlated $b m, ρ $rho → added sd $added m', ({ w, b, rho, added, assumed }) => {
    const f = correlatedFloor({ ...P, gmHorizontalSigmaM: b }, { horizontal: rho, vertical: rho }, { horizontal: w, vertical: 4 });
    expect(Math.abs(f.addedSdM.horizontal - added)).toBeLessThan(1e-12);
    expect(Math.abs(f.assumedSigmaM.horizontal - assumed)).toBeLessThan(1e-12);
  });
  test('with reported per-fix sigmas the white sigma is their scale times their median', () => {
    // sd_east 1, 2, 3, (empty), 5; sd_up 2, 4, 6, 8, 10: the reader's factors as a session gets them
    const rows = ['time,lat,lon,height,sd_east,sd_north,sd_up', ...[1, 2, 3, NaN, 5].map((e, i) => `2026-05-03T09:00:0${i}Z,47.0,8.0,400,${Number.isNaN(e) ? '' : e},${i + 1},${2 * (i + 1)}`)];
    const factors: FixSigmaFactors = fixSigmaFactors(readFixCsv(rows.join('\n') + '\n', 'sd.csv', loadConfig()));
    // median of the finite east values {1, 2, 3, 5}: element ⌊4/2⌋ of the sorted ones = 3 (the empty cell takes it too)
    expect(whiteSigmaM({ ...P, sigmaHorizontalM: 1.5, sigmaVerticalM: 0.5 }, factors)).toEqual({ horizontal: 4.5, vertical: 3 });
    expect(whiteSigmaM(P, { ...factors, reported: false })).toEqual({ horizontal: 2, vertical: 4 });
  });
});

describe('on a processed walking survey with stops (simulated, seed 3)', () => {
  const sc = simulate(defaultSpec('walk', 3));
  const run = (ratio: { horizontal: number; vertical: number }) => {
    const cfg = loadConfig({ overrides: { noise: { correlatedFloorRatio: ratio } } });
    return processSession(readFixCsv(scenarioCsv(sc), 'walk-3.csv', cfg), cfg, 'walk-3');
  };
  const off = run({ horizontal: 0, vertical: 0 });
  const on = run(RATIO);
  const f = on.info.correlatedFloor as CorrelatedFloor;

  test('the floor applies here (the simulated receiver’s white noise is larger than its calibrated correlated sigma)', () => {
    expect(f.addedSdM.horizontal).toBeGreaterThan(0.5);
    expect((off.info.correlatedFloor as CorrelatedFloor).addedSdM.horizontal).toBe(0);
  });
  test('reported variance = smoother’s + Δ on every epoch and axis (1e-9 relative); positions unchanged', () => {
    const d = [f.addedSdM.horizontal ** 2, f.addedSdM.horizontal ** 2, f.addedSdM.vertical ** 2];
    for (let j = 0; j < on.N; j++) {
      for (let a = 0; a < 3; a++) {
        const want = off.sdEnu[a]![j]! ** 2 + d[a]!;
        expect(Math.abs(on.sdEnu[a]![j]! ** 2 - want)).toBeLessThan(1e-9 * want);
        expect(on.posEnu[a]![j]).toBe(off.posEnu[a]![j]);
      }
    }
    expect(on.metrics.medianSdHorizontalM).toBeGreaterThan(off.metrics.medianSdHorizontalM);
    expect(on.ell95MajorM[10]!).toBeGreaterThan(off.ell95MajorM[10]!);
  });
  test('the draws carry it as one offset per segment: the difference to the floor-free draws is constant over the segment, its variance Δ within 3 SE', () => {
    const M = 1000;
    const a = sampleTracks(on, M, 5), b = sampleTracks(off, M, 5);
    let s2 = 0;
    // epochs of the first segment
    const inFirst = [1, 100, 400, on.N - 1].filter((j) => on.segment[j] === on.segment[0]);
    expect(inFirst.length).toBeGreaterThanOrEqual(3);
    for (let d = 0; d < M; d++) {
      const off0 = a.draws[d]!.posEnu[0][0]! - b.draws[d]!.posEnu[0][0]!;
      for (const j of inFirst) expect(Math.abs(a.draws[d]!.posEnu[0][j]! - b.draws[d]!.posEnu[0][j]! - off0)).toBeLessThan(1e-9);
      s2 += off0 * off0;
    }
    const D = f.addedSdM.horizontal ** 2;
    // SE of a Gaussian sample variance (known mean 0): Δ √(2 / M)
    expect(Math.abs(s2 / M - D)).toBeLessThan(3 * D * Math.sqrt(2 / M));
  });
  test('occupied points keep the offset: their variance is the floor-free one plus Δ (1e-9 relative)', () => {
    const po = on.survey!.occupations, pf = off.survey!.occupations;
    expect(po.length).toBe(pf.length);
    expect(po.length).toBeGreaterThan(0);
    for (let i = 0; i < po.length; i++) {
      const want = pf[i]!.sdEnu[0] ** 2 + f.addedSdM.horizontal ** 2;
      expect(Math.abs(po[i]!.sdEnu[0] ** 2 - want)).toBeLessThan(1e-9 * want);
    }
  });
});
