/**
 * The per-session pipeline: fixes → local frame → segments and epoch grid → forward filter with
 * gate → RTS smoother → products. Pure: no file system; the batch layer reads and writes.
 */
import type { HindcastConfig } from '../config/schema.js';
import type { FixSeries } from '../input/fix-series.js';
import { makeLocalFrame, sessionCentre } from '../geodesy/local-frame.js';
import { makeAxisModel, type AxisModel } from '../models/axis-model.js';
import type { SegmentData, FilterOptions } from '../estimation/track-filter.js';
import { covStride } from '../estimation/track-filter.js';
import { errorEllipse } from '../output/ellipse.js';
import { epochGrid, nominalIntervalSec, splitSegments } from './segments.js';
import { factorsWithExponents, fixSigmaFactors } from './fix-noise.js';
import { classificationStart } from './classification-start.js';
import { DEFAULT_CALIBRATION, FIRST_ROUND, calibrateSession, calibrationWindows, sliceSegment, type CalibrationInfo } from './calibrate.js';
import { reviewSegment, type ReviewOptions, type ReviewOutcome } from './review.js';
import type { DecisionLog } from './decision-log.js';
import { reviewThresholds } from './review-decisions.js';
import { buildOutliersAndMetrics } from './products.js';
import { STATUS, type OutlierRecord, type SessionResult } from './result.js';
import type { StageTimings } from './timings.js';
import { selectKth } from '../estimation/select.js';
import { applyAdequacyCheck } from './adequacy.js';
import { sessionVerdict, widenToResidualScatter } from './verdict.js';
import { attachNoiseScale, localScaleOptions, reviewWithLocalScale, scaleVariances } from './local-noise-scale.js';
import { attachPosterior, posteriorOf } from './posterior.js';
import { surveyProducts } from './survey.js';

/** Validity of each fix before filtering: finite, in range, not the (0, 0) "null island" placeholder. */
export function validFixes(s: FixSeries): { valid: Uint8Array; why: string[] } {
  const valid = new Uint8Array(s.n);
  const why: string[] = new Array(s.n).fill('');
  for (let i = 0; i < s.n; i++) {
    const lat = s.latDeg[i]!, lon = s.lonDeg[i]!;
    if (!Number.isFinite(lat) || !Number.isFinite(lon) || Math.abs(lat) > 90 || Math.abs(lon) > 180) why[i] = 'position out of range';
    else if (Math.abs(lat) < 1e-7 && Math.abs(lon) < 1e-7) why[i] = 'position at 0°, 0° (no fix)';
    else if (s.quality.fixQuality && s.quality.fixQuality[i] === 0) why[i] = 'fix quality 0 (no fix)';
    else valid[i] = 1;
  }
  flagHeightJumps(s, valid, why);
  return { valid, why };
}

/** Largest vertical speed (m/s) any platform of the profiles reaches, and a slack for fix noise (m). */
export const HEIGHT_JUMP_RATE_MPS = 30;
export const HEIGHT_JUMP_SLACK_M = 150;

/**
 * Impossible jumps in height: a fix whose height differs from the median of its valid neighbours
 * (up to five on each side) by more than the slack plus the fastest climb over the time to the
 * farthest of them is invalid; the median of neighbours is robust to a burst of bad heights.
 * The median lies between the neighbours' smallest and largest heights, so a fix within the limit
 * of both is not a jump and needs no median (rounding is monotonic, so this holds for the computed
 * differences too); only the others sort their neighbours, as before (the same values, the same order).
 */
