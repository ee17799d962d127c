/**
 * The final run of a session under its chosen parameters: the review and smoothing of every segment
 * (reusing a converged classification under the same parameters), then the SessionResult: epochs,
 * geodetic positions, sd and 95% ellipses, status, outlier records and metrics, and the joint
 * posterior held beside it for the survey products.
 */
import type { HindcastConfig } from '../../config/schema.js';
import { covStride, type FilterOptions, type SegmentData } from '../../estimation/track-filter.js';
import type { AxisModel } from '../../models/axis-model.js';
import { errorEllipse } from '../../estimation/error-ellipse.js';
import type { DecisionLog } from '../result/decision-log.js';
import type { StageTimings } from '../result/timings.js';
import { reviewSegment, type ReviewOptions, type ReviewOutcome } from '../classify/review.js';
import { reviewThresholds } from '../classify/review-decisions.js';
import { buildAxisModels, filterOptions, reviewOptions, type AxisParams } from '../prepare/axis-params.js';
import { segmentData, segmentGrid, type PreparedSession } from '../prepare/prepare.js';
import type { SegmentPlan } from '../classify/classify.js';
import { buildOutliersAndMetrics } from './products.js';
import { STATUS, type SessionResult } from '../result/result.js';
import { attachNoiseScale, scaleVariances } from '../classify/local-noise-scale.js';
import { attachPosterior } from '../survey/posterior.js';

/** What the final review and smoothing of one segment hand to the result. */
interface SegmentOutcome {
  data: SegmentData;
  fix: Int32Array;
  rev: ReviewOutcome;
}

/** Stage 5 and the products: final review and smoothing of every segment, then the SessionResult. */
export function runPrepared(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams, name: string, plans?: SegmentPlan[], tm?: StageTimings): SessionResult {
  const models = buildAxisModels(p, ps.hasHeight);
  const opt = filterOptions(cfg, p);
  const ro = reviewOptions(cfg, ps.intervalSec);
  const segOuts = ps.segments.map((seg, si) => finalSegment(ps, cfg, p, seg, models, opt, ro, plans?.[si], tm));
  const tProducts = tm ? performance.now() : 0;
  const N = segOuts.reduce((a, o) => a + o.data.N, 0);
  const res = allocateResult(ps, name, N, models.length);
  const { gateRejectedFix, whyFix, noiseScale, reacq } = fillEpochs(res, ps, models, segOuts, plans);
  // raw positions, outlier records and metrics follow from the final epochs (shared with the IMU path)
  buildOutliersAndMetrics(res, ps, gateRejectedFix, reacq, undefined, { why: whyFix, readmit: reviewThresholds(cfg.gate.probability).readmit });
  res.info = {
    frame: ps.frame.definition,
    heightReferenceM: ps.heightRefM,
    model: p,
    gateProbability: cfg.gate.probability,
    qualityColumnsUsed: ps.factors.used,
    // the zone the log's local times were read in (the report shows its times in it as well as in UTC)
    ...(cfg.input.timeZone ? { timeZone: cfg.input.timeZone } : {}),
  };
  attachNoiseScale(res, noiseScale);
  // the joint posterior (filtered and smoothed moments per segment) beside the result, for the
  // survey products and the library's draws (session/survey/posterior.ts)
  let e0 = 0;
  attachPosterior(res, {
    segments: segOuts.map((o) => {
      const sp = { models, data: o.rev.data, filtered: o.rev.filtered, smoothed: o.rev.history, qScale: opt.qScale, epoch0: e0 };
      e0 += o.data.N;
      return sp;
    }),
    N, nAx: models.length, frame: ps.frame, heightRefM: ps.heightRefM, hasHeight: ps.hasHeight,
  });
  if (tm) tm.products += performance.now() - tProducts;
  return res;
}

/** The final review and smoothing of one segment (or the converged classification's, when it ran under the same parameters). */
function finalSegment(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams, seg: [number, number], models: AxisModel[], opt: FilterOptions, ro: ReviewOptions, plan: SegmentPlan | undefined, tm?: StageTimings): SegmentOutcome {
  if (plan?.outcome && plan.outcome.params === p) {
    // a converged review under the same parameters would only repeat itself (same decisions, same
    // history); its data hold the epochs and times (the grid's), so the segment's filter inputs
    // are not built again (at 1M fixes ~50 MB of fresh arrays)
    const rev = plan.outcome.rev;
    return { data: rev.data, fix: segmentGrid(ps, seg, cfg.segments.bridgeFactor).fix, rev };
  }
  const t0 = tm ? performance.now() : 0;
  const { data, fix } = segmentData(ps, seg, p, cfg.segments.bridgeFactor);
  if (tm) tm.review += performance.now() - t0;
  const offered = plan?.offered ?? data.use.slice();
  if (plan?.scale) scaleVariances(data, plan.scale);
  const rev = reviewSegment(models, data, offered, opt, ro, plan?.decisions, tm);
  return { data, fix, rev };
}

