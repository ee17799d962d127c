/**
 * The final run of a session under its chosen parameters: the review and smoothing of every segment
 * (reusing a converged classification under the same parameters), then the SessionResult: epochs,
 * geodetic positions, sd and 95% ellipses, status, outlier records and metrics, and the joint
 * posterior held beside it for the survey products.
 */
import type { HindcastConfig } from '../config/schema.js';
import { covStride, type SegmentData } from '../estimation/track-filter.js';
import { errorEllipse } from '../estimation/error-ellipse.js';
import type { DecisionLog } from './decision-log.js';
import type { StageTimings } from './timings.js';
import { reviewSegment, type ReviewOutcome } from './review.js';
import { reviewThresholds } from './review-decisions.js';
import { buildAxisModels, filterOptions, reviewOptions, type AxisParams } from './axis-params.js';
import { segmentData, segmentGrid, type PreparedSession } from './prepare.js';
import type { SegmentPlan } from './classify.js';
import { buildOutliersAndMetrics } from './products.js';
import { STATUS, type SessionResult } from './result.js';
import { attachNoiseScale, scaleVariances } from './local-noise-scale.js';
import { attachPosterior } from './posterior.js';

/** Stage 5 and the products: final review and smoothing of every segment, then the SessionResult. */
export function runPrepared(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams, name: string, plans?: SegmentPlan[], tm?: StageTimings): SessionResult {
  const s = ps.series;
  const models = buildAxisModels(p, ps.hasHeight);
  const opt = filterOptions(cfg, p);
  const ro = reviewOptions(cfg, ps.intervalSec);
  const nAx = models.length;
  type SegOut = { data: SegmentData; fix: Int32Array; x: Float64Array[]; P: Float64Array[]; kept: Uint8Array; gateRejected: Uint8Array; why: DecisionLog; T: Float64Array; thr: Float64Array; reacq: number; rev: ReviewOutcome };
  const segOuts: SegOut[] = [];
  ps.segments.forEach((seg, si) => {
    const plan = plans?.[si];
    let rev: ReviewOutcome;
    let data: SegmentData;
    let fix: Int32Array;
    if (plan?.outcome && plan.outcome.params === p) {
      // a converged review under the same parameters would only repeat itself (same decisions, same
      // history); its data hold the epochs and times (the grid's), so the segment's filter inputs
      // are not built again (at 1M fixes ~50 MB of fresh arrays)
      rev = plan.outcome.rev;
      data = rev.data;
      fix = segmentGrid(ps, seg, cfg.segments.bridgeFactor).fix;
    } else {
      const t0 = tm ? performance.now() : 0;
      ({ data, fix } = segmentData(ps, seg, p, cfg.segments.bridgeFactor));
      if (tm) tm.review += performance.now() - t0;
      const offered = plan?.offered ?? data.use.slice();
      if (plan?.scale) scaleVariances(data, plan.scale);
      rev = reviewSegment(models, data, offered, opt, ro, plan?.decisions, tm);
    }
    const h = rev.history;
    segOuts.push({ data, fix, x: h.x, P: h.P, kept: rev.kept, gateRejected: rev.gateRejected, why: rev.why, T: rev.T, thr: rev.threshold, reacq: h.reacquired.length, rev });
  });
  const tProducts = tm ? performance.now() : 0;
  const N = segOuts.reduce((a, o) => a + o.data.N, 0);
  const mk = () => new Float64Array(N).fill(NaN);
  // arrays the loop below writes at every epoch (the segments cover the N epochs) need no NaN first
  const all = () => new Float64Array(N);
  const up = nAx === 3 ? all : mk;
  const res: SessionResult = {
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
  const ll = [0, 0];
  let k0 = 0;
  let reacq = 0;
  const gateRejectedFix = new Uint8Array(s.n);
  // the deciding test of every rejected fix, by fix index
  const whyFix: DecisionLog = new Map();
  // the local noise scale each epoch's R was multiplied by (1: none)
  const noiseScale = new Float64Array(N).fill(1);
  segOuts.forEach((o, si) => {
    const sc = plans?.[si]?.scale;
    if (sc) noiseScale.set(sc, k0);
    reacq += o.reacq;
    for (const [k, d] of o.why) if (o.fix[k]! >= 0) whyFix.set(o.fix[k]!, d);
    for (let k = 0; k < o.data.N; k++) {
      const j = k0 + k;
      res.tSec[j] = o.data.tSec[k]!;
      res.segment[j] = si;
      const i = o.fix[k]!;
      res.fix[j] = i;
      if (i >= 0) gateRejectedFix[i] = o.gateRejected[k]!;
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        res.posEnu[a]![j] = o.x[a]![k * n]!;
        res.velEnu[a]![j] = o.x[a]![k * n + 1]!;
        res.sdEnu[a]![j] = Math.sqrt(o.P[a]![k * covStride(n)]!);
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
      res.nis[j] = o.T[k]!;
      res.nisThreshold[j] = o.thr[k]!;
      if (i < 0) res.status[j] = STATUS.bridged;
      else if (ps.userRejected[i]) res.status[j] = STATUS.userRejected;
      else if (!ps.offered[i]) res.status[j] = STATUS.outlier;
      else if (ps.forced[i]) res.status[j] = STATUS.userKept;
      else res.status[j] = o.kept[k] ? STATUS.kept : STATUS.outlier;
    }
    k0 += o.data.N;
  });
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
  // survey products and the library's draws (session/posterior.ts)
  let e0 = 0;
  attachPosterior(res, {
    segments: segOuts.map((o) => {
      const sp = { models, data: o.rev.data, filtered: o.rev.filtered, smoothed: o.rev.history, qScale: opt.qScale, epoch0: e0 };
      e0 += o.data.N;
      return sp;
    }),
    N, nAx, frame: ps.frame, heightRefM: ps.heightRefM, hasHeight: ps.hasHeight,
  });
  if (tm) tm.products += performance.now() - tProducts;
  return res;
}
