/**
 * The IMU-aided session: the same epoch grid, per-fix noise, gate and outputs as processSession, with
 * the track between and through GNSS outages carried by the strapdown mechanization and smoothed on
 * the error state (src/estimation/ins/). The IMU samples come from a source the caller hands in
 * (src/input/imu-source.ts: a file streamed once and replayed, or samples in memory), one pass over
 * them per round of the review; memory grows with the epochs, not the samples.
 * Epochs the IMU does not cover (before its first sample, after its last, before alignment) keep the
 * fixes-only solution, which is also the source of the initial velocity and of the first-motion
 * heading (no truth needed).
 * GNSS noise as in processSession: the white and Gauss–Markov fix noise are the session's maximum-
 * likelihood calibration (./calibrated-params.ts), also used for the fixes-only baseline. Outliers as
 * in processSession: the filter's forward gate, then the two-sided review (./review-decisions.ts)
 * of every fix against the smoothed antenna position plus the smoothed fix error, with the deletion-
 * residual covariance R ∓ H Pˢ Hᵀ (src/estimation/ins/review.ts); the IMU samples are passed again
 * with the decisions held fixed until they no longer change (at most IMU_REVIEW_MAX_PASSES passes).
 * Positions in the result are of the GNSS antenna (the point the fixes measure); heading is clockwise
 * from the grid north of the session's transverse Mercator frame (within a few tenths of a degree of
 * true north inside a session).
 */
import { applyCorrelatedFloor, correlatedFloor, whiteSigmaM } from '../check/correlated-floor.js';
import type { HindcastConfig } from '../../config/schema.js';
import type { FixSeries } from '../../input/fix-series.js';
import type { ImuSampleSource } from '../../input/imu-source.js';
import { earthRateEnu } from '../../models/ins/gravity.js';
import { makeMechParams } from '../../models/ins/mechanization.js';
import { yawToHeadingDeg } from '../../models/ins/attitude.js';
import { InsSmoother, newInsTimings, type InsResume, type InsEpochs, type InsInit, type InsHistory, type InsOptions, type InsTimings } from '../../estimation/ins/ins-filter.js';
import { gnssReviewStatistic, makeGnssReviewScratch } from '../../estimation/ins/review.js';
import { errorEllipse } from '../../estimation/error-ellipse.js';
import { axisParamsFromConfig, reviewOptions, type AxisParams } from '../prepare/axis-params.js';
import { jumpWarnings, prepareSession, segmentData, type PreparedSession } from '../prepare/prepare.js';
import { calibratedFixesOnly } from '../calibrate/calibrated-params.js';
import { applyReviewDecisions, reviewThresholds } from '../classify/review-decisions.js';
import { settleDecisions, type ReviewOptions } from '../classify/review.js';
import type { DecisionLog } from '../result/decision-log.js';
import { buildOutliersAndMetrics } from '../products/products.js';
import { STATUS, type SessionResult } from '../result/result.js';

const DEG = 180 / Math.PI;

/**
 * GNSS noise of the 18-state filter: the fixes-only calibration's (white noise, correlated sigma and
 * correlation time). The reported regions then get the correlated-error floor like a fixes-only
 * session's (session/check/correlated-floor.ts). An earlier rule held the correlated sigma at least
 * at the profile's 1.5 m; with the floor in place that only widened the regions: on the IMU-aided
 * delivery rounds (test/imu/stationary.test.ts, simulated 0.8 m) pooled 95 % coverage 0.997 at fix
 * epochs and 1.000 in outages with it, 0.972 and 0.962 without; on the eight IMU drives
 * (test/imu/coverage.test.ts) 0.972 with it and 0.984 without, the RMSE within 0.05 m either way.
 */
export function imuGnssParams(calibrated: AxisParams): AxisParams {
  return { ...calibrated };
}

/**
 * Resumed passes (tests switch them off to compare): a pass of the review loop starts from the
 * previous pass's snapshot before the first changed decision (ins-filter.ts, InsSnapshot) instead
 * of streaming the log from its beginning; the same results bit for bit.
 */
export const IMU_REVIEW_RESUME = { enabled: true };

/** Most IMU streams (filter + smoother passes) of the review loop. */
export const IMU_REVIEW_MAX_PASSES = 5;

