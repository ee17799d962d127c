/**
 * The model under which the fixes are first classified for the second calibration round
 * (processSession stage 2, calibratedParams): the first round's estimate, made stiffer where its
 * process noise is far above the robust estimate of the log's motion (robust-motion.ts), with a
 * longer run of rejections before the filter re-acquires.
 *
 * Why. The first round maximizes a capped likelihood under the gate. A multipath burst whose offset
 * grows over seconds (a ramp) is followed by a filter with enough process noise, and at 5–20 Hz a
 * ramp is tens of fixes: keeping them costs the whole log a little extra process noise, rejecting
 * them costs each its capped term. The likelihood chooses the first: on a 20 Hz walk with two 38 m
 * ramps the first round put q at 7.0 m²/s³ where the same log without bursts gives 0.04, and the
 * classification under that q kept the ramps, so the second round (which holds those decisions)
 * kept the inflated q. Classified under the robust q instead, the ramps are rejected and the second
 * round finds 0.028. Where the motion really needs the larger q (manoeuvres), the second round
 * finds it again from the kept fixes around the rejected ones, and the final classification (under
 * the second round's model, with the configured gate) re-admits them.
 * The longer re-acquisition: a burst of the length multipath produces (rising 2–8 s, holding, fading
 * over up to 5 s) outlasts the configured 5.5 s, and a stiff filter re-acquiring onto it would keep
 * it; 15 s outlasts it, and a lost track is still re-acquired.
 * Measured on the scenario family (docs/noise-model.md "Classification start").
 */
import type { HindcastConfig } from '../../config/schema.js';
import type { AxisParams } from '../prepare/axis-params.js';
import type { PreparedSession } from '../prepare/prepare.js';
import { robustProcessNoise } from './robust-motion.js';

/** Re-acquisition duration (s) of the first classification: longer than a multipath burst. */
export const START_REACQUIRE_AFTER_SEC = 15;

/** At most this factor stiffer than the first round's process noise. */
export const START_MAX_STIFFENING = 1000;

export interface ClassificationStart {
  params: AxisParams;
  cfg: HindcastConfig;
  /** The robust process-noise estimate (NaN where the log does not give one). */
  robustQHorizontal: number;
}

/** The model and configuration of the first classification (see the file header). */
export function classificationStart(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams): ClassificationStart {
  const startCfg: HindcastConfig = { ...cfg, gate: { ...cfg.gate, reacquireAfterSec: Math.max(cfg.gate.reacquireAfterSec ?? 0, START_REACQUIRE_AFTER_SEC) } };
  if (params.motion !== 'cv') return { params, cfg, robustQHorizontal: NaN };
  const qr = robustProcessNoise(ps);
  const qStart = Math.max(qr, params.qHorizontal / START_MAX_STIFFENING);
  if (!Number.isFinite(qr) || !(qStart < params.qHorizontal)) return { params, cfg: startCfg, robustQHorizontal: qr };
  // the vertical stiffened alike (its own robust estimate would need a climbing log)
  const f = qStart / params.qHorizontal;
  return { params: { ...params, qHorizontal: qStart, qVertical: params.qVertical * f }, cfg: startCfg, robustQHorizontal: qr };
}