export function flagHeightJumps(s: FixSeries, valid: Uint8Array, why: string[]): void {
  const h = s.heightM;
  if (!h) return;
  const W = 5;
  const n = s.n, tSec = s.tSec;
  // the neighbours' heights in the order they are found (at most 2W values: no allocation per fix)
  const nb = new Float64Array(2 * W);
  for (let i = 0; i < n; i++) {
    const hi = h[i]!;
    if (!valid[i] || !Number.isFinite(hi)) continue;
    const ti = tSec[i]!;
    let m = 0;
    let span = 0;
    let lo = Infinity, up = -Infinity;
    for (let d = 1; d <= 3 * W && m < 2 * W; d++)
      for (let side = 0; side < 2; side++) {
        const j = side === 0 ? i - d : i + d;
        if (j < 0 || j >= n || !valid[j] || !Number.isFinite(h[j]!) || m >= 2 * W) continue;
        const v = h[j]!;
        nb[m++] = v;
        if (v < lo) lo = v;
        if (v > up) up = v;
        span = Math.max(span, Math.abs(tSec[j]! - ti));
      }
    if (m < 4) continue;
    const limit = HEIGHT_JUMP_SLACK_M + HEIGHT_JUMP_RATE_MPS * span;
    // |h − median| ≤ max(|h − lowest|, |h − highest|): within the limit, no jump
    if (Math.abs(hi - lo) <= limit && Math.abs(hi - up) <= limit) continue;
    // insertion sort in the order found (what inserting each value as it was found gave)
    for (let a = 1; a < m; a++) {
      const v = nb[a]!;
      let q = a;
      while (q > 0 && nb[q - 1]! > v) {
        nb[q] = nb[q - 1]!;
        q--;
      }
      nb[q] = v;
    }
    const med = nb[m >> 1]!;
    const jump = Math.abs(hi - med);
    if (jump > limit) {
      valid[i] = 0;
      why[i] = `impossible height jump: ${jump.toFixed(0)} m from its neighbours within ${span.toFixed(1)} s`;
    }
  }
}

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

/** Prepared, projected fixes shared by calibration and the final run. */
export interface PreparedSession {
  series: FixSeries;
  valid: Uint8Array;
  invalidWhy: string[];
  /** Fixes offered to the filter (valid and not rejected by the user). */
  offered: Uint8Array;
  /** 1 for fixes the user kept (no gate). */
  forced: Uint8Array;
  /** 1 for fixes the user rejected. */
  userRejected: Uint8Array;
  frame: ReturnType<typeof makeLocalFrame>;
  heightRefM: number;
  hasHeight: boolean;
  e: Float64Array;
  n: Float64Array;
  u: Float64Array;
  factors: ReturnType<typeof fixSigmaFactors>;
  intervalSec: number;
  segments: Array<[number, number]>;
  /** Epoch grid of each segment (filled on first use: the grid depends on the session and the bridge factor only). */
  grids: Map<string, { tSec: Float64Array; fix: Int32Array }>;
}

export function prepareSession(s: FixSeries, cfg: HindcastConfig, userDecisions?: Map<number, 'keep' | 'reject'>): PreparedSession {
  const { valid, why } = validFixes(s);
  const offered = valid.slice();
  const forced = new Uint8Array(s.n);
  const userRejected = new Uint8Array(s.n);
  if (userDecisions)
    for (const [i, d] of userDecisions) {
      if (d === 'reject') {
        offered[i] = 0;
        userRejected[i] = 1;
      } else if (valid[i]) forced[i] = 1;
    }
  // e, n, u serve first as the scratch of the medians (centre, height reference), then are set to
  // NaN and filled: the same medians, without three more arrays of fresh memory (24 MB at 1M fixes)
  const e = new Float64Array(s.n);
  const n = new Float64Array(s.n);
  const u = new Float64Array(s.n);
  const [lat0, lon0] = sessionCentre(s.latDeg, s.lonDeg, valid, [e, n]);
  const frame = makeLocalFrame(lat0, lon0);
  // the valid heights in order, in a typed array (the values a list of them would hold)
  const hs = u;
  let nh = 0;
  if (s.heightM) for (let i = 0; i < s.n; i++) if (valid[i] && Number.isFinite(s.heightM[i]!)) hs[nh++] = s.heightM[i]!;
  // the median order statistic, selected without sorting (the value of the sorted array)
  const hasHeight = nh > 0;
  const heightRefM = hasHeight ? selectKth(hs.subarray(0, nh), nh >> 1) : 0;
  e.fill(NaN);
  n.fill(NaN);
  u.fill(NaN);
  const out = [0, 0];
  for (let i = 0; i < s.n; i++) {
    if (!valid[i]) continue;
    frame.forward(s.lonDeg[i]!, s.latDeg[i]!, out);
    e[i] = out[0]!;
    n[i] = out[1]!;
    if (hasHeight && s.heightM) u[i] = s.heightM[i]! - heightRefM;
  }
  const intervalSec = nominalIntervalSec(s.tSec, offered);
  const segments = splitSegments(s.tSec, offered, cfg.segments.maxGapSec);
  return { series: s, valid, invalidWhy: why, offered, forced, userRejected, frame, heightRefM, hasHeight, e, n, u, factors: fixSigmaFactors(s), intervalSec, segments, grids: new Map() };
}