/** The epoch grid of all segments, as the fixes-only pipeline builds it, with antenna fixes and variances (white noise of `p`). */
export function insEpochs(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams = axisParamsFromConfig(cfg, !!ps.factors.reported)): InsEpochs {
  const parts = ps.segments.map((seg) => segmentData(ps, seg, p, cfg.segments.bridgeFactor).data);
  const N = parts.reduce((a, d) => a + d.N, 0);
  const nan = () => new Float64Array(N).fill(NaN);
  const ep: InsEpochs = { N, tSec: new Float64Array(N), z: [nan(), nan(), nan()], r: [nan(), nan(), nan()], use: new Uint8Array(N), segStart: new Uint8Array(N) };
  let k0 = 0;
  for (const d of parts) {
    ep.segStart[k0] = 1;
    ep.tSec.set(d.tSec, k0);
    ep.use.set(d.use, k0);
    for (let a = 0; a < d.z.length; a++) {
      ep.z[a]!.set(d.z[a]!, k0);
      ep.r[a]!.set(d.r[a]!, k0);
    }
    k0 += d.N;
  }
  return ep;
}

/** Initial velocity and first-motion heading from the fixes-only track. */
export function initFromTrack(base: SessionResult, cfg: HindcastConfig): InsInit {
  const speedMin = cfg.imu.headingSpeedMps;
  return {
    velocity(k, out) {
      for (let a = 0; a < 3; a++) out[a] = Number.isFinite(base.velEnu[a]![k]!) ? base.velEnu[a]![k]! : 0;
      return 1.0;
    },
    yaw(k) {
      const seg = base.segment[k]!;
      let j = k;
      while (j < base.N && base.segment[j] === seg && Math.hypot(base.velEnu[0][j]!, base.velEnu[1][j]!) < speedMin) j++;
      if (j >= base.N || base.segment[j] !== seg) return { yawRad: 0, sigmaRad: Math.PI / 6 };
      // direction of the first 20 m (at most 30 s) of motion of the smoothed fixes-only track
      let j2 = j;
      while (j2 + 1 < base.N && base.segment[j2 + 1] === seg && base.tSec[j2 + 1]! - base.tSec[j]! <= 30 && Math.hypot(base.posEnu[0][j2]! - base.posEnu[0][j]!, base.posEnu[1][j2]! - base.posEnu[1][j]!) < 20) j2++;
      const de = base.posEnu[0][j2]! - base.posEnu[0][j]!, dn = base.posEnu[1][j2]! - base.posEnu[1][j]!;
      const d = Math.hypot(de, dn);
      const sdPos = Math.hypot(base.sdEnu[0][j]!, base.sdEnu[1][j]!);
      // σ_ψ: relative position noise over the baseline, a 3° allowance for curvature and slip, gyro drift until the motion
      const drift = cfg.imu.gyroBiasSigmaRadps * Math.max(0, base.tSec[j]! - base.tSec[k]!);
      const sigma = Math.min(Math.PI / 6, Math.hypot(d > 1 ? sdPos / d : 1, 3 / DEG, drift));
      return { yawRad: Math.atan2(dn, de), sigmaRad: sigma };
    },
  };
}

/** Filter options; the Gauss–Markov fix error of `p` (the session's calibration in processImuSession). */
export function insOptions(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams = axisParamsFromConfig(cfg, !!ps.factors.reported)): InsOptions {
  const imu = cfg.imu;
  const we = earthRateEnu(ps.frame.lat0Deg, new Float64Array(3));
  const mech = makeMechParams(ps.frame.lat0Deg, ps.heightRefM, imu.earthRotation, we);
  return {
    mech,
    err: {
      accelNoiseDensity: imu.accelNoiseDensity,
      gyroNoiseDensity: imu.gyroNoiseDensity,
      accelBiasWalk: imu.accelBiasWalk,
      gyroBiasWalk: imu.gyroBiasWalk,
      gmSigmaHM: p.gmHorizontalSigmaM,
      gmSigmaVM: p.gmVerticalSigmaM,
      gmTauSec: p.gmTauSec,
      earthRateEnu: mech.earthRateEnu,
    },
    leverArmBody: [imu.leverArmM[0], imu.leverArmM[1], imu.leverArmM[2]],
    gateProbability: cfg.gate.probability,
    reacquireAfter: cfg.gate.reacquireAfter,
    accelBiasSigmaMps2: imu.accelBiasSigmaMps2,
    gyroBiasSigmaRadps: imu.gyroBiasSigmaRadps,
    zupt: imu.zupt,
    nhc: imu.nhc,
    zuptSigmaMps: imu.zuptSigmaMps,
    nhcSigmaMps: imu.nhcSigmaMps,
    staticWindowSec: imu.staticWindowSec,
    staticAccelSdMps2: imu.staticAccelSdMps2,
    staticGyroRadps: imu.staticGyroRadps,
    staticMaxSpeedMps: imu.staticMaxSpeedMps,
    staticAccelMeanMps2: imu.staticAccelMeanMps2,
    alignSec: imu.alignSec,
    propagationStepSec: imu.propagationStepSec,
    hasHeight: ps.hasHeight,
  };
}

