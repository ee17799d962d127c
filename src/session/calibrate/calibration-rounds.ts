/**
 * The noise calibration of a session in three stages: calibration under the gate (capped
 * likelihood), classification under the start model, calibration again with those decisions held
 * fixed.
 */
import type { HindcastConfig } from '../../config/schema.js';
import type { StageTimings } from '../result/timings.js';
import type { ReviewOptions } from '../classify/review.js';
import type { AxisParams } from '../prepare/axis-params.js';
import type { PreparedSession } from '../prepare/prepare.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession, calibrationWindows, type CalibrationInfo } from './calibrate.js';
import { classificationStart } from './classification-start.js';
import { classify, classifyWindows } from '../classify/classify.js';

/**
 * Stages 1–3 of a session: calibration under the gate (capped likelihood), classification of the
 * fixes under the start model (classification-start.ts) where the second round will look (the
 * whole log when it is used whole, else its calibration chunks with margins), and calibration again
 * with those decisions held fixed. The fixes-only session and the IMU session's GNSS noise
 * (calibrated-params.ts) both take their parameters from here.
 */
export function calibrationRounds(ps: PreparedSession, cfg: HindcastConfig, prior: AxisParams, ro: ReviewOptions, tm?: StageTimings): { params: AxisParams; info: CalibrationInfo; warnings: string[] } {
  let t0 = tm ? performance.now() : 0;
  const cal1 = calibrateSession(ps, cfg, prior, FIRST_ROUND);
  if (tm) tm.calibrate += performance.now() - t0;
  if (cal1.info.status !== 'estimated') return cal1;
  // stage 2: classification under the start model
  const uses = new Map<number, Uint8Array>();
  const windows = calibrationWindows(ps, cfg.segments.bridgeFactor, DEFAULT_CALIBRATION.maxEpochs);
  const start = classificationStart(ps, cfg, cal1.params);
  if (windows) classifyWindows(ps, start.cfg, start.params, ro, windows, uses, tm);
  else
    classify(ps, start.cfg, start.params, ro, tm).forEach((pl, si) => {
      uses.set(si, Uint8Array.from(pl.offered, (u, k) => (u === 0 ? 0 : pl.decisions!.kept[k] ? 2 : 0)));
    });
  // stage 3: calibration with the decisions held fixed
  if (tm) t0 = performance.now();
  const cal2 = calibrateSession(ps, cfg, prior, undefined, cal1.params, uses);
  if (tm) tm.calibrate += performance.now() - t0;
  const info: CalibrationInfo = {
    ...cal2.info,
    estimates: { ...cal1.info.estimates, ...cal2.info.estimates },
    evaluations: cal1.info.evaluations + cal2.info.evaluations,
    classificationStart: { robustQHorizontal: start.robustQHorizontal, qHorizontal: start.params.qHorizontal },
  };
  return { params: cal2.params, info, warnings: cal1.warnings };
}
