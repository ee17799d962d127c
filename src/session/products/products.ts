/**
 * The session products that follow from the final per-epoch track and statuses, shared by the
 * fixes-only pipeline (final-run.ts, runPrepared) and the IMU-aided one (imu-session.ts):
 * the raw fix positions per epoch (report residuals), the outlier records in time order (reason
 * `innovation`: failed the gate and the review; `review`: passed the gate, failed the review;
 * `invalid`; `user`) with their test statistic, and the metrics. Pure; no file system.
 */
import { geodesicLengthM } from '../../geodesy/geodesic.js';
import type { PreparedSession } from '../prepare/prepare.js';
import { STATUS, type OutlierRecord, type SessionMetrics, type SessionResult } from '../result/result.js';
import { selectKth } from '../../estimation/select.js';
import { decisionMargin, type Decision, type DecidingTest, type DecisionLog } from '../result/decision-log.js';

/** The deciding tests of the filter's rejections (by fix index) and the review's re-admission thresholds by dof. */
export interface DecidedBy {
  why: DecisionLog;
  readmit: readonly number[];
}

const f2 = (v: number) => (Number.isFinite(v) ? v.toFixed(2) : '–');

/** The detail text of a flagged fix: the deciding test in words with its figures, and why the review did not take it back. */
export function decisionDetail(d: Decision, T: number, readmit: number): string {
  const axes = d.dof === 1 ? '1 axis' : `${d.dof} axes`;
  const still = Number.isFinite(T) && Number.isFinite(readmit) ? `; against the final smoothed track T = ${f2(T)} > ${f2(readmit)} (re-admission threshold), so not taken back` : '';
  switch (d.test) {
    case 'forward-gate':
      return `failed the forward chi-square gate: NIS ${f2(d.statistic)} > ${f2(d.threshold)} (${axes})${still}`;
    case 'backward-gate':
      return `failed the time-reversed chi-square gate: NIS ${f2(d.statistic)} > ${f2(d.threshold)} (${axes})${still}`;
    case 'review':
      return d.statistic > d.threshold && Math.abs(d.threshold - readmit) < 1e-12
        ? `not re-admitted by the two-sided review: T ${f2(d.statistic)} > ${f2(d.threshold)} (re-admission threshold, ${axes})`
        : `failed the two-sided review against the smoothed track: T ${f2(d.statistic)} > ${f2(d.threshold)} (${axes})${Number.isFinite(T) && Math.abs(T - d.statistic) > 1e-9 ? still : ''}`;
    case 'excursion':
      return `left out by the excursion test: its run leaves the track and comes back, and against the motion before and after it T ${f2(d.statistic)} > ${f2(d.threshold)} (${axes}); held out of the review`;
    case 'swap':
      return `left out by the swap test: the neighbourhood costs ${f2(d.statistic)} with its run kept and ${f2(d.threshold)} with it left out (capped χ² sums)${still}`;
  }
}

/** Attach the user's notes (fix index → note) to a result: its decision notes and its flagged fixes' records. */
export function attachDecisionNotes(res: SessionResult, notes: Map<number, string>): void {
  if (notes.size === 0) return;
  res.decisionNotes = notes;
  for (const o of res.outliers) {
    const n = notes.get(o.fix);
    if (n !== undefined) o.note = n;
  }
}

/** The median order statistic of v, selected without sorting (the value of the sorted array); reorders v. */
function medianInPlace(v: Float64Array): number {
  if (v.length === 0) return NaN;
  return selectKth(v, v.length >> 1);
}

/** Raw fix position per epoch in the local frame (report residuals); NaN where there is no valid fix. */
function rawFixPositions(res: SessionResult, ps: PreparedSession): [Float64Array, Float64Array, Float64Array] {
  const N = res.N;
  const mk = () => new Float64Array(N).fill(NaN);
  const rawEnu: [Float64Array, Float64Array, Float64Array] = [mk(), mk(), mk()];
  for (let j = 0; j < N; j++) {
    const i = res.fix[j]!;
    if (i < 0 || !ps.valid[i]) continue;
    rawEnu[0][j] = ps.e[i]!;
    rawEnu[1][j] = ps.n[i]!;
    rawEnu[2][j] = ps.u[i]!;
  }
  return rawEnu;
}

/** How a flagged fix came to be flagged: invalid, rejected by the user, or rejected by the filter (with its decision, if recorded). */
interface FlagKind {
  isInvalid: boolean;
  byUser: boolean;
  d: Decision | undefined;
}