/**
 * Optional wall-clock accounting of one IMU session (for `npm run bench`), ms summed over the review
 * passes. `streamMs` is each pass's streaming of the IMU log: reading and parsing (the first pass; the
 * later ones replay the parsed samples, `replayPasses` of them), mechanization and the per-epoch work
 * inside the stream, of which `ins.propagateMs` is the covariance propagation and `ins.updateMs` the
 * epoch updates; `ins.smoothMs` is the backward passes. Results do not depend on it.
 */
export interface ImuStageTimings {
  /** The fixes-only baseline: preparation, calibration, classification and its result. */
  baselineMs: number;
  streamMs: number;
  ins: InsTimings;
  /** Review statistics and decisions. */
  reviewMs: number;
  /** Merging the products into the result, statuses, outliers and metrics. */
  productsMs: number;
  passes: number;
  /** Passes that replayed the parsed samples instead of reading the CSV. */
  replayPasses: number;
  /** Passes that started from a snapshot of the previous one, and the epochs they did not run again. */
  resumedPasses: number;
  resumedEpochs: number;
}

export function newImuStageTimings(): ImuStageTimings {
  return { baselineMs: 0, streamMs: 0, ins: newInsTimings(), reviewMs: 0, productsMs: 0, passes: 0, replayPasses: 0, resumedPasses: 0, resumedEpochs: 0 };
}

/** Outcome of the IMU review loop: final decisions and statistics per epoch. */
export interface ImuReview {
  /** 1 kept, 0 rejected (offered gated fixes of covered epochs; others as offered). */
  kept: Uint8Array;
  /** 1 where the fix failed the forward gate of the first pass. */
  gateRejected: Uint8Array;
  /** The deciding test of each rejected gated fix, by epoch (decision-log.ts). */
  why?: DecisionLog;
  /** Re-admission thresholds of the review by degrees of freedom. */
  readmit?: readonly number[];
  T: Float64Array;
  dof: Uint8Array;
  threshold: Float64Array;
  passes: number;
  converged: boolean;
  /** Forward-gate rejections and re-acquisitions of the first pass. */
  gnssRejected: number;
  reacquisitions: number;
}

/**
 * Review statistic of every offered gated fix at a covered epoch against the smoothed track of
 * `engine`: ν = z − ẑˢ with var R − H Pˢ Hᵀ where the smoother used the fix, R + H Pˢ Hᵀ otherwise.
 */
export function reviewImuFixes(ep: InsEpochs, offered: Uint8Array, engine: InsSmoother, th: number[], T: Float64Array, dof: Uint8Array, threshold: Float64Array): void {
  const pr = engine.products;
  const s = makeGnssReviewScratch();
  const axes = [0, 0, 0], nu = [0, 0, 0], r = [0, 0, 0];
  for (let k = 0; k < ep.N; k++) {
    if (offered[k] !== 1 || !pr.covered[k]) continue;
    let m = 0;
    for (let a = 0; a < 3; a++) {
      const z = ep.z[a]![k]!;
      if (!Number.isFinite(z)) continue;
      axes[m] = a;
      // ν = z − (p̂ˢ + Ĉˢ l + b̂ˢ)
      nu[m] = z - pr.zPred[a]![k]!;
      r[m] = ep.r[a]![k]!;
      m++;
    }
    T[k] = m > 0 ? gnssReviewStatistic(m, axes, nu, r, pr.zCov, 6 * k, pr.accepted[k] === 1, s) : NaN;
    dof[k] = m;
    threshold[k] = th[m]!;
  }
}