/** An empty SessionResult of N epochs (arrays every epoch writes are zero-filled; the rest NaN). */
function allocateResult(ps: PreparedSession, name: string, N: number, nAx: number): SessionResult {
  const s = ps.series;
  const mk = () => new Float64Array(N).fill(NaN);
  // arrays the epoch loop writes at every epoch (the segments cover the N epochs) need no NaN first
  const all = () => new Float64Array(N);
  const up = nAx === 3 ? all : mk;
  return {
    name,
    file: s.file,
    N,
    tSec: all(), latDeg: all(), lonDeg: all(), heightM: ps.hasHeight ? all() : mk(),
    posEnu: [all(), all(), up()], velEnu: [all(), all(), up()], sdEnu: [all(), all(), up()],
    covEN: all(), ell95MajorM: all(), ell95MinorM: all(), ell95AzimuthDeg: all(),
    status: new Uint8Array(N), segment: new Int32Array(N), fix: new Int32Array(N),
    nis: all(), nisThreshold: all(),
    hasHeight: ps.hasHeight,
    outliers: [],
    metrics: undefined as unknown as SessionResult['metrics'],
    warnings: s.warnings.slice(),
    info: {},
  };
}

/**
 * Every epoch of the result from the segments' outcomes: time, segment, fix, smoothed position,
 * velocity and sd, the 95% ellipse, geodetic position, NIS and status; and per fix the gate's
 * rejections and the deciding tests, with the local noise scale per epoch.
 */
function fillEpochs(res: SessionResult, ps: PreparedSession, models: AxisModel[], segOuts: SegmentOutcome[], plans?: SegmentPlan[]): { gateRejectedFix: Uint8Array; whyFix: DecisionLog; noiseScale: Float64Array; reacq: number } {
  const nAx = models.length;
  const ll = [0, 0];
  let k0 = 0;
  let reacq = 0;
  const gateRejectedFix = new Uint8Array(ps.series.n);
  // the deciding test of every rejected fix, by fix index
  const whyFix: DecisionLog = new Map();
  // the local noise scale each epoch's R was multiplied by (1: none)
  const noiseScale = new Float64Array(res.N).fill(1);
  segOuts.forEach((o, si) => {
    const sc = plans?.[si]?.scale;
    if (sc) noiseScale.set(sc, k0);
    const { rev } = o;
    const x = rev.history.x, P = rev.history.P;
    reacq += rev.history.reacquired.length;
    for (const [k, d] of rev.why) if (o.fix[k]! >= 0) whyFix.set(o.fix[k]!, d);
    for (let k = 0; k < o.data.N; k++) {
      const j = k0 + k;
      res.tSec[j] = o.data.tSec[k]!;
      res.segment[j] = si;
      const i = o.fix[k]!;
      res.fix[j] = i;
      if (i >= 0) gateRejectedFix[i] = rev.gateRejected[k]!;
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        res.posEnu[a]![j] = x[a]![k * n]!;
        res.velEnu[a]![j] = x[a]![k * n + 1]!;
        res.sdEnu[a]![j] = Math.sqrt(P[a]![k * covStride(n)]!);
      }
      // independent axes: no east–north covariance (covEN stays as allocated, +0 at every epoch:
      // not writing it leaves 8 MB at 1M untouched until read)
      const ve = res.sdEnu[0]![j]! ** 2, vn = res.sdEnu[1]![j]! ** 2;
      const el = errorEllipse(ve, vn, 0);
      res.ell95MajorM[j] = el.majorM;
      res.ell95MinorM[j] = el.minorM;
      res.ell95AzimuthDeg[j] = el.azimuthDeg;
      ps.frame.inverse(res.posEnu[0]![j]!, res.posEnu[1]![j]!, ll);
      res.lonDeg[j] = ll[0]!;
      res.latDeg[j] = ll[1]!;
      if (ps.hasHeight) res.heightM[j] = res.posEnu[2]![j]! + ps.heightRefM;
      res.nis[j] = rev.T[k]!;
      res.nisThreshold[j] = rev.threshold[k]!;
      res.status[j] = epochStatus(ps, i, rev.kept[k]!);
    }
    k0 += o.data.N;
  });
  return { gateRejectedFix, whyFix, noiseScale, reacq };
}

/** Status of an epoch: bridged (no fix), the user's decision, invalid (not offered), or the review's. */
function epochStatus(ps: PreparedSession, i: number, kept: number): number {
  if (i < 0) return STATUS.bridged;
  if (ps.userRejected[i]) return STATUS.userRejected;
  if (!ps.offered[i]) return STATUS.outlier;
  if (ps.forced[i]) return STATUS.userKept;
  return kept ? STATUS.kept : STATUS.outlier;
}