/** The epoch grid of a segment (computed once per session and bridge factor). */
export function segmentGrid(ps: PreparedSession, seg: [number, number], bridgeFactor: number): { tSec: Float64Array; fix: Int32Array } {
  const key = `${seg[0]}:${seg[1]}:${bridgeFactor}`;
  let grid = ps.grids.get(key);
  if (!grid) {
    grid = epochGrid(ps.series.tSec, seg[0], seg[1], ps.intervalSec, bridgeFactor);
    ps.grids.set(key, grid);
  }
  return grid;
}

/** Build the filter inputs of one segment. */
export function segmentData(ps: PreparedSession, seg: [number, number], p: AxisParams, bridgeFactor: number): { data: SegmentData; fix: Int32Array } {
  const grid = segmentGrid(ps, seg, bridgeFactor);
  const N = grid.tSec.length;
  const { z, r, use } = fillSegment(ps, grid.fix, p, 0, N);
  return { data: { N, tSec: grid.tSec, z, r, use }, fix: grid.fix };
}

/**
 * The filter inputs of the epochs from..to−1 of a segment: the same values as
 * sliceSegment(segmentData(…).data, from, to), without building the rest of the segment (the
 * calibration reads four chunks of 1000 epochs from segments of up to millions).
 */
export function segmentDataRange(ps: PreparedSession, seg: [number, number], p: AxisParams, bridgeFactor: number, from: number, to: number): SegmentData {
  const grid = segmentGrid(ps, seg, bridgeFactor);
  const { z, r, use } = fillSegment(ps, grid.fix, p, from, to);
  return { N: to - from, tSec: grid.tSec.subarray(from, to), z, r, use };
}

/** Measurements, variances and use of the grid epochs from..to−1 (arrays indexed from `from`). */
function fillSegment(ps: PreparedSession, fix: Int32Array, p: AxisParams, from: number, to: number): { z: Float64Array[]; r: Float64Array[]; use: Uint8Array } {
  const N = to - from;
  const nAx = ps.hasHeight ? 3 : 2;
  const z = Array.from({ length: nAx }, () => new Float64Array(N).fill(NaN));
  const r = Array.from({ length: nAx }, () => new Float64Array(N).fill(NaN));
  const use = new Uint8Array(N);
  // the per-fix factors under the parameters' quality-column exponents (perAxis itself at 1, 1)
  const perAxis = factorsWithExponents(ps.series, ps.factors, p.hdopExponent, p.satsExponent);
  for (let k = 0; k < N; k++) {
    const i = fix[from + k]!;
    if (i < 0 || !ps.offered[i]) continue;
    use[k] = ps.forced[i] ? 2 : 1;
    z[0]![k] = ps.e[i]!;
    z[1]![k] = ps.n[i]!;
    if (nAx === 3) z[2]![k] = ps.u[i]!;
    for (let a = 0; a < nAx; a++) {
      // σ = base · factor (base: white sigma in m, or the scale of reported sigmas)
      const sigma = (a < 2 ? p.sigmaHorizontalM : p.sigmaVerticalM) * perAxis[a]![i]!;
      r[a]![k] = sigma * sigma;
    }
  }
  return { z, r, use };
}

