/**
 * Scoring a SessionResult against simulator truth: RMSE of smoothed and raw fixes, 95% ellipse and
 * vertical coverage, outlier recall and precision.
 */
import { loadConfig } from '../../src/config/load.js';
import type { HindcastConfig } from '../../src/config/schema.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { STATUS, type SessionResult } from '../../src/session/result/result.js';
import { K2_95 } from '../../src/estimation/error-ellipse.js';
import { scenarioCsv, type Scenario } from '../../src/simulate/scenario.js';

export interface Score {
  rmseSmoothH: number;
  rmseRawH: number;
  rmseSmoothU: number;
  rmseRawU: number;
  coverH95: number;
  coverU95: number;
  recall: number;
  precision: number;
  epochs: number;
  bridgedRmseH: number;
  bridgedCoverH95: number;
  /** Outlier counts: injected and flagged, injected and missed, flagged but clean. */
  tp: number;
  fn: number;
  fp: number;
}

export function scoreAgainstTruth(sc: Scenario, r: SessionResult): Score {
  let se = 0, n = 0, nFix = 0, su = 0, inH = 0, inU = 0, nu = 0;
  let sb = 0, nb = 0, inB = 0;
  for (let j = 0; j < r.N; j++) {
    const [te, tn, tu] = sc.truthEnuAt(r.tSec[j]!);
    const [e, nn, u] = sc.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, r.hasHeight ? r.heightM[j]! : 0);
    const de = e - te, dn = nn - tn;
    const d2 = de * de + dn * dn;
    // inside the ellipse: Mahalanobis distance with the (diagonal) covariance ≤ k²
    const ve = r.sdEnu[0][j]! ** 2, vn = r.sdEnu[1][j]! ** 2, c = r.covEN[j]!;
    const det = ve * vn - c * c;
    const m2 = (vn * de * de - 2 * c * de * dn + ve * dn * dn) / det;
    if (r.status[j] !== STATUS.bridged) {
      // smoothed RMSE at fix epochs, comparable with the raw fixes' RMSE
      se += d2;
      nFix++;
    }
    n++;
    if (m2 <= K2_95) inH++;
    if (r.status[j] === STATUS.bridged) {
      sb += d2;
      nb++;
      if (m2 <= K2_95) inB++;
    }
    if (r.hasHeight) {
      const du = u - tu;
      su += du * du;
      nu++;
      if (Math.abs(du) <= 1.96 * r.sdEnu[2][j]!) inU++;
    }
  }
  let re = 0, rn = 0, ru = 0, rnu = 0;
  for (const f of sc.fixes) {
    if (f.outlier || f.invalid) continue;
    const [e, nn, u] = sc.frame.geodeticToEnu(f.latDeg, f.lonDeg, f.heightM);
    re += (e - f.truthEnu[0]) ** 2 + (nn - f.truthEnu[1]) ** 2;
    ru += (u - f.truthEnu[2]) ** 2;
    rn++;
    rnu++;
  }
  // outliers: injected outlier fixes vs fixes flagged (reason other than invalid/user)
  const flagged = new Set<number>();
  for (const o of r.outliers) if (o.reason === 'innovation' || o.reason === 'review') flagged.add(Math.round(o.tSec * 1000));
  let tp = 0, fn = 0;
  const truthOut = new Set<number>();
  for (const f of sc.fixes) {
    if (!f.outlier) continue;
    const key = Math.round(f.tSec * 1000);
    truthOut.add(key);
    if (flagged.has(key)) tp++;
    else fn++;
  }
  let fp = 0;
  for (const k of flagged) if (!truthOut.has(k)) fp++;
  return {
    rmseSmoothH: Math.sqrt(se / nFix),
    rmseRawH: Math.sqrt(re / rn),
    rmseSmoothU: Math.sqrt(su / Math.max(nu, 1)),
    rmseRawU: Math.sqrt(ru / Math.max(rnu, 1)),
    coverH95: inH / n,
    coverU95: nu ? inU / nu : NaN,
    recall: tp + fn ? tp / (tp + fn) : 1,
    precision: tp + fp ? tp / (tp + fp) : 1,
    epochs: n,
    bridgedRmseH: nb ? Math.sqrt(sb / nb) : NaN,
    bridgedCoverH95: nb ? inB / nb : NaN,
    tp,
    fn,
    fp,
  };
}

export function runScenario(sc: Scenario, cfg: HindcastConfig = loadConfig()): { r: SessionResult; s: Score } {
  const series = readFixCsv(scenarioCsv(sc), `${sc.spec.kind}-${sc.spec.seed}.csv`, cfg);
  const r = processSession(series, cfg, `${sc.spec.kind}-${sc.spec.seed}`);
  return { r, s: scoreAgainstTruth(sc, r) };
}

/** The calibration's estimates of a session (value, standard error, at a bound), by parameter name. */
export function calibrationEstimates(r: SessionResult): Record<string, { value: number; se: number; atBound: boolean }> {
  return (r.info.calibration as { estimates: Record<string, { value: number; se: number; atBound: boolean }> }).estimates;
}