/**
 * Process one session with its IMU samples (`imu`, e.g. imuFileSource of `<stem>.imu.csv` beside the
 * fix log; the session closes it when done). Returns the same SessionResult as processSession, plus
 * attitudeDeg, attitudeSdDeg and biasEstimates.
 */
export async function processImuSession(series: FixSeries, imu: ImuSampleSource, cfg: HindcastConfig, name: string, userDecisions?: Map<number, 'keep' | 'reject'>, tm?: ImuStageTimings): Promise<SessionResult> {
  try {
    const lap = lapTimer();
    const ps = prepareSession(series, cfg, userDecisions);
    // fixes-only solution with the session's calibrated noise (initial values, uncovered epochs)
    const { result: base, cal } = calibratedFixesOnly(ps, cfg, name);
    const ep = insEpochs(ps, cfg, cal.params);
    if (ep.N !== base.N) throw new Error(`IMU session: epoch grid (${ep.N}) differs from the fixes-only grid (${base.N})`);
    const gp = imuGnssParams(cal.params);
    const passes = imuPasses(imu, initFromTrack(base, cfg), insOptions(ps, cfg, gp), lap, tm);
    if (tm) tm.baselineMs += lap();
    const { engine, review } = await reviewLoop(ep, reviewOptions(cfg, ps.intervalSec), passes, lap, tm);
    if (tm) tm.reviewMs += lap();
    const res = assembleImuResult(base, ps, engine, passes.warnings(), review, gp);
    // the correlated error the log cannot rule out, as for the fixes-only session (session/check/correlated-floor.ts)
    const floor = correlatedFloor(gp, cfg.noise.correlatedFloorRatio, whiteSigmaM(gp, ps.factors));
    applyCorrelatedFloor(res, floor);
    res.info.correlatedFloor = floor;
    res.warnings.push(...jumpWarnings(ps));
    if (tm) tm.productsMs += lap();
    return res;
  } finally {
    imu.close();
  }
}

/** Milliseconds since the previous call (or since the timer was made). */
function lapTimer(): () => number {
  let t0 = performance.now();
  return () => {
    const t = performance.now();
    const d = t - t0;
    t0 = t;
    return d;
  };
}

/** The filter-and-smoother passes over the IMU samples of one session, sharing one filter history. */
interface ImuPasses {
  run(epochs: InsEpochs, resume?: InsResume): Promise<InsSmoother>;
  /** The IMU reader's warnings (after the first pass). */
  warnings(): SessionResult['warnings'];
}

function imuPasses(imu: ImuSampleSource, init: InsInit, opt: InsOptions, lap: () => number, tm?: ImuStageTimings): ImuPasses {
  let imuWarnings: SessionResult['warnings'] | undefined;
  // one filter history for all passes: a pass's history is free once it has smoothed
  let history: InsHistory | undefined;
  return {
    async run(epochs, resume) {
      const engine = new InsSmoother(epochs, init, opt, tm?.ins, history, resume);
      const ts = performance.now();
      if (tm && resume) {
        tm.resumedPasses++;
        tm.resumedEpochs += resume.snapshot.epoch + 1;
      }
      // the first pass of a file reads the CSV and records the parsed samples; the later ones replay
      // them (the same doubles in the same order, so the same results)
      const st = await imu.pass(engine, resume ? resume.snapshot.sample : 0);
      if (imuWarnings === undefined) imuWarnings = st.warnings;
      if (tm && st.replayed) tm.replayPasses++;
      engine.finishStream();
      if (tm) {
        tm.streamMs += performance.now() - ts;
        tm.passes++;
      }
      engine.smooth();
      history = engine.releaseHistory();
      if (tm) lap(); // the pass (stream and smoother) is counted in streamMs and ins.smoothMs
      return engine;
    },
    warnings: () => imuWarnings ?? [],
  };
}