/** The detail text of an outlier record: the invalidity, the user's rejection, or the deciding test in words. */
function outlierDetail(ps: PreparedSession, i: number, kind: FlagKind, test: DecidingTest, T: number, threshold: number, readmit: number): string {
  const { isInvalid, byUser, d } = kind;
  return isInvalid
    ? ps.invalidWhy[i]!
    : byUser
      ? 'rejected by the user (decisions file)'
      : d
        ? decisionDetail(d, T, readmit)
        : test === 'review'
          ? `failed the two-sided review against the smoothed track: T ${f2(T)} > ${f2(threshold)}`
          : 'failed the chi-square gate (figures not recorded)';
}

/** The outlier record of flagged fix i (epoch j, −1 for none), under the given id. */
function outlierRecord(res: SessionResult, ps: PreparedSession, i: number, j: number, id: string, gateRejectedFix: Uint8Array, dofAt?: Uint8Array, decided?: DecidedBy): OutlierRecord {
  const s = ps.series;
  const isInvalid = !ps.valid[i];
  const byUser = ps.userRejected[i] === 1 && !isInvalid;
  let offsetM = NaN, offsetUpM = NaN;
  if (j >= 0 && !isInvalid) {
    // offset from the smoothed track at this epoch
    offsetM = Math.hypot(ps.e[i]! - res.posEnu[0]![j]!, ps.n[i]! - res.posEnu[1]![j]!);
    if (ps.hasHeight) offsetUpM = ps.u[i]! - res.posEnu[2]![j]!;
  }
  const dof = isInvalid || byUser || j < 0 ? 0 : dofAt ? dofAt[j]! : 2 + (ps.hasHeight && Number.isFinite(ps.u[i]!) ? 1 : 0);
  const T = isInvalid || byUser ? NaN : res.nis[j]!;
  const readmit = dof > 0 && decided ? decided.readmit[dof]! : NaN;
  // the deciding test: recorded by the review where it decided; else (a caller without a log) the
  // review's where the fix fails it, the gate's otherwise (figures unknown: NaN)
  const d: Decision | undefined = isInvalid || byUser ? undefined : decided?.why.get(i);
  const test: DecidingTest = isInvalid ? 'invalid' : byUser ? 'user' : d ? d.test : T > res.nisThreshold[j]! ? 'review' : 'forward-gate';
  const testStatistic = d ? d.statistic : test === 'review' ? T : NaN;
  const testThreshold = d ? d.threshold : test === 'review' ? res.nisThreshold[j]! : NaN;
  return {
    id,
    fix: i,
    line: s.line[i]!,
    tSec: s.tSec[i]!,
    latDeg: s.latDeg[i]!,
    lonDeg: s.lonDeg[i]!,
    heightM: s.heightM ? s.heightM[i]! : NaN,
    reason: isInvalid ? 'invalid' : byUser ? 'user' : gateRejectedFix[i] ? 'innovation' : 'review',
    test,
    testStatistic,
    testThreshold,
    margin: decisionMargin(testStatistic, testThreshold),
    statistic: T,
    threshold: isInvalid || byUser ? NaN : res.nisThreshold[j]!,
    readmitThreshold: readmit,
    dof,
    offsetM,
    offsetUpM,
    detail: outlierDetail(ps, i, { isInvalid, byUser, d }, test, T, res.nisThreshold[j]!, readmit),
  };
}

/** The outlier records, in time order: the invalid fixes, the user's rejections and the filter's. */
function outlierRecords(res: SessionResult, ps: PreparedSession, gateRejectedFix: Uint8Array, dofAt?: Uint8Array, decided?: DecidedBy): OutlierRecord[] {
  const s = ps.series;
  const fixEpoch = new Int32Array(s.n).fill(-1);
  for (let j = 0; j < res.N; j++) if (res.fix[j]! >= 0) fixEpoch[res.fix[j]!] = j;
  const out: OutlierRecord[] = [];
  // fixes flagged so far per source line (ids: L<line>, then L<line>-2, …)
  const lineIds = new Map<number, number>();
  for (let i = 0; i < s.n; i++) {
    const j = fixEpoch[i]!;
    const isInvalid = !ps.valid[i];
    const byUser = ps.userRejected[i] === 1 && !isInvalid;
    const rejectedByFilter = j >= 0 && ps.offered[i] && res.status[j] === STATUS.outlier;
    if (!isInvalid && !rejectedByFilter && !byUser) continue;
    const line = s.line[i]!;
    const seen = lineIds.get(line) ?? 0;
    lineIds.set(line, seen + 1);
    out.push(outlierRecord(res, ps, i, j, seen === 0 ? `L${line}` : `L${line}-${seen + 1}`, gateRejectedFix, dofAt, decided));
  }
  return out;
}

