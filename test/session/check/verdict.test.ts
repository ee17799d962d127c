/**
 * The session quality verdict (src/session/check/verdict.ts): deep-urban single-point logs (errors of tens
 * of metres with slowly varying biases and steps, src/simulate/degraded-errors.ts) are named
 * "degraded" with reasons and get their uncertainty widened; ordinary logs stay "good" and untouched.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { sessionVerdict, widenToResidualScatter, errorRatio, type SessionVerdict } from '../../../src/session/check/verdict.js';
import { STATUS, type SessionResult } from '../../../src/session/result/result.js';
import { okEntry } from '../../../src/output/summary.js';
import { defaultSpec, simulate } from '../../../src/simulate/scenario.js';
import { drawDegradedErrors, simulateDegraded } from '../../../src/simulate/degraded-errors.js';
import { makeTruth } from '../../../src/simulate/truth.js';
import { parsePoint3Truth } from '../../../src/simulate/recorded-truth.js';
import { Rng } from '../../../src/simulate/rng.js';
import { runScenario } from '../../helpers/score.js';
import type { AxisParams } from '../../../src/session/prepare/axis-params.js';

const PROFILE: AxisParams = { motion: 'cv', qHorizontal: 0.5, qVertical: 0.1, sigmaHorizontalM: 2, sigmaVerticalM: 4, gmHorizontalSigmaM: 1.5, gmVerticalSigmaM: 3, gmTauSec: 60 };

describe('error ratio', () => {
  // exact by construction: √((r_w² W + r_g² G) / (W + G)) with W = 2², G = 1.5²
  test.each([
    { w: 2, gm: 1.5, expected: 1 },
    { w: 4, gm: 3, expected: 2 },
    { w: 8, gm: 1.5, expected: Math.sqrt((16 * 4 + 2.25) / 6.25) },
  ])('white $w m, correlated $gm m → $expected (± 1e-12)', ({ w, gm, expected }) => {
    expect(Math.abs(errorRatio({ ...PROFILE, sigmaHorizontalM: w, gmHorizontalSigmaM: gm }, PROFILE, 2) - expected)).toBeLessThan(1e-12);
  });
});

/** A result with residuals (raw − track) given per axis, sd 1 m everywhere, review statistic T. */
function fakeResult(resE: number[], resN: number[], resU: number[], T: number, status?: number[]): SessionResult {
  const N = resE.length;
  const z = () => new Float64Array(N);
  const ones = () => new Float64Array(N).fill(1);
  return {
    N, hasHeight: true,
    posEnu: [z(), z(), z()], rawEnu: [Float64Array.from(resE), Float64Array.from(resN), Float64Array.from(resU)],
    sdEnu: [ones(), ones(), ones()], covEN: z(), ell95MajorM: z(), ell95MinorM: z(), ell95AzimuthDeg: z(),
    status: Uint8Array.from(status ?? new Array(N).fill(STATUS.kept)), segment: new Int32Array(N),
    nis: new Float64Array(N).fill(T), nisThreshold: new Float64Array(N).fill(16.3),
    metrics: { medianSdHorizontalM: Math.SQRT2, worstEll95MajorM: 0, medianEll95MajorM: 0 },
  } as unknown as SessionResult;
}

describe('verdict rules', () => {
  test('a consistent log is good; many flagged fixes, a large error ratio or a large review statistic make it degraded', () => {
    const res = Array.from({ length: 100 }, (_, k) => (k % 2 ? 1 : -1));
    const good = sessionVerdict(fakeResult(res, res, res, 3), PROFILE, PROFILE, 2);
    expect(good.verdict).toBe('good');
    expect(good.reasons).toEqual([]);
    const st = res.map((_, k) => (k < 20 ? STATUS.outlier : STATUS.kept));
    const flagged = sessionVerdict(fakeResult(res, res, res, 3, st), PROFILE, PROFILE, 2);
    expect(flagged.measures.flaggedShare).toBeCloseTo(0.2, 12);
    expect(flagged.verdict).toBe('degraded');
    expect(flagged.reasons[0]).toMatch(/20% of the fixes were flagged/);
    const scatter = sessionVerdict(fakeResult(res, res, res, 3), { ...PROFILE, sigmaHorizontalM: 8 }, PROFILE, 2);
    expect(scatter.verdict).toBe('degraded');
    expect(scatter.reasons[0]).toMatch(/scatter 3\.3 times more than the receiver profile/);
    // mean T per degree of freedom 6 / 3 = 2 > 1.5
    const review = sessionVerdict(fakeResult(res, res, res, 6), PROFILE, PROFILE, 2);
    expect(review.measures.reviewRatio).toBeCloseTo(2, 12);
    expect(review.verdict).toBe('degraded');
  });

  test('widening: every sd at least the kept residuals\' RMS per axis, ellipses and metrics recomputed', () => {
    // residuals ±3 m east and north, ±5 m up (a flagged fix among them counts; a user-rejected one's 100 m does not): floors 3 and 5 m
    const e = Array.from({ length: 50 }, (_, k): number => (k % 2 ? 3 : -3));
    const u = e.map((x) => (x / 3) * 5);
    const st = e.map((_, k) => (k === 7 ? STATUS.userRejected : k === 8 ? STATUS.outlier : STATUS.kept));
    e[7] = 100;
    const r = fakeResult(e, e, u, 3, st);
    const w = widenToResidualScatter(r);
    expect(w.horizontalSdFloorM).toBeCloseTo(3, 12);
    expect(w.verticalSdFloorM).toBeCloseTo(5, 12);
    expect(w.medianSdHorizontalM[0]).toBeCloseTo(Math.SQRT2, 12);
    expect(w.medianSdHorizontalM[1]).toBeCloseTo(3 * Math.SQRT2, 12);
    for (let j = 0; j < r.N; j++) {
      expect(r.sdEnu[0][j]).toBe(3);
      expect(r.sdEnu[2][j]).toBe(5);
      // 95% ellipse of a circular 3 m sd: √5.991 · 3 (Mikhail 1976, common practice)
      expect(r.ell95MajorM[j]).toBeCloseTo(Math.sqrt(-2 * Math.log(0.05)) * 3, 12);
    }
  });
});

