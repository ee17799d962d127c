/**
 * The two-sided review in the IMU-aided path (src/session/imu/imu-session.ts, src/estimation/ins/review.ts):
 * the statistic against direct matrix algebra, a fix that the forward gate lets through after an
 * outage but that the smoothed track contradicts is rejected (reason `review`), and consistent fixes
 * that an overconfident forward filter rejects after an outage come back.
 */
import { describe, expect, it } from 'vitest';
import { gnssReviewStatistic, jacobiEigenSym, makeGnssReviewScratch } from '../../src/estimation/ins/review.js';
import { MIN_RESIDUAL_SHARE } from '../../src/estimation/review.js';
import { processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { STATUS } from '../../src/session/result/result.js';
import { DEFAULT_ERRORS } from '../../src/simulate/scenario.js';
import { makeImuCase } from './helpers.js';

/** νᵀ V⁻¹ ν for a 3×3 V by Cramer's rule (reference). */
function quad3(V: number[][], nu: number[]): number {
  const [a, b, c] = V as [number[], number[], number[]];
  const det = a[0]! * (b[1]! * c[2]! - b[2]! * c[1]!) - a[1]! * (b[0]! * c[2]! - b[2]! * c[0]!) + a[2]! * (b[0]! * c[1]! - b[1]! * c[0]!);
  const inv = [
    [b[1]! * c[2]! - b[2]! * c[1]!, a[2]! * c[1]! - a[1]! * c[2]!, a[1]! * b[2]! - a[2]! * b[1]!],
    [b[2]! * c[0]! - b[0]! * c[2]!, a[0]! * c[2]! - a[2]! * c[0]!, a[2]! * b[0]! - a[0]! * b[2]!],
    [b[0]! * c[1]! - b[1]! * c[0]!, a[1]! * c[0]! - a[0]! * c[1]!, a[0]! * b[1]! - a[1]! * b[0]!],
  ];
  let t = 0;
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) t += (nu[i]! * inv[i]![j]! * nu[j]!) / det;
  return t;
}

describe('GNSS review statistic (full 3×3 H Pˢ Hᵀ)', () => {
  // packed ee, en, eu, nn, nu, uu; a correlated, positive definite M (values invented)
  const M6 = Float64Array.from([0.8, 0.3, -0.1, 0.6, 0.05, 1.5]);
  const M = [[0.8, 0.3, -0.1], [0.3, 0.6, 0.05], [-0.1, 0.05, 1.5]];
  const r = [2.25, 2.25, 9];
  const nu = [1.7, -2.2, 3.1];
  const s = makeGnssReviewScratch();
  it('Jacobi eigenvalues reproduce trace and determinant (exact algebra, 1e-12)', () => {
    const A = Float64Array.from(M.flat());
    const Q = new Float64Array(9);
    jacobiEigenSym(3, A, Q);
    const l = [A[0]!, A[4]!, A[8]!];
    expect(l[0]! + l[1]! + l[2]!).toBeCloseTo(0.8 + 0.6 + 1.5, 12);
    expect(l[0]! * l[1]! * l[2]!).toBeCloseTo(quad3(M, [0, 0, 0]) === 0 ? 0.8 * (0.6 * 1.5 - 0.05 * 0.05) - 0.3 * (0.3 * 1.5 + 0.05 * 0.1) - 0.1 * (0.3 * 0.05 + 0.6 * 0.1) : NaN, 12);
  });
  it('rejected fix: T = νᵀ (R + M)⁻¹ ν; kept fix: T = νᵀ (R − M)⁻¹ ν when R − M is well inside the floor (1e-9 relative)', () => {
    const Vp = M.map((row, i) => row.map((v, j) => (i === j ? r[i]! : 0) + v));
    const Vm = M.map((row, i) => row.map((v, j) => (i === j ? r[i]! : 0) - v));
    const tOut = gnssReviewStatistic(3, [0, 1, 2], nu, r, M6, 0, false, s);
    const tIn = gnssReviewStatistic(3, [0, 1, 2], nu, r, M6, 0, true, s);
    expect(Math.abs(tOut / quad3(Vp, nu) - 1)).toBeLessThan(1e-9);
    expect(Math.abs(tIn / quad3(Vm, nu) - 1)).toBeLessThan(1e-9);
  });
  it('diagonal M: the per-axis statistic of the fixes-only review, floor included', () => {
    const D6 = Float64Array.from([0.5, 0, 0, 2.24, 0, 1.0]);
    const t = gnssReviewStatistic(3, [0, 1, 2], nu, r, D6, 0, true, s);
    const ref = nu[0]! ** 2 / (2.25 - 0.5) + nu[1]! ** 2 / Math.max(2.25 - 2.24, MIN_RESIDUAL_SHARE * 2.25) + nu[2]! ** 2 / (9 - 1);
    expect(Math.abs(t / ref - 1)).toBeLessThan(1e-12);
    // two measured axes (no height) pick the horizontal block
    const t2 = gnssReviewStatistic(2, [0, 1], nu, r, D6, 0, false, s);
    expect(Math.abs(t2 / (nu[0]! ** 2 / 2.75 + nu[1]! ** 2 / 4.49) - 1)).toBeLessThan(1e-12);
  });
});

