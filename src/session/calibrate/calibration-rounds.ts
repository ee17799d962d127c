/**
 * The noise calibration of a session in three stages: calibration under the gate (capped
 * likelihood), classification under the start model, calibration again with those decisions held
 * fixed. The first two stages are one function and the third another, so that a group of logs of
 * one receiver can share the third (pooled.ts).
 */
import type { HindcastConfig } from '../../config/schema.js';
import type { StageTimings } from '../result/timings.js';
import type { ReviewOptions } from '../classify/review.js';
import type { AxisParams } from '../prepare/axis-params.js';
import type { PreparedSession } from '../prepare/prepare.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession, calibrationWindows, type CalibrationInfo, type CalibrationResult } from './calibrate.js';
import { classificationStart } from './classification-start.js';
import { classify, classifyWindows } from '../classify/classify.js';

/** The first round's result and, where it estimated, the decisions the second round holds fixed. */
export interface FirstRound {
  cal1: CalibrationResult;
  /** Per segment: 2 kept without gate, 0 rejected (null: the first round fell back). */
  uses: Map<number, Uint8Array> | null;
  classificationStart?: { robustQHorizontal: number; qHorizontal: number };
}

/**
 * Stages 1–2: calibration under the gate (capped likelihood), then classification of the fixes
 * under the start model (classification-start.ts) where the second round will look (the whole log
 * when it is used whole, else its calibration chunks with margins).
 */
export function calibrationFirstRound(ps: PreparedSession, cfg: HindcastConfig, prior: AxisParams, ro: ReviewOptions, tm?: StageTimings): FirstRound {
  const t0 = tm ? performance.now() : 0;
  const cal1 = calibrateSession(ps, cfg, prior, FIRST_ROUND);
  if (tm) tm.calibrate += performance.now() - t0;
  if (cal1.info.status !== 'estimated') return { cal1, uses: null };
  return firstDecisions(ps, cfg, ro, cal1, tm);
}

/** Stage 2 alone: the decisions the second round holds fixed, classified under the start model made from `cal1` (a first round's result). */
export function firstDecisions(ps: PreparedSession, cfg: HindcastConfig, ro: ReviewOptions, cal1: CalibrationResult, tm?: StageTimings): FirstRound {
  const uses = new Map<number, Uint8Array>();
  const windows = calibrationWindows(ps, cfg.segments.bridgeFactor, DEFAULT_CALIBRATION.maxEpochs);
  const start = classificationStart(ps, cfg, cal1.params);
  // the start model's motion is the quiet one (classification-start.ts): the excursion test's agreement under it
  const roStart = start.params.motion === 'cv' ? { ...ro, excursionQHorizontal: start.params.qHorizontal } : ro;
  if (windows) classifyWindows(ps, start.cfg, start.params, roStart, windows, uses, tm);
  else
    classify(ps, start.cfg, start.params, roStart, tm).forEach((pl, si) => {
      uses.set(si, Uint8Array.from(pl.offered, (u, k) => (u === 0 ? 0 : pl.decisions!.kept[k] ? 2 : 0)));
    });
  return { cal1, uses, classificationStart: { robustQHorizontal: start.robustQHorizontal, qHorizontal: start.params.qHorizontal } };
}

/** The record of both rounds: the second's, with the first's estimates where the second has none, and both rounds' evaluations. */
export function bothRounds(first: FirstRound, cal2: CalibrationResult): { params: AxisParams; info: CalibrationInfo; warnings: string[] } {
  const info: CalibrationInfo = {
    ...cal2.info,
    estimates: { ...first.cal1.info.estimates, ...cal2.info.estimates },
    evaluations: first.cal1.info.evaluations + cal2.info.evaluations,
    ...(first.classificationStart ? { classificationStart: first.classificationStart } : {}),
  };
  return { params: cal2.params, info, warnings: [...first.cal1.warnings, ...cal2.warnings.filter((w) => !first.cal1.warnings.includes(w))] };
}

/**
 * Stages 1–3 of a session: the first round, then calibration again with its decisions held fixed.
 * The fixes-only session and the IMU session's GNSS noise (calibrated-params.ts) both take their
 * parameters from here.
 */
export function calibrationRounds(ps: PreparedSession, cfg: HindcastConfig, prior: AxisParams, ro: ReviewOptions, tm?: StageTimings): { params: AxisParams; info: CalibrationInfo; warnings: string[] } {
  const first = calibrationFirstRound(ps, cfg, prior, ro, tm);
  if (!first.uses) return first.cal1;
  // stage 3: calibration with the decisions held fixed
  const t0 = tm ? performance.now() : 0;
  const cal2 = calibrateSession(ps, cfg, prior, undefined, first.cal1.params, first.uses);
  if (tm) tm.calibrate += performance.now() - t0;
  return bothRounds(first, cal2);
}

/**
 * The review's options once the session is calibrated: the excursion test's agreement judged under
 * the quiet motion of the classification start (its process noise; classify/excursion.ts).
 */
export function reviewAfterCalibration(ro: ReviewOptions, info: CalibrationInfo): ReviewOptions {
  const q = info.classificationStart?.qHorizontal;
  return q !== undefined && Number.isFinite(q) ? { ...ro, excursionQHorizontal: q } : ro;
}