/** Deep-urban logs: walk or vehicle truth, error model drawn per seed; two with frequent large steps. */
function degradedScenario(seed: number) {
  const kind = seed % 2 ? 'walk' : 'vehicle';
  const spec = defaultSpec(kind, 700 + seed);
  const E = drawDegradedErrors(new Rng(seed + 77));
  if (seed > 4) {
    E.stepEverySec = 8;
    E.stepSigmaM = 35;
  }
  return { kind, sc: simulateDegraded(spec, makeTruth(kind, 700 + seed, spec.durationSec), E) };
}

describe('deep-urban single-point logs', () => {
  test.each([1, 2, 3, 4, 5, 6])('seed %i: named degraded with reasons, uncertainty widened, in summary.json', (seed) => {
    const { kind, sc } = degradedScenario(seed);
    const { r, s } = runScenario(sc);
    const v = r.info.verdict as SessionVerdict;
    console.log(
      `degraded ${kind} seed ${seed}: raw RMSE ${s.rmseRawH.toFixed(1)} m, smoothed/raw ${(s.rmseSmoothH / s.rmseRawH).toFixed(3)}, ` +
        `flagged ${(100 * v.measures.flaggedShare).toFixed(1)}%, error ratio ${v.measures.errorRatio.toFixed(2)}, review ${v.measures.reviewRatio.toFixed(2)}; ` +
        `median sd ${v.widened?.medianSdHorizontalM[0].toFixed(1)} → ${v.widened?.medianSdHorizontalM[1].toFixed(1)} m, coverage H ${s.coverH95.toFixed(3)} V ${s.coverU95.toFixed(3)}`,
    );
    expect(v.verdict).toBe('degraded');
    expect(v.reasons.length).toBeGreaterThan(0);
    expect(v.widened).toBeDefined();
    expect(v.widened!.medianSdHorizontalM[1]).toBeGreaterThan(v.widened!.medianSdHorizontalM[0]);
    // the session warning and the summary entry say so
    expect(r.warnings.some((w) => w.code === 'quality' && /degraded session/.test(w.message))).toBe(true);
    const entry = okEntry(r, 'x.csv', [], 0);
    expect(entry.quality?.verdict).toBe('degraded');
    expect(entry.quality?.reasons).toEqual(v.reasons);
    // never worse than the fixes
    expect(s.rmseSmoothH).toBeLessThanOrEqual(s.rmseRawH);
  });
});

describe('ordinary logs stay good and their uncertainty untouched', () => {
  test.each([
    ['walk', 1], ['walk', 4], ['vehicle', 1], ['vehicle', 5], ['drone', 1], ['drone', 6], ['model', 3],
  ] as const)('%s seed %i', (kind, seed) => {
    const { r } = runScenario(simulate(defaultSpec(kind, seed)));
    const v = r.info.verdict as SessionVerdict;
    expect(v.verdict).toBe('good');
    expect(v.widened).toBeUndefined();
    expect(okEntry(r, 'x.csv', [], 0).quality).toEqual({ verdict: 'good', reasons: [], motionModel: 'adequate' });
  });

  test('a real drive (smartLoc Berlin_Gendarmenmarkt, CC BY-SA 4.0) with simulated fix errors: good', () => {
    const { truth, origin } = parsePoint3Truth(readFileSync(join(import.meta.dirname, '..', '..', 'fixtures', 'smartloc', 'Berlin_Gendarmenmarkt_GT.txt'), 'utf8'));
    const sc = simulate(defaultSpec('vehicle', 501, { durationSec: truth.durationSec, origin }), truth);
    const { r } = runScenario(sc);
    expect((r.info.verdict as SessionVerdict).verdict).toBe('good');
  });
});