/** The first pass's decisions: the forward gate's, per epoch (offered 2: kept without gate; 0: not offered). */
function gateDecisions(offered: Uint8Array, engine: InsSmoother): { kept: Uint8Array; gateRejected: Uint8Array; why: DecisionLog } {
  const N = offered.length;
  const pr = engine.products;
  const gateRejected = new Uint8Array(N);
  const kept = new Uint8Array(N);
  const why: DecisionLog = new Map();
  for (let k = 0; k < N; k++) {
    const gated = offered[k] === 1 && pr.covered[k] === 1;
    kept[k] = offered[k] === 2 ? 1 : offered[k] === 0 ? 0 : gated ? pr.accepted[k]! : 1;
    if (gated && !pr.accepted[k]) {
      gateRejected[k] = 1;
      why.set(k, { test: 'forward-gate', statistic: pr.nis[k]!, threshold: pr.threshold[k]!, dof: 0 });
    }
  }
  return { kept, gateRejected, why };
}

/**
 * Pass 1, where the forward gate decides; then the two-sided review of every gated fix against the
 * smoothed track, with the decisions held fixed in a new pass, until they no longer change (at most
 * IMU_REVIEW_MAX_PASSES passes).
 */
async function reviewLoop(ep: InsEpochs, ro: ReviewOptions, passes: ImuPasses, lap: () => number, tm?: ImuStageTimings): Promise<{ engine: InsSmoother; review: ImuReview }> {
  const N = ep.N;
  const offered = ep.use.slice();
  let engine = await passes.run(ep);
  const { kept, gateRejected, why } = gateDecisions(offered, engine);
  const th = reviewThresholds(ro.probability);
  const T = new Float64Array(N).fill(NaN);
  const dof = new Uint8Array(N);
  const threshold = new Float64Array(N).fill(NaN);
  const gatedFix = Uint8Array.from(offered, (u, k) => (u === 1 && engine.products.covered[k] ? 1 : 0));
  const gateStats = { gnssRejected: engine.stats.gnssRejected, reacquisitions: engine.stats.reacquisitions };
  let pass = 1;
  let converged = false;
  const fixed: InsEpochs = { ...ep, use: ep.use.slice() };
  for (;;) {
    reviewImuFixes(ep, gatedFix, engine, th.reject, T, dof, threshold);
    if (pass >= IMU_REVIEW_MAX_PASSES) break;
    if (!applyReviewDecisions(N, gatedFix, kept, T, dof, threshold, ep.tSec, th, ro.guardSec, why)) {
      converged = true;
      break;
    }
    // decisions held fixed: kept fixes without gate, rejected ones left out
    const prevUse = pass >= 2 ? fixed.use.slice() : undefined;
    for (let k = 0; k < N; k++) fixed.use[k] = gatedFix[k] ? (kept[k] ? 2 : 0) : offered[k]!;
    const resume = IMU_REVIEW_RESUME.enabled ? resumePoint(engine, fixed.use, prevUse, gatedFix, gateRejected, kept) : undefined;
    if (tm) tm.reviewMs += lap();
    engine = await passes.run(fixed, resume);
    pass++;
  }
  settleDecisions(N, gatedFix, kept, T, dof, threshold, why, th.readmit);
  // the gate measured the same axes as the review statistic
  for (const [k, d] of why) if (d.test === 'forward-gate' && d.dof === 0) d.dof = dof[k]!;
  return { engine, review: { kept, gateRejected, why, readmit: th.readmit, T, dof, threshold, passes: pass, converged, ...gateStats } };
}

/**
 * Where the next pass may start: it equals the previous one up to the first epoch whose decision
 * changed (after the gated first pass: the first gated fix that its gate refused or the review now
 * rejects, since a fix the gate accepted is used alike with and without the gate), so it starts from
 * the previous pass's last snapshot before that epoch.
 */
function resumePoint(engine: InsSmoother, use: Uint8Array, prevUse: Uint8Array | undefined, gatedFix: Uint8Array, gateRejected: Uint8Array, kept: Uint8Array): InsResume | undefined {
  const N = use.length;
  let k1 = 0;
  if (prevUse) while (k1 < N && prevUse[k1] === use[k1]) k1++;
  else while (k1 < N && !(gatedFix[k1] && (gateRejected[k1] || !kept[k1]))) k1++;
  const snapshot = engine.snapshotBefore(k1);
  return snapshot ? { snapshot, from: engine } : undefined;
}

