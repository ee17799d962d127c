/**
 * The shared products (src/session/products/products.ts) and the calibrated fixes-only baseline
 * (src/session/calibrate/calibrated-params.ts) reproduce processSession exactly on a simulated IMU drive's fixes.
 */
import { expect, it } from 'vitest';
import { prepareSession } from '../../src/session/prepare/prepare.js';
import { processSession } from '../../src/session/process-session.js';
import { calibratedFixesOnly } from '../../src/session/calibrate/calibrated-params.js';
import { buildOutliersAndMetrics } from '../../src/session/products/products.js';
import { reviewThresholds } from '../../src/session/classify/review-decisions.js';
import type { DecisionLog } from '../../src/session/result/decision-log.js';
import { makeImuCase } from './helpers.js';

it('calibratedFixesOnly equals processSession, and buildOutliersAndMetrics rebuilds its outliers and metrics', () => {
  const c0 = makeImuCase(11, {}, {}, 'vehicle');
  // without the correlated-error floor, which processSession adds to the reported sd after the run
  const c = { ...c0, cfg: { ...c0.cfg, noise: { ...c0.cfg.noise, correlatedFloorRatio: { horizontal: 0, vertical: 0 } } } };
  const ref = processSession(c.series, c.cfg, 'drive');
  const ps = prepareSession(c.series, c.cfg);
  const { result } = calibratedFixesOnly(ps, c.cfg, 'drive');
  expect(Array.from(result.posEnu[0])).toEqual(Array.from(ref.posEnu[0]));
  expect(Array.from(result.status)).toEqual(Array.from(ref.status));
  expect(result.info.calibration).toEqual(ref.info.calibration);
  const gateRejectedFix = new Uint8Array(c.series.n);
  for (const o of ref.outliers) if (o.reason === 'innovation') gateRejectedFix[o.fix] = 1;
  const copy = { ...ref, outliers: [], rawEnu: undefined, metrics: undefined as unknown as typeof ref.metrics };
  // the deciding tests, handed in as the IMU path hands in the fixes-only ones
  const why: DecisionLog = new Map();
  for (const o of ref.outliers)
    if (o.test === 'forward-gate' || o.test === 'backward-gate' || o.test === 'review' || o.test === 'swap') why.set(o.fix, { test: o.test, statistic: o.testStatistic, threshold: o.testThreshold, dof: o.dof });
  buildOutliersAndMetrics(copy, ps, gateRejectedFix, ref.metrics.reacquisitions, undefined, { why, readmit: reviewThresholds(c.cfg.gate.probability).readmit });
  expect(copy.outliers).toEqual(ref.outliers);
  expect(copy.metrics).toEqual(ref.metrics);
  expect(Array.from(copy.rawEnu![0])).toEqual(Array.from(ref.rawEnu![0]));
});
