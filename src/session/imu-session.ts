/**
 * The IMU-aided session: the same epoch grid, per-fix noise, gate and outputs as processSession, with
 * the track between and through GNSS outages carried by the strapdown mechanization and smoothed on
 * the error state (src/estimation/ins/). The IMU file is streamed; memory grows with the epochs.
 * Epochs the IMU does not cover (before its first sample, after its last, before alignment) keep the
 * fixes-only solution, which is also the source of the initial velocity and of the first-motion
 * heading (no truth needed).
 * Positions in the result are of the GNSS antenna (the point the fixes measure); heading is clockwise
 * from the grid north of the session's transverse Mercator frame (within a few tenths of a degree of
 * true north inside a session).
 */
import type { HindcastConfig } from '../config/schema.js';
import type { FixSeries } from '../input/fix-series.js';
import { streamImuCsv } from '../input/imu-csv.js';
import { geodesicLengthM } from '../geodesy/geodesic.js';
import { earthRateEnu } from '../models/ins/gravity.js';
import { makeMechParams } from '../models/ins/mechanization.js';
import { yawToHeadingDeg } from '../models/ins/attitude.js';
import { InsSmoother, type InsEpochs, type InsInit, type InsOptions } from '../estimation/ins/ins-filter.js';
import { errorEllipse } from '../output/ellipse.js';
import { InputError } from '../errors.js';
import { axisParamsFromConfig, prepareSession, runPrepared, segmentData, type PreparedSession } from './process-session.js';
import { STATUS, type OutlierRecord, type SessionResult } from './result.js';

const DEG = 180 / Math.PI;

/** The epoch grid of all segments, as the fixes-only pipeline builds it, with antenna fixes and variances. */
export function insEpochs(ps: PreparedSession, cfg: HindcastConfig): InsEpochs {
  const p = axisParamsFromConfig(cfg, !!ps.factors.reported);
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

export function insOptions(ps: PreparedSession, cfg: HindcastConfig): InsOptions {
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
      gmSigmaHM: cfg.noise.correlatedHorizontalSigmaM,
      gmSigmaVM: cfg.noise.correlatedVerticalSigmaM,
      gmTauSec: cfg.noise.correlationTimeSec,
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
    alignSec: imu.alignSec,
    propagationStepSec: imu.propagationStepSec,
    hasHeight: ps.hasHeight,
  };
}

function median(v: number[]): number {
  if (v.length === 0) return NaN;
  const a = v.slice().sort((x, y) => x - y);
  return a[a.length >> 1]!;
}

/**
 * Process one session with its IMU log: `imuPath` is `<stem>.imu.csv` beside the fix log. Returns the
 * same SessionResult as processSession, plus attitudeDeg, attitudeSdDeg and biasEstimates.
 */
export async function processImuSession(series: FixSeries, imuPath: string, cfg: HindcastConfig, name: string, userDecisions?: Map<number, 'keep' | 'reject'>): Promise<SessionResult> {
  const ps = prepareSession(series, cfg, userDecisions);
  // fixes-only solution on the same grid with the configured noise (initial values, uncovered epochs)
  const base = runPrepared(ps, cfg, axisParamsFromConfig(cfg, !!ps.factors.reported), name);
  const ep = insEpochs(ps, cfg);
  if (ep.N !== base.N) throw new Error(`IMU session: epoch grid (${ep.N}) differs from the fixes-only grid (${base.N})`);
  const engine = new InsSmoother(ep, initFromTrack(base, cfg), insOptions(ps, cfg));
  const display = imuPath.replace(/^.*[\\/]/, '');
  const read = await streamImuCsv(imuPath, display, cfg, (t, fx, fy, fz, wx, wy, wz) => engine.addSample(t, fx, fy, fz, wx, wy, wz));
  engine.finishStream();
  if (read.samples === 0) throw new InputError({ file: display }, 'no IMU samples');
  engine.smooth();
  return assembleImuResult(base, ps, engine, read.warnings);
}