/** Merge the smoother's products and the review's decisions into a copy of the fixes-only result and recompute statuses, outliers and metrics. */
export function assembleImuResult(base: SessionResult, ps: PreparedSession, engine: InsSmoother, imuWarnings: SessionResult['warnings'], review: ImuReview, gnss?: AxisParams): SessionResult {
  const pr = engine.products;
  const N = base.N;
  const res = copyForImu(base, imuWarnings);
  let covered = 0;
  const ll = [0, 0];
  for (let j = 0; j < N; j++) {
    if (!pr.covered[j]) continue;
    covered++;
    writeImuEpoch(res, ps, pr, j, ll);
    const i = res.fix[j]!;
    res.nis[j] = review.T[j]!;
    res.nisThreshold[j] = review.threshold[j]!;
    if (i < 0) res.status[j] = STATUS.bridged;
    else if (ps.userRejected[i]) res.status[j] = STATUS.userRejected;
    else if (!ps.offered[i]) res.status[j] = STATUS.outlier;
    else if (ps.forced[i]) res.status[j] = STATUS.userKept;
    else res.status[j] = review.kept[j] ? STATUS.kept : STATUS.outlier;
  }
  const { gateRejectedFix, dofAt, whyFix } = imuDecisionsByFix(base, res, ps, pr.covered, review);
  buildOutliersAndMetrics(res, ps, gateRejectedFix, review.reacquisitions, dofAt, { why: whyFix, readmit: review.readmit ?? reviewThresholds(typeof base.info.gateProbability === 'number' ? base.info.gateProbability : 0.999).readmit });
  const st = engine.stats;
  res.info = {
    ...base.info,
    imu: {
      samples: st.samples,
      samplesSkipped: st.samplesSkipped,
      firstSampleSec: st.firstSampleSec,
      lastSampleSec: st.lastSampleSec,
      imuGaps: st.imuGaps,
      coveredEpochs: covered,
      alignments: st.alignments,
      zuptEpochs: st.zuptEpochs,
      nhcEpochs: st.nhcEpochs,
      gnssRejected: review.gnssRejected,
      reacquisitions: review.reacquisitions,
      gnssNoise: gnss,
      reviewPasses: review.passes,
      reviewConverged: review.converged,
      smootherFallbacks: st.smootherFallbacks,
    },
  };
  if (covered < N) res.warnings.push({ file: base.file, code: 'imu-coverage', message: `${N - covered} of ${N} epochs lie outside the IMU log (or before its alignment) and keep the fixes-only solution` });
  return res;
}

/** A copy of the fixes-only result whose per-epoch arrays the IMU products may overwrite, with empty attitude and bias arrays. */
function copyForImu(base: SessionResult, imuWarnings: SessionResult['warnings']): SessionResult {
  const N = base.N;
  const c = (a: Float64Array) => a.slice();
  const mk = () => new Float64Array(N).fill(NaN);
  return {
    ...base,
    latDeg: c(base.latDeg), lonDeg: c(base.lonDeg), heightM: c(base.heightM),
    posEnu: [c(base.posEnu[0]), c(base.posEnu[1]), c(base.posEnu[2])],
    velEnu: [c(base.velEnu[0]), c(base.velEnu[1]), c(base.velEnu[2])],
    sdEnu: [c(base.sdEnu[0]), c(base.sdEnu[1]), c(base.sdEnu[2])],
    covEN: c(base.covEN), ell95MajorM: c(base.ell95MajorM), ell95MinorM: c(base.ell95MinorM), ell95AzimuthDeg: c(base.ell95AzimuthDeg),
    status: base.status.slice(), nis: c(base.nis), nisThreshold: c(base.nisThreshold),
    outliers: [],
    warnings: [...base.warnings, ...imuWarnings],
    attitudeDeg: { roll: mk(), pitch: mk(), heading: mk() },
    attitudeSdDeg: { roll: mk(), pitch: mk(), heading: mk() },
    biasEstimates: { accelMps2: [mk(), mk(), mk()], accelSdMps2: [mk(), mk(), mk()], gyroRadps: [mk(), mk(), mk()], gyroSdRadps: [mk(), mk(), mk()] },
  };
}