export function filterOptions(cfg: HindcastConfig, p: AxisParams): FilterOptions {
  return {
    gateProbability: cfg.gate.probability,
    reacquireAfter: cfg.gate.reacquireAfter,
    reacquireAfterSec: cfg.gate.reacquireAfterSec,
    priorVar: [1e6, cfg.model.priorSpeedMps ** 2, cfg.model.priorAccelMps2 ** 2],
  };
}

/** Review settings from the configuration. */
export function reviewOptions(cfg: HindcastConfig, intervalSec = 1): ReviewOptions {
  return { probability: cfg.gate.probability, maxPasses: 10, guardSec: Math.max(5 * intervalSec, 5) };
}

/** Per-segment state carried between the stages of processSession. */
interface SegmentPlan {
  offered: Uint8Array;
  decisions?: { kept: Uint8Array; gateRejected: Uint8Array; why: DecisionLog };
  /** The local noise scale of R per epoch the decisions were made under (session/local-noise-scale.ts; absent: none). */
  scale?: Float64Array | null;
  /** The converged review behind the decisions and the parameters it ran under (reused when the final run has the same). */
  outcome?: { params: AxisParams; rev: ReturnType<typeof reviewSegment> };
}

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
  const tm = timings;
  let t0 = tm ? performance.now() : 0;
  const ps = prepareSession(series, cfg, userDecisions);
  if (tm) tm.project += performance.now() - t0;
  const prior = axisParamsFromConfig(cfg, ps.factors.reported);
  const ro = reviewOptions(cfg, ps.intervalSec);
  // stages 1–3: the noise calibration
  const { params, info, warnings } = calibrationRounds(ps, cfg, prior, ro, tm);
  // stage 4 (stage 2 of a log the calibration fell back on): classify under the final model
  const plans = classify(ps, cfg, params, ro, tm);
  let r = runPrepared(ps, cfg, params, name, plans, tm);
  // model adequacy (session/adequacy.ts): a motion model too stiff for the log is re-modelled
  const adequacy = cfg.model.adequacyCheck ? applyAdequacyCheck(ps, cfg, params, prior, r, (q) => runPrepared(ps, cfg, q, name, classify(ps, cfg, q, ro, tm), tm)) : { r, params, check: undefined };
  r = adequacy.r;
  // the session's quality verdict (session/verdict.ts); a degraded log's uncertainty is widened
  const verdict = sessionVerdict(r, adequacy.params, prior, cfg.noise.horizontalSigmaM);
  if (verdict.verdict === 'degraded') {
    verdict.widened = widenToResidualScatter(r);
    r.warnings.push({ file: series.file, code: 'quality', message: `degraded session: ${verdict.reasons.join('; ')}; uncertainty widened to the fixes' scatter about the track` });
  }
  for (const w of warnings) r.warnings.push({ file: series.file, code: 'calibration', message: w });
  r.info.calibration = info;
  if (adequacy.check) r.info.adequacy = adequacy.check;
  r.info.verdict = verdict;
  const post = posteriorOf(r);
  if (post) {
    if (tm) t0 = performance.now();
    r.survey = surveyProducts(r, post, { draws: cfg.output.surveyDraws, seed: cfg.output.surveySeed, occupationMinSec: cfg.output.occupationMinSec });
    if (tm) tm.products += performance.now() - t0;
  }
  return r;
}

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
    return { offered, decisions: { kept: rev.kept, gateRejected: rev.gateRejected, why: rev.why }, scale, outcome: rev.converged ? { params, rev } : undefined };
  });
}

/** Epochs added on each side of a calibration chunk when it is classified alone (the filter settles, the review sees the chunk's neighbours). */
export const CHUNK_MARGIN_EPOCHS = 1000;

/**
 * Classification of the calibration chunks only (each with CHUNK_MARGIN_EPOCHS on both sides, cut
 * to start and end on a fix): fills `uses` per segment with held-fixed decisions (2 kept, 0
 * rejected) inside the chunks, which is all that the second calibration reads.
 */
function classifyWindows(ps: PreparedSession, cfg: HindcastConfig, params: AxisParams, ro: ReviewOptions, windows: Array<{ seg: number; start: number; len: number }>, uses: Map<number, Uint8Array>, tm?: StageTimings): void {
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