// a short drive with one 35 s outage and no simulated bursts (every fix is consistent unless planted)
const spec = (seed: number) => ({ durationSec: 300, errors: { ...DEFAULT_ERRORS.vehicle, burstsPer100: 0, gaps: [[120, 35]] as Array<[number, number]>, nullIslandRows: 0 } });

describe('review in the IMU-aided path', () => {
  it('a fix the gate lets through after an outage but the smoothed track contradicts is rejected by the review', async () => {
    const c = makeImuCase(41, spec(41), {}, 'vehicle');
    // the first fix after the outage, moved 9 m north (a multipath-like jump the drifted prediction cannot tell)
    const s = c.series;
    let i0 = -1;
    for (let i = 1; i < s.n; i++) if (s.tSec[i]! - s.tSec[i - 1]! > 20) { i0 = i; break; }
    expect(i0).toBeGreaterThan(0);
    s.latDeg[i0] += 9 / 111_300;
    const r = await processImuSession(s, imuFileSource(c.imuPath, c.cfg), c.cfg, 'drive');
    const j = Array.from(r.fix).indexOf(i0);
    const rec = r.outliers.find((o) => o.fix === i0);
    console.log(`planted fix: status ${r.status[j]}, reason ${rec?.reason}, T ${rec?.statistic.toFixed(1)} / ${rec?.threshold.toFixed(1)}, passes ${(r.info.imu as { reviewPasses: number }).reviewPasses}`);
    expect(r.status[j]).toBe(STATUS.outlier);
    expect(rec?.reason).toBe('review');
    expect(rec!.statistic).toBeGreaterThan(rec!.threshold);
    expect(rec!.dof).toBe(3);
    // and nothing else is flagged
    expect(r.outliers.filter((o) => o.reason === 'innovation' || o.reason === 'review').length).toBe(1);
  });

  it('consistent fixes rejected by an overconfident forward filter after an outage are re-admitted', async () => {
    // the filter believes its sensors nearly bias-free, so its forward prediction drifts unmodelled and the gate rejects consistent fixes (after the outage and elsewhere); the review, seeing both sides, re-admits many of them
    const c = makeImuCase(43, spec(43), { imu: { gyroBiasSigmaRadps: 1e-6, gyroBiasWalk: 1e-9, accelBiasSigmaMps2: 1e-4, accelBiasWalk: 1e-7 } }, 'vehicle');
    const r = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'drive');
    const info = r.info.imu as { gnssRejected: number; reviewPasses: number; reviewConverged: boolean };
    const flagged = r.outliers.filter((o) => o.reason === 'innovation' || o.reason === 'review').length;
    console.log(`overconfident filter: gate rejected ${info.gnssRejected}, flagged after review ${flagged}, passes ${info.reviewPasses}, converged ${info.reviewConverged}`);
    expect(info.gnssRejected).toBeGreaterThan(0);
    expect(flagged).toBeLessThan(info.gnssRejected);
    // every fix left out names the test that decided, with a statistic above that test's threshold
    const tested = r.outliers.filter((o) => o.test !== 'invalid' && o.test !== 'user');
    expect(tested.length).toBe(flagged);
    for (const o of tested) {
      expect(['forward-gate', 'review', 'swap']).toContain(o.test);
      expect(o.testStatistic, `${o.id} ${o.test}`).toBeGreaterThan(o.testThreshold);
      expect(o.statistic, o.id).toBeGreaterThan(o.readmitThreshold);
    }
    console.log(`overconfident filter, deciding tests: ${JSON.stringify(tested.reduce((m, o) => ({ ...m, [o.test]: ((m as Record<string, number>)[o.test] ?? 0) + 1 }), {}))}`);
  });
});