/** The IMU smoother's products at a covered epoch j: position, velocity, sd and ellipse, geodetic position, attitude and biases. */
function writeImuEpoch(res: SessionResult, ps: PreparedSession, pr: InsSmoother['products'], j: number, ll: number[]): void {
  for (let a = 0; a < 3; a++) {
    res.posEnu[a]![j] = pr.pos[a]![j]!;
    res.velEnu[a]![j] = pr.vel[a]![j]!;
    res.biasEstimates!.accelMps2[a]![j] = pr.accelBias[a]![j]!;
    res.biasEstimates!.accelSdMps2[a]![j] = pr.accelBiasSd[a]![j]!;
    res.biasEstimates!.gyroRadps[a]![j] = pr.gyroBias[a]![j]!;
    res.biasEstimates!.gyroSdRadps[a]![j] = pr.gyroBiasSd[a]![j]!;
  }
  const o = 6 * j;
  const vee = pr.covPos[o]!, ven = pr.covPos[o + 1]!, vnn = pr.covPos[o + 3]!, vuu = pr.covPos[o + 5]!;
  res.sdEnu[0][j] = Math.sqrt(vee);
  res.sdEnu[1][j] = Math.sqrt(vnn);
  res.sdEnu[2][j] = ps.hasHeight ? Math.sqrt(vuu) : NaN;
  if (!ps.hasHeight) {
    res.posEnu[2][j] = NaN;
    res.velEnu[2][j] = NaN;
  }
  res.covEN[j] = ven;
  const el = errorEllipse(vee, vnn, ven);
  res.ell95MajorM[j] = el.majorM;
  res.ell95MinorM[j] = el.minorM;
  res.ell95AzimuthDeg[j] = el.azimuthDeg;
  ps.frame.inverse(res.posEnu[0][j]!, res.posEnu[1][j]!, ll);
  res.lonDeg[j] = ll[0]!;
  res.latDeg[j] = ll[1]!;
  res.heightM[j] = ps.hasHeight ? res.posEnu[2][j]! + ps.heightRefM : NaN;
  res.attitudeDeg!.roll[j] = pr.att[0][j]! * DEG;
  res.attitudeDeg!.pitch[j] = pr.att[1][j]! * DEG;
  res.attitudeDeg!.heading[j] = yawToHeadingDeg(pr.att[2][j]!);
  res.attitudeSdDeg!.roll[j] = pr.attSd[0][j]! * DEG;
  res.attitudeSdDeg!.pitch[j] = pr.attSd[1][j]! * DEG;
  res.attitudeSdDeg!.heading[j] = pr.attSd[2][j]! * DEG;
}

/**
 * The decisions by fix: the first pass's gate (the IMU filter's where it covers the epoch, else the
 * fixes-only one's), the degrees of freedom of the IMU review statistic, and the deciding tests (the
 * IMU review's where it covers the epoch, else the fixes-only one's).
 */
function imuDecisionsByFix(base: SessionResult, res: SessionResult, ps: PreparedSession, covered: Uint8Array, review: ImuReview): { gateRejectedFix: Uint8Array; dofAt: Uint8Array; whyFix: DecisionLog } {
  const N = base.N;
  const gateRejectedFix = new Uint8Array(ps.series.n);
  for (const o of base.outliers) if (o.reason === 'innovation') gateRejectedFix[o.fix] = 1;
  const dofAt = new Uint8Array(N);
  for (let j = 0; j < N; j++) {
    const i = res.fix[j]!;
    if (i < 0 || !covered[j]) continue;
    gateRejectedFix[i] = review.gateRejected[j]!;
    dofAt[j] = review.dof[j]!;
  }
  const whyFix: DecisionLog = new Map();
  for (const o of base.outliers)
    if (o.test === 'forward-gate' || o.test === 'backward-gate' || o.test === 'review' || o.test === 'swap' || o.test === 'excursion') whyFix.set(o.fix, { test: o.test, statistic: o.testStatistic, threshold: o.testThreshold, dof: o.dof });
  for (let j = 0; j < N; j++) {
    const i = res.fix[j]!;
    if (i < 0 || !covered[j]) continue;
    whyFix.delete(i);
    const d = review.why?.get(j);
    if (d) whyFix.set(i, d);
  }
  return { gateRejectedFix, dofAt, whyFix };
}
