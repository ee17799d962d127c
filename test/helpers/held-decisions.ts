/**
 * The held-fixed outlier decisions of the second calibration round as processSession makes them:
 * the two-sided review of every segment under the first round's parameters, each offered fix kept
 * without gate (2) or rejected (0). For tests that run the second round on its own.
 */
import type { HindcastConfig } from '../../src/config/schema.js';
import { buildAxisModels, filterOptions, reviewOptions, type AxisParams } from '../../src/session/prepare/axis-params.js';
import { segmentData, type PreparedSession } from '../../src/session/prepare/prepare.js';
import { reviewSegment } from '../../src/session/classify/review.js';

export function heldFixedDecisions(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams): Map<number, Uint8Array> {
  const ro = reviewOptions(cfg, ps.intervalSec);
  const fopt = filterOptions(cfg, params);
  const models = buildAxisModels(params, ps.hasHeight);
  const uses = new Map<number, Uint8Array>();
  ps.segments.forEach((seg, si) => {
    const { data } = segmentData(ps, seg, params, cfg.segments.bridgeFactor);
    const offered = data.use.slice();
    const rev = reviewSegment(models, data, offered, fopt, ro);
    uses.set(si, Uint8Array.from(offered, (u, k) => (u === 0 ? 0 : rev.kept[k] ? 2 : 0)));
  });
  return uses;
}
