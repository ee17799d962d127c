/**
 * The per-axis model parameters of a session (motion model, process noise, white and correlated fix
 * error) and what is built from them: the axis models, the filter's and the review's options.
 */
import type { HindcastConfig } from '../../config/schema.js';
import { makeAxisModel, type AxisModel } from '../../models/axis-model.js';
import type { FilterOptions } from '../../estimation/track-filter.js';

export interface AxisParams {
  motion: 'cv' | 'ca';
  qHorizontal: number;
  qVertical: number;
  sigmaHorizontalM: number;
  sigmaVerticalM: number;
  gmHorizontalSigmaM: number;
  gmVerticalSigmaM: number;
  /** Time constant of the horizontal (east, north) correlated error (s). */
  gmTauSec: number;
  /** Time constant of the vertical correlated error (s); gmTauSec when absent. */
  gmVerticalTauSec?: number;
  /** Exponents of the quality columns in the per-fix white sigma (fix-noise.ts); 1 (proportional) when absent. */
  hdopExponent?: number;
  satsExponent?: number;
  /** Exponent of the fix-quality factor (fix-noise.ts FIX_QUALITY_FACTOR); 1 when absent. */
  fixQualityExponent?: number;
  /** Exponent of reported per-fix sigmas about their median (fix-noise.ts); 1 when absent. */
  reportedExponent?: number;
}

/** Model parameters from the configuration; with reported per-fix sigmas the white "sigma" is their scale. */
export function axisParamsFromConfig(cfg: HindcastConfig, reportedSigmas = false): AxisParams {
  return {
    motion: cfg.model.motion,
    qHorizontal: cfg.model.qHorizontal,
    qVertical: cfg.model.qVertical,
    sigmaHorizontalM: reportedSigmas ? cfg.noise.reportedSigmaScale : cfg.noise.horizontalSigmaM,
    sigmaVerticalM: reportedSigmas ? cfg.noise.reportedSigmaScale : cfg.noise.verticalSigmaM,
    gmHorizontalSigmaM: cfg.noise.correlatedHorizontalSigmaM,
    gmVerticalSigmaM: cfg.noise.correlatedVerticalSigmaM,
    gmTauSec: cfg.noise.correlationTimeSec,
    gmVerticalTauSec: cfg.noise.verticalCorrelationTimeSec ?? cfg.noise.correlationTimeSec,
  };
}

export function buildAxisModels(p: AxisParams, withHeight: boolean): AxisModel[] {
  const h = makeAxisModel({ motion: p.motion, q: p.qHorizontal, gm: { sigmaM: p.gmHorizontalSigmaM, tauSec: p.gmTauSec } });
  const models = [h, h];
  if (withHeight) models.push(makeAxisModel({ motion: p.motion, q: p.qVertical, gm: { sigmaM: p.gmVerticalSigmaM, tauSec: p.gmVerticalTauSec ?? p.gmTauSec } }));
  return models;
}

export function filterOptions(cfg: HindcastConfig, p: AxisParams): FilterOptions {
  return {
    gateProbability: cfg.gate.probability,
    reacquireAfter: cfg.gate.reacquireAfter,
    reacquireAfterSec: cfg.gate.reacquireAfterSec,
    priorVar: [1e6, cfg.model.priorSpeedMps ** 2, cfg.model.priorAccelMps2 ** 2],
  };
}

/** Least span without a fix that ends the excursion test's bridge (s; see reviewOptions). */
export const EXCURSION_MAX_GAP_SEC = 2;

/** The two-sided review's settings (src/session/classify/review.ts). */
export interface ReviewOptions {
  probability: number;
  maxPasses: number;
  /** Only one fix is rejected per pass within this many seconds (masking guard). */
  guardSec: number;
  /** Re-run the filter and smoother only where decisions changed (default); false: full passes (the reference). */
  windowed?: boolean;
  /** Try the sandwiched kept runs the other way round once converged (default); false: off. */
  swaps?: boolean;
  /** Look for runs that leave the track and come back once converged (session/classify/excursion.ts); false: off. */
  excursions?: boolean;
  /**
   * Horizontal process noise of the excursion test's bridge (m²/s³): the quiet motion's
   * (classification-start.ts, the robust estimate of the log's motion), so that a turn does not pass
   * as a motion the bridge allows; the model's own where unset or larger, or where the model is not
   * constant-velocity (the value is a constant-velocity spectral density).
   */
  excursionQHorizontal?: number;
  /** Longest span without a fix the excursion test's bridge may cross (s). */
  excursionMaxGapSec?: number;
}

/** Review settings from the configuration. */
export function reviewOptions(cfg: HindcastConfig, intervalSec = 1): ReviewOptions {
  return {
    probability: cfg.gate.probability,
    maxPasses: 10,
    guardSec: Math.max(5 * intervalSec, 5),
    // an outage of more than two missing fixes (at least 2 s) ends the bridge
    excursionMaxGapSec: Math.max(EXCURSION_MAX_GAP_SEC, 3 * intervalSec),
    ...(cfg.gate.excursionTest ? {} : { excursions: false }),
  };
}
