/**
 * The calibrated noise of a session, obtained as processSession obtains it: its calibration rounds
 * (calibration-rounds.ts: calibration under a capped likelihood, classification,
 * calibration with those decisions held fixed), then the classification under their model. Returned
 * with the decisions, so that runPrepared(ps, cfg, params, name, plans) reproduces processSession's
 * result; used by the IMU-aided session for its fixes-only baseline and its GNSS noise
 * (test/imu/products.test.ts compares the two).
 * Sources: as in calibrate.ts (Schweppe 1965; Harvey 1989 §3.4) and review.ts.
 */
import type { HindcastConfig } from '../../config/schema.js';
import { axisParamsFromConfig, reviewOptions, type AxisParams } from '../prepare/axis-params.js';
import { calibrationRounds, reviewAfterCalibration } from './calibration-rounds.js';
import { classify } from '../classify/classify.js';
import { runPrepared } from '../products/final-run.js';
import { type PreparedSession } from '../prepare/prepare.js';
import type { CalibrationInfo } from './calibrate.js';
import type { ReviewOptions } from '../classify/review.js';
import type { SessionResult } from '../result/result.js';
import type { DecisionLog } from '../result/decision-log.js';

/** Per-segment decisions of the classification (the shape runPrepared takes as plans). */
export interface CalibrationPlan {
  offered: Uint8Array;
  decisions: { kept: Uint8Array; gateRejected: Uint8Array; why: DecisionLog };
  scale: Float64Array | null;
}

export interface CalibratedSession {
  params: AxisParams;
  info: CalibrationInfo;
  warnings: string[];
  plans: CalibrationPlan[];
}

/** processSession's classification of every segment under `params`, as plans (without its review outcomes). */
function classifyPlans(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams, ro: ReviewOptions): CalibrationPlan[] {
  return classify(ps, cfg, params, ro).map(({ offered, decisions, scale }) => ({ offered, decisions: decisions!, scale: scale ?? null }));
}

/** Stages 1–4 of processSession: its calibration rounds (calibrationRounds), then the classification under their model. */
export function calibratedParams(ps: PreparedSession, cfg: HindcastConfig): CalibratedSession {
  const prior = axisParamsFromConfig(cfg, ps.factors.reported);
  const ro = reviewOptions(cfg, ps.intervalSec);
  const { params, info, warnings } = calibrationRounds(ps, cfg, prior, ro);
  return { params, info, warnings, plans: classifyPlans(ps, cfg, params, reviewAfterCalibration(ro, info)) };
}

/** The fixes-only result of processSession on a prepared session, with its calibrated parameters. */
export function calibratedFixesOnly(ps: PreparedSession, cfg: HindcastConfig, name: string): { result: SessionResult; cal: CalibratedSession } {
  const cal = calibratedParams(ps, cfg);
  const result = runPrepared(ps, cfg, cal.params, name, cal.plans);
  for (const w of cal.warnings) result.warnings.push({ file: ps.series.file, code: 'calibration', message: w });
  result.info.calibration = cal.info;
  return { result, cal };
}