/** Merge the smoother's products into a copy of the fixes-only result and recompute statuses, outliers and metrics. */
export function assembleImuResult(base: SessionResult, ps: PreparedSession, engine: InsSmoother, imuWarnings: SessionResult['warnings']): SessionResult {
  const pr = engine.products;
  const N = base.N;
  const c = (a: Float64Array) => a.slice();
  const mk = () => new Float64Array(N).fill(NaN);
  const res: SessionResult = {
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
  const ll = [0, 0];
  let covered = 0;
  for (let j = 0; j < N; j++) {
    if (!pr.covered[j]) continue;
    covered++;
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
    const i = res.fix[j]!;
    res.nis[j] = pr.nis[j]!;
    res.nisThreshold[j] = pr.threshold[j]!;
    if (i < 0) res.status[j] = STATUS.bridged;
    else if (ps.userRejected[i]) res.status[j] = STATUS.userRejected;
    else if (!ps.offered[i]) res.status[j] = STATUS.outlier;
    else if (ps.forced[i]) res.status[j] = STATUS.userKept;
    else res.status[j] = pr.accepted[j] ? STATUS.kept : STATUS.outlier;
  }
  finishOutliersAndMetrics(res, ps);
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
      gnssRejected: st.gnssRejected,
      reacquisitions: st.reacquisitions,
      smootherFallbacks: st.smootherFallbacks,
    },
  };
  if (covered < N) res.warnings.push({ file: base.file, code: 'imu-coverage', message: `${N - covered} of ${N} epochs lie outside the IMU log (or before its alignment) and keep the fixes-only solution` });
  return res;
}

/** Outlier records and metrics from the final statuses (the rules of runPrepared). */
function finishOutliersAndMetrics(res: SessionResult, ps: PreparedSession): void {
  const s = ps.series;
  const N = res.N;
  const fixEpoch = new Int32Array(s.n).fill(-1);
  for (let j = 0; j < N; j++) if (res.fix[j]! >= 0) fixEpoch[res.fix[j]!] = j;
  const out: OutlierRecord[] = [];
  for (let i = 0; i < s.n; i++) {
    const j = fixEpoch[i]!;
    const isInvalid = !ps.valid[i];
    const byUser = ps.userRejected[i] === 1 && !isInvalid;
    const rejected = j >= 0 && ps.offered[i] && res.status[j] === STATUS.outlier;
    if (!isInvalid && !rejected && !byUser) continue;
    let offsetM = NaN, offsetUpM = NaN;
    if (j >= 0 && !isInvalid) {
      offsetM = Math.hypot(ps.e[i]! - res.posEnu[0][j]!, ps.n[i]! - res.posEnu[1][j]!);
      if (ps.hasHeight) offsetUpM = ps.u[i]! - res.posEnu[2][j]!;
    }
    out.push({
      fix: i, line: s.line[i]!, tSec: s.tSec[i]!, latDeg: s.latDeg[i]!, lonDeg: s.lonDeg[i]!, heightM: s.heightM ? s.heightM[i]! : NaN,
      reason: isInvalid ? 'invalid' : byUser ? 'user' : 'innovation',
      statistic: isInvalid || byUser ? NaN : res.nis[j]!,
      threshold: isInvalid || byUser ? NaN : res.nisThreshold[j]!,
      dof: 0, offsetM, offsetUpM,
      detail: isInvalid ? ps.invalidWhy[i]! : byUser ? 'rejected by the user (decisions file)' : 'normalized innovation squared above the chi-square gate',
    });
  }
  res.outliers = out;
  let kept = 0, bridged = 0;
  const sdH: number[] = [];
  const ellMaj: number[] = [];
  let sumR2 = 0, nR = 0, sumU2 = 0, nU = 0;
  for (let j = 0; j < N; j++) {
    const st = res.status[j]!;
    if (st === STATUS.kept || st === STATUS.userKept) kept++;
    else if (st === STATUS.bridged) bridged++;
    sdH.push(Math.hypot(res.sdEnu[0][j]!, res.sdEnu[1][j]!));
    ellMaj.push(res.ell95MajorM[j]!);
    const i = res.fix[j]!;
    if (i >= 0 && (st === STATUS.kept || st === STATUS.userKept)) {
      sumR2 += (ps.e[i]! - res.posEnu[0][j]!) ** 2 + (ps.n[i]! - res.posEnu[1][j]!) ** 2;
      nR++;
      if (ps.hasHeight && Number.isFinite(ps.u[i]!)) {
        sumU2 += (ps.u[i]! - res.posEnu[2][j]!) ** 2;
        nU++;
      }
    }
  }
  let lengthM = 0;
  let j0 = 0;
  for (let j = 1; j <= N; j++)
    if (j === N || res.segment[j] !== res.segment[j0]) {
      lengthM += geodesicLengthM(res.latDeg, res.lonDeg, j0, j);
      j0 = j;
    }
  res.metrics = {
    ...res.metrics,
    keptCount: kept,
    outlierCount: out.length,
    bridgedCount: bridged,
    lengthM,
    medianSdHorizontalM: median(sdH),
    worstEll95MajorM: ellMaj.length ? ellMaj.reduce((m, v) => (v > m ? v : m), -Infinity) : NaN,
    medianEll95MajorM: median(ellMaj),
    rmsResidualHorizontalM: nR ? Math.sqrt(sumR2 / nR) : NaN,
    rmsResidualUpM: nU ? Math.sqrt(sumU2 / nU) : NaN,
  };
}
