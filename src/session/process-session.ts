/**
 * The per-session pipeline: fixes → local frame → segments and epoch grid → noise calibration →
 * classification → forward filter with gate, review and RTS smoother → model adequacy → quality
 * verdict → survey products. Pure: no file system; the batch layer reads and writes. Each stage is
 * a file of its own (prepare, calibration-rounds, classify, final-run, adequacy, verdict, survey);
 * this one only calls them in order.
 */
import type { HindcastConfig } from '../config/schema.js';
import type { FixSeries } from '../input/fix-series.js';
import type { SessionResult } from './result/result.js';
import type { StageTimings } from './result/timings.js';
import type { AxisParams } from './prepare/axis-params.js';
import type { PreparedSession } from './prepare/prepare.js';
import type { ReviewOptions } from './classify/review.js';
import type { CalibrationInfo } from './calibrate/calibrate.js';
import { axisParamsFromConfig, reviewOptions } from './prepare/axis-params.js';
import { jumpWarnings, prepareSession } from './prepare/prepare.js';
import { calibrationRounds, reviewAfterCalibration } from './calibrate/calibration-rounds.js';
import { classify } from './classify/classify.js';
import { fitTailGate } from './classify/tail-gate.js';
import { runPrepared } from './products/final-run.js';
import { applyAdequacyCheck } from './check/adequacy.js';
import { sessionVerdict, widenToResidualScatter } from './check/verdict.js';
import { applyCorrelatedFloor, correlatedFloor, whiteSigmaM } from './check/correlated-floor.js';
import { posteriorOf } from './survey/posterior.js';
import { surveyProducts } from './survey/survey.js';

/**
 * Run the whole pipeline on one FixSeries:
 * 1. calibrate the noise parameters by maximum likelihood with a robust (capped) likelihood;
 * 2. classify the fixes the second calibration reads (the whole log, or the calibration chunks of a
 *    long one with margins): forward and time-reversed gates, then the two-sided review;
 * 3. calibrate again with those decisions held fixed (outliers no longer distort the estimate);
 * 4. classify again under the calibrated model, review, and smooth.
 * Manoeuvres are absorbed by the calibrated process-noise level (estimated on the session's own
 * turns and stops), by re-admission of fixes consistent with the smoothed track, and by
 * re-acquisition in the forward pass; see docs/decisions/process-noise-adaptation.md for the measured choice.
 */
export function processSession(series: FixSeries, cfg: HindcastConfig, name: string, userDecisions?: Map<number, 'keep' | 'reject'>, timings?: StageTimings): SessionResult {
  const b = beginSession(series, cfg, name, userDecisions, timings);
  // stages 1–3: the noise calibration
  return finishSession(b, calibrationRounds(b.ps, cfg, b.prior, b.ro, timings));
}

/** A session prepared for its calibration: the fixes projected and segmented, the profile's parameters and the review options. */
export interface BegunSession {
  series: FixSeries;
  cfg: HindcastConfig;
  name: string;
  ps: PreparedSession;
  prior: AxisParams;
  ro: ReviewOptions;
  tm?: StageTimings;
}

/** Validity, local frame, per-fix noise and segments of a session (before its calibration). */
export function beginSession(series: FixSeries, cfg: HindcastConfig, name: string, userDecisions?: Map<number, 'keep' | 'reject'>, tm?: StageTimings): BegunSession {
  const t0 = tm ? performance.now() : 0;
  const ps = prepareSession(series, cfg, userDecisions);
  if (tm) tm.project += performance.now() - t0;
  return { series, cfg, name, ps, prior: axisParamsFromConfig(cfg, ps.factors.reported), ro: reviewOptions(cfg, ps.intervalSec), ...(tm ? { tm } : {}) };
}

/** Everything after the calibration: classification, the final run, the checks and the survey products. */
export function finishSession(b: BegunSession, cal: { params: AxisParams; info: CalibrationInfo; warnings: string[] }): SessionResult {
  const { series, name, ps, prior, tm } = b;
  let { cfg, ro } = b;
  const { params, info, warnings } = cal;
  let t0 = 0;
  ro = reviewAfterCalibration(ro, info);
  // stage 4 (stage 2 of a log the calibration fell back on): classify under the final model
  let plans = classify(ps, cfg, params, ro, tm);
  // the gate fitted to the tails of the log's errors (session/classify/tail-gate.ts), classified again where it widens
  const tail = cfg.gate.fitTails ? fitTailGate(plans.map((p) => ({ T: p.statistics!.T, dof: p.statistics!.dof, offered: p.offered })), cfg.gate.probability) : null;
  if (tail && tail.factor > 1) {
    cfg = { ...cfg, gate: { ...cfg.gate, probability: tail.probability } };
    ro = { ...ro, probability: tail.probability };
    plans = classify(ps, cfg, params, ro, tm);
  }
  let r = runPrepared(ps, cfg, params, name, plans, tm);
  // model adequacy (session/check/adequacy.ts): a motion model too stiff for the log is re-modelled
  const adequacy = cfg.model.adequacyCheck ? applyAdequacyCheck(ps, cfg, params, prior, r, (q) => runPrepared(ps, cfg, q, name, classify(ps, cfg, q, ro, tm), tm)) : { r, params, check: undefined };
  r = adequacy.r;
  // the session's quality verdict (session/check/verdict.ts); a degraded log's uncertainty is widened
  const verdict = sessionVerdict(r, adequacy.params, prior, cfg.noise.horizontalSigmaM);
  if (verdict.verdict === 'degraded') {
    verdict.widened = widenToResidualScatter(r);
    r.warnings.push({ file: series.file, code: 'quality', message: `degraded session: ${verdict.reasons.join('; ')}; uncertainty widened to the fixes' scatter about the track` });
  }
  // the correlated error the log cannot rule out, added to the reported uncertainty (session/check/correlated-floor.ts)
  const floor = correlatedFloor(adequacy.params, cfg.noise.correlatedFloorRatio, whiteSigmaM(adequacy.params, ps.factors));
  applyCorrelatedFloor(r, floor);
  r.info.correlatedFloor = floor;
  for (const w of warnings) r.warnings.push({ file: series.file, code: 'calibration', message: w });
  r.warnings.push(...jumpWarnings(ps));
  r.info.calibration = info;
  if (tail) r.info.tailGate = tail;
  if (adequacy.check) r.info.adequacy = adequacy.check;
  r.info.verdict = verdict;
  const post = posteriorOf(r);
  if (post) {
    if (tm) t0 = performance.now();
    r.survey = surveyProducts(r, post, {
      draws: cfg.output.surveyDraws,
      seed: cfg.output.surveySeed,
      occupationMinSec: cfg.output.occupationMinSec,
      addedVarEnu: [floor.addedSdM.horizontal ** 2, floor.addedSdM.horizontal ** 2, floor.addedSdM.vertical ** 2],
    });
    if (tm) tm.products += performance.now() - t0;
  }
  return r;
}
