/**
 * Session quality verdict: does the log lie inside what the model (and the receiver profile it was
 * calibrated around) describes? A named verdict, "good" or "degraded", with reasons in plain words,
 * from three measures of the final run:
 * - the share of the usable fixes flagged as outliers (the gate and review expect a few in a
 *   thousand plus the bursts of an ordinary log; FLAGGED_SHARE_DEGRADED is far beyond that);
 * - the calibrated horizontal fix error (white and correlated sigma combined) over the profile's
 *   (ERROR_RATIO_DEGRADED): fixes that scatter several times more than the receiver class assumed,
 *   as single-point fixes among tall buildings do;
 * - the mean review statistic of the kept fixes per degree of freedom (χ² per measured axis; its
 *   mean is 1 for a consistent model, Bar-Shalom, Li, Kirubarajan 2001 §5.4.2): above
 *   REVIEW_RATIO_DEGRADED the kept fixes sit farther from the track than the model allows.
 * A degraded session's reported uncertainty is widened to what the fixes' scatter about the track
 * supports: every epoch's sd per axis is at least the RMS residual (fix − smoothed) on that axis of
 * the usable fixes, kept and flagged (on a log outside the model a flagged fix is not known to be an
 * outlier: it may be the log's ordinary error; measured on deep-urban logs with half the fixes
 * flagged, the kept fixes alone gave a floor of 5–9 m where the error was 67–84 m, coverage 0.02,
 * with the flagged ones 25–28 m, coverage 0.21–0.48). The model's own sd on such a log describes
 * the scatter it was calibrated to; the floor is the error the fixes themselves show. A slow bias
 * that the track follows together with the fixes does not show in them, so the widened regions can
 * still be too small (test/session/check/verdict.test.ts prints the coverage). Pure; no file system.
 */
import { refreshUncertaintyMetrics } from './correlated-floor.js';
import { STATUS, type SessionResult } from '../result/result.js';
import type { AxisParams } from '../prepare/axis-params.js';
import { noiseScaleOf } from '../classify/local-noise-scale.js';

export const FLAGGED_SHARE_DEGRADED = 0.1;
export const ERROR_RATIO_DEGRADED = 2.5;
export const REVIEW_RATIO_DEGRADED = 1.5;

export interface SessionVerdict {
  verdict: 'good' | 'degraded';
  /** Plain-words reasons (empty when good). */
  reasons: string[];
  measures: {
    /** Flagged (gate or review) fixes over the usable fixes offered to the filter. */
    flaggedShare: number;
    /** Calibrated horizontal fix error over the profile's (white and correlated combined). */
    errorRatio: number;
    /** Mean review statistic per degree of freedom of the kept fixes, against the calibrated noise (the local noise scale taken out). */
    reviewRatio: number;
  };
  thresholds: { flaggedShare: number; errorRatio: number; reviewRatio: number };
  /** For a degraded session: the sd floor applied (m) and the median horizontal sd before and after. */
  widened?: { horizontalSdFloorM: number; verticalSdFloorM: number; medianSdHorizontalM: [number, number] };
}

/**
 * Horizontal fix error of p relative to the profile's, the white and correlated parts weighted by
 * the profile's metres (so a log with reported sigmas, whose white sigma is a scale, compares alike).
 */
export function errorRatio(p: AxisParams, profile: AxisParams, profileWhiteM: number): number {
  const rw = p.sigmaHorizontalM / profile.sigmaHorizontalM;
  const rg = profile.gmHorizontalSigmaM > 0 ? p.gmHorizontalSigmaM / profile.gmHorizontalSigmaM : 1;
  const W = profileWhiteM ** 2, G = profile.gmHorizontalSigmaM ** 2;
  return Math.sqrt((rw * rw * W + rg * rg * G) / (W + G));
}

const isKept = (st: number) => st === STATUS.kept || st === STATUS.userKept;

