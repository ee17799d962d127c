/**
 * Classification of a session's fixes under a set of axis parameters: per segment the two-way gate
 * and the two-sided review (review.ts) with the local noise scale (local-noise-scale.ts); or, for the
 * second calibration round of a long log, of its calibration chunks only.
 */
import type { HindcastConfig } from '../../config/schema.js';
import type { DecisionLog } from '../result/decision-log.js';
import type { StageTimings } from '../result/timings.js';
import type { ReviewOptions, reviewSegment } from './review.js';
import { buildAxisModels, filterOptions, type AxisParams } from '../prepare/axis-params.js';
import { segmentData, segmentDataRange, segmentGrid, sliceSegment, type PreparedSession } from '../prepare/prepare.js';
import { localScaleOptions, reviewWithLocalScale } from './local-noise-scale.js';

/** Per-segment state carried between the stages of processSession. */
export interface SegmentPlan {
  offered: Uint8Array;
  decisions?: { kept: Uint8Array; gateRejected: Uint8Array; why: DecisionLog };
  /** The local noise scale of R per epoch the decisions were made under (session/classify/local-noise-scale.ts; absent: none). */
  scale?: Float64Array | null;
  /** The converged review behind the decisions and the parameters it ran under (reused when the final run has the same). */
  outcome?: { params: AxisParams; rev: ReturnType<typeof reviewSegment> };
  /** The review statistic and its dof per epoch behind the decisions (read by the tail fit, tail-gate.ts). */
  statistics?: { T: Float64Array; dof: Uint8Array };
}

/** Classification of every segment's fixes: two-way gate, then the two-sided review. */
export function classify(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams, ro: ReviewOptions, tm?: StageTimings): SegmentPlan[] {
  const opt = filterOptions(cfg, params);
  const models = buildAxisModels(params, ps.hasHeight);
  return ps.segments.map((seg) => {
    const t0 = tm ? performance.now() : 0;
    const { data } = segmentData(ps, seg, params, cfg.segments.bridgeFactor);
    if (tm) tm.review += performance.now() - t0;
    const offered = data.use.slice();
    const { rev, scale } = reviewWithLocalScale(models, data, offered, opt, ro, localScaleOptions(cfg.noise.localScaleWindowSec, cfg.gate.probability), tm);
    return { offered, decisions: { kept: rev.kept, gateRejected: rev.gateRejected, why: rev.why }, scale, outcome: rev.converged ? { params, rev } : undefined, statistics: { T: rev.T, dof: rev.dof } };
  });
}

/** Epochs added on each side of a calibration chunk when it is classified alone (the filter settles, the review sees the chunk's neighbours). */
export const CHUNK_MARGIN_EPOCHS = 1000;

/**
 * Classification of the calibration chunks only (each with CHUNK_MARGIN_EPOCHS on both sides, cut
 * to start and end on a fix): fills `uses` per segment with held-fixed decisions (2 kept, 0
 * rejected) inside the chunks, which is all that the second calibration reads.
 */
export function classifyWindows(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams, ro: ReviewOptions, windows: Array<{ seg: number; start: number; len: number }>, uses: Map<number, Uint8Array>, tm?: StageTimings): void {
  const opt = filterOptions(cfg, params);
  const models = buildAxisModels(params, ps.hasHeight);
  for (const w of windows) {
    const t0 = tm ? performance.now() : 0;
    const seg = ps.segments[w.seg]!;
    const N = segmentGrid(ps, seg, cfg.segments.bridgeFactor).tSec.length;
    let u = uses.get(w.seg);
    if (!u) uses.set(w.seg, (u = new Uint8Array(N)));
    // the chunk with its margins only (the same values as that part of the segment's data)
    const a0 = Math.max(0, w.start - CHUNK_MARGIN_EPOCHS);
    const b0 = Math.min(N, w.start + w.len + CHUNK_MARGIN_EPOCHS);
    const data = segmentDataRange(ps, seg, params, cfg.segments.bridgeFactor, a0, b0);
    let a = a0;
    let b = b0;
    while (a < b && data.use[a - a0] === 0) a++;
    while (b > a && data.use[b - 1 - a0] === 0) b--;
    if (tm) tm.review += performance.now() - t0;
    if (b - a < 3) continue;
    const part = sliceSegment(data, a - a0, b - a0);
    const offered = part.use.slice();
    const { rev } = reviewWithLocalScale(models, part, offered, opt, ro, localScaleOptions(cfg.noise.localScaleWindowSec, cfg.gate.probability), tm);
    for (let k = 0; k < part.N; k++) u[a + k] = offered[k] === 0 ? 0 : rev.kept[k] ? 2 : 0;
  }
}