/** Geodesic length (m) of the track, summed per segment (the epochs of a segment are contiguous). */
function trackLengthM(res: SessionResult): number {
  const N = res.N;
  let lengthM = 0;
  let j0 = 0;
  for (let j = 1; j <= N; j++)
    if (j === N || res.segment[j] !== res.segment[j0]) {
      lengthM += geodesicLengthM(res.latDeg, res.lonDeg, j0, j);
      j0 = j;
    }
  return lengthM;
}

/** The metrics of the final track, with outlierCount outlier records and the forward filter's reacquisitions. */
function sessionMetrics(res: SessionResult, ps: PreparedSession, outlierCount: number, reacquisitions: number): SessionMetrics {
  const s = ps.series;
  const N = res.N;
  let kept = 0, bridged = 0;
  // scratch for the median (selected in place: it is not needed afterwards)
  const sdH = new Float64Array(N);
  let sumR2 = 0, nR = 0, sumU2 = 0, nU = 0;
  for (let j = 0; j < N; j++) {
    const st = res.status[j]!;
    if (st === STATUS.kept || st === STATUS.userKept) kept++;
    else if (st === STATUS.bridged) bridged++;
    sdH[j] = Math.sqrt(res.sdEnu[0]![j]! ** 2 + res.sdEnu[1]![j]! ** 2);
    const i = res.fix[j]!;
    if (i >= 0 && (st === STATUS.kept || st === STATUS.userKept)) {
      const de = ps.e[i]! - res.posEnu[0]![j]!, dn = ps.n[i]! - res.posEnu[1]![j]!;
      sumR2 += de * de + dn * dn;
      nR++;
      if (ps.hasHeight && Number.isFinite(ps.u[i]!)) {
        const du = ps.u[i]! - res.posEnu[2]![j]!;
        sumU2 += du * du;
        nU++;
      }
    }
  }
  let invalid = 0;
  for (let i = 0; i < s.n; i++) if (!ps.valid[i]) invalid++;
  return {
    fixCount: s.n,
    epochCount: N,
    keptCount: kept,
    outlierCount,
    invalidCount: invalid,
    bridgedCount: bridged,
    segmentCount: ps.segments.length,
    durationSec: s.n > 0 ? s.tSec[s.n - 1]! - s.tSec[0]! : 0,
    nominalIntervalSec: ps.intervalSec,
    lengthM: trackLengthM(res),
    medianSdHorizontalM: medianInPlace(sdH),
    // over the epochs in order (the first of equal maxima, as before), then the median of one copy
    worstEll95MajorM: N ? res.ell95MajorM.reduce((m, v) => (v > m ? v : m), -Infinity) : NaN,
    medianEll95MajorM: medianInPlace(res.ell95MajorM.slice()),
    rmsResidualHorizontalM: nR ? Math.sqrt(sumR2 / nR) : NaN,
    rmsResidualUpM: nU ? Math.sqrt(sumU2 / nU) : NaN,
    reacquisitions,
  };
}

/**
 * Fill res.rawEnu, res.outliers and res.metrics from res's final epochs (tSec, fix, segment,
 * posEnu, sdEnu, ell95MajorM, latDeg/lonDeg, status, nis, nisThreshold, all already set).
 * @param gateRejectedFix per fix of the series: 1 where the fix failed the gate of the first pass
 *   (an outlier of it is then `innovation`, otherwise `review`)
 * @param reacquisitions re-acquisitions of the forward filter, reported in the metrics
 * @param dofAt optional degrees of freedom of the statistic per epoch (else the measured axes of the fix)
 * @param decided the deciding test of each rejected fix (by fix index) and the re-admission thresholds
 */
export function buildOutliersAndMetrics(res: SessionResult, ps: PreparedSession, gateRejectedFix: Uint8Array, reacquisitions: number, dofAt?: Uint8Array, decided?: DecidedBy): void {
  res.rawEnu = rawFixPositions(res, ps);
  res.outliers = outlierRecords(res, ps, gateRejectedFix, dofAt, decided);
  res.metrics = sessionMetrics(res, ps, res.outliers.length, reacquisitions);
}