/** The verdict of a finished run (r with rawEnu set), p its parameters, profile the prior. */
export function sessionVerdict(r: SessionResult, p: AxisParams, profile: AxisParams, profileWhiteM: number): SessionVerdict {
  let offered = 0, flagged = 0, sumRatio = 0, nRatio = 0;
  // the review statistic was computed under R times the local noise scale (local-noise-scale.ts);
  // multiplied back, it measures the fixes against the calibrated noise, so a log whose noise the
  // scale had to widen in places is not judged by the widened noise
  const scale = noiseScaleOf(r);
  for (let j = 0; j < r.N; j++) {
    const st = r.status[j]!;
    if (st === STATUS.bridged || st === STATUS.userRejected) continue;
    if (!r.rawEnu || !Number.isFinite(r.rawEnu[0][j]!)) continue;
    offered++;
    if (st === STATUS.outlier) flagged++;
    else if (isKept(st) && Number.isFinite(r.nis[j]!)) {
      const dof = r.hasHeight && Number.isFinite(r.rawEnu[2][j]!) ? 3 : 2;
      sumRatio += (r.nis[j]! * (scale ? scale[j]! : 1)) / dof;
      nRatio++;
    }
  }
  const measures = {
    flaggedShare: offered ? flagged / offered : 0,
    errorRatio: errorRatio(p, profile, profileWhiteM),
    reviewRatio: nRatio ? sumRatio / nRatio : NaN,
  };
  const reasons: string[] = [];
  if (measures.flaggedShare > FLAGGED_SHARE_DEGRADED) reasons.push(`${(100 * measures.flaggedShare).toFixed(0)}% of the fixes were flagged as outliers (an ordinary log has a few per cent at most)`);
  if (measures.errorRatio > ERROR_RATIO_DEGRADED) reasons.push(`the fixes scatter ${measures.errorRatio.toFixed(1)} times more than the receiver profile assumes`);
  if (measures.reviewRatio > REVIEW_RATIO_DEGRADED) reasons.push(`the kept fixes lie ${Math.sqrt(measures.reviewRatio).toFixed(1)} times farther from the track than the model allows`);
  return {
    verdict: reasons.length ? 'degraded' : 'good',
    reasons,
    measures,
    thresholds: { flaggedShare: FLAGGED_SHARE_DEGRADED, errorRatio: ERROR_RATIO_DEGRADED, reviewRatio: REVIEW_RATIO_DEGRADED },
  };
}

/**
 * Widen r's reported uncertainty to the usable fixes' scatter about the track (kept and flagged;
 * not invalid, not rejected by the user): sd per axis at least the RMS residual of that axis
 * (horizontal: east and north pooled), ellipses and the sd metrics
 * recomputed. Returns the floors and the median horizontal sd before and after.
 */
export function widenToResidualScatter(r: SessionResult): NonNullable<SessionVerdict['widened']> {
  const raw = r.rawEnu!;
  let sH = 0, nH = 0, sU = 0, nU = 0;
  for (let j = 0; j < r.N; j++) {
    const st = r.status[j]!;
    if (!(isKept(st) || st === STATUS.outlier) || !Number.isFinite(raw[0][j]!)) continue;
    sH += (raw[0][j]! - r.posEnu[0][j]!) ** 2 + (raw[1][j]! - r.posEnu[1][j]!) ** 2;
    nH += 2;
    if (r.hasHeight && Number.isFinite(raw[2][j]!)) {
      sU += (raw[2][j]! - r.posEnu[2][j]!) ** 2;
      nU++;
    }
  }
  const floorH = nH ? Math.sqrt(sH / nH) : 0;
  const floorU = nU ? Math.sqrt(sU / nU) : 0;
  const before = r.metrics.medianSdHorizontalM;
  for (let j = 0; j < r.N; j++) {
    for (let a = 0; a < 2; a++) r.sdEnu[a]![j] = Math.max(r.sdEnu[a]![j]!, floorH);
    if (r.hasHeight) r.sdEnu[2][j] = Math.max(r.sdEnu[2][j]!, floorU);
  }
  refreshUncertaintyMetrics(r);
  return { horizontalSdFloorM: floorH, verticalSdFloorM: floorU, medianSdHorizontalM: [before, r.metrics.medianSdHorizontalM] };
}
