/**
 * Scoring of the scenario family (src/simulate/family.ts): each log is read by the normal CSV reader
 * and processed with the default configuration plus only what a user would set for the file (its
 * time zone), then scored against its truth with the conventions of test/helpers/score.ts:
 * - RMSE: smoothed horizontal error at fix epochs (bridged epochs excluded) against the raw fixes'
 *   error over the fixes that are neither outliers nor invalid;
 * - coverage: the 95% ellipse (k² = K2_95) and ±1.96 sd_up over every epoch, bridged ones included;
 * - outliers: a fix flagged by the gate or the review ("innovation", "review") counts as found
 *   when labelled "outlier", as a false alarm when labelled "clean"; "ambiguous" fixes (a ramp's
 *   small start, a heavy-tailed white draw) count neither way; the false-alarm rate is false alarms
 *   per clean fix, against the gate's nominal rate 1 − gate.probability.
 * Pooling per kind: coverage over all epochs of the kind; outlier counts summed; the RMSE ratio as
 * √(Σ smoothed squared error / raw MSE of its log ÷ Σ fix epochs), i.e. every log's errors in units
 * of its own raw MSE, pooled over epochs.
 */
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { STATUS, type SessionResult } from '../../src/session/result/result.js';
import { K2_95 } from '../../src/estimation/error-ellipse.js';
import { okEntry, type SessionSummary } from '../../src/output/summary.js';
import type { FamilyLog } from '../../src/simulate/family.js';
import type { FamilyKind } from '../../src/simulate/family-spec.js';

export interface FamilyScore {
  id: string;
  kind: FamilyKind;
  grade: string;
  rateHz: number;
  fixes: number;
  /** Sums for pooling. */
  seSmoothH: number;
  nSmoothH: number;
  seRawH: number;
  nRawH: number;
  epochs: number;
  inH: number;
  epochsU: number;
  inU: number;
  tp: number;
  fn: number;
  fp: number;
  clean: number;
  ambiguousFlagged: number;
  /** Derived per-log figures. */
  rmseSmoothH: number;
  rmseRawH: number;
  ratio: number;
  coverH95: number;
  coverU95: number;
  recall: number;
  precision: number;
  falseAlarmRate: number;
  nominalRate: number;
  elapsedSec: number;
  /** The session's summary.json entry (metrics, info, warnings). */
  summary: SessionSummary;
}

export function scoreFamilyLog(log: FamilyLog, r: SessionResult, nominalRate: number, elapsedSec: number): FamilyScore {
  let seS = 0, nS = 0, inH = 0, inU = 0, nU = 0;
  for (let j = 0; j < r.N; j++) {
    const [te, tn, tu] = log.truthEnuAt(r.tSec[j]!);
    const [e, n, u] = log.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, r.hasHeight ? r.heightM[j]! : 0);
    const de = e - te, dn = n - tn;
    const ve = r.sdEnu[0][j]! ** 2, vn = r.sdEnu[1][j]! ** 2, c = r.covEN[j]!;
    // inside the ellipse: Mahalanobis distance with the horizontal covariance ≤ k²
    const m2 = (vn * de * de - 2 * c * de * dn + ve * dn * dn) / (ve * vn - c * c);
    if (r.status[j] !== STATUS.bridged) {
      seS += de * de + dn * dn;
      nS++;
    }
    if (m2 <= K2_95) inH++;
    if (r.hasHeight) {
      nU++;
      if (Math.abs(u - tu) <= 1.96 * r.sdEnu[2][j]!) inU++;
    }
  }
  let seR = 0, nR = 0, clean = 0;
  const label = new Map<number, string>();
  for (const f of log.fixes) {
    if (f.empty) continue;
    label.set(Math.round(f.tSec * 1000), f.label);
    if (f.label === 'clean') clean++;
    if (f.label === 'outlier' || f.label === 'invalid') continue;
    const [e, n] = log.frame.geodeticToEnu(f.latDeg, f.lonDeg, f.heightM);
    seR += (e - f.truthEnu[0]) ** 2 + (n - f.truthEnu[1]) ** 2;
    nR++;
  }
  const flagged = new Set<number>();
  for (const o of r.outliers) if (o.reason === 'innovation' || o.reason === 'review') flagged.add(Math.round(o.tSec * 1000));
  let tp = 0, fn = 0, fp = 0, amb = 0;
  for (const [key, l] of label) {
    const fl = flagged.has(key);
    if (l === 'outlier') fl ? tp++ : fn++;
    else if (l === 'clean' && fl) fp++;
    else if (l === 'ambiguous' && fl) amb++;
  }
  const rmseS = Math.sqrt(seS / nS), rmseR = Math.sqrt(seR / nR);
  return {
    id: log.spec.id,
    kind: log.spec.kind,
    grade: log.spec.receiver.grade,
    rateHz: log.spec.rateHz,
    fixes: log.fixes.length,
    seSmoothH: seS, nSmoothH: nS, seRawH: seR, nRawH: nR,
    epochs: r.N, inH, epochsU: nU, inU,
    tp, fn, fp, clean, ambiguousFlagged: amb,
    rmseSmoothH: rmseS,
    rmseRawH: rmseR,
    ratio: rmseS / rmseR,
    coverH95: inH / r.N,
    coverU95: nU ? inU / nU : NaN,
    recall: tp + fn ? tp / (tp + fn) : 1,
    precision: tp + fp ? tp / (tp + fp) : 1,
    falseAlarmRate: clean ? fp / clean : 0,
    nominalRate,
    elapsedSec,
    summary: okEntry(r, log.written.fileName, [], elapsedSec),
  };
}

/**
 * Read the log's CSV as a user would (defaults + its time zone), process it and score it.
 * `settings` (a partial configuration, one level of sections deep) is merged over the log's own, to
 * measure a setting on the family.
 */
export function runFamilyLog(log: FamilyLog, settings?: Record<string, unknown>): FamilyScore {
  const own = log.written.config as Record<string, unknown>;
  const merged: Record<string, unknown> = { ...own };
  for (const [k, v] of Object.entries(settings ?? {}))
    merged[k] = v && typeof v === 'object' && !Array.isArray(v) ? { ...((own[k] as Record<string, unknown> | undefined) ?? {}), ...(v as Record<string, unknown>) } : v;
  const cfg = loadConfig({ overrides: merged });
  const t0 = performance.now();
  const series = readFixCsv(log.written.text, log.written.fileName, cfg);
  const r = processSession(series, cfg, log.spec.id);
  const el = (performance.now() - t0) / 1000;
  return scoreFamilyLog(log, r, 1 - cfg.gate.probability, el);
}

export interface PooledScore {
  kind: string;
  logs: number;
  fixes: number;
  ratio: number;
  worstRatio: number;
  worstRatioLog: string;
  coverH95: number;
  coverU95: number;
  minCoverH95: number;
  minCoverU95: number;
  recall: number;
  precision: number;
  injected: number;
  falseAlarms: number;
  falseAlarmRatio: number;
}

export function poolScores(kind: string, list: FamilyScore[]): PooledScore {
  const sum = (f: (s: FamilyScore) => number) => list.reduce((a, s) => a + f(s), 0);
  const tp = sum((s) => s.tp), fn = sum((s) => s.fn), fp = sum((s) => s.fp), clean = sum((s) => s.clean);
  const worst = list.reduce((a, s) => (s.ratio > a.ratio ? s : a), list[0]!);
  const nominal = list[0]?.nominalRate ?? NaN;
  return {
    kind,
    logs: list.length,
    fixes: sum((s) => s.fixes),
    ratio: Math.sqrt(sum((s) => s.seSmoothH / (s.seRawH / s.nRawH)) / sum((s) => s.nSmoothH)),
    worstRatio: worst.ratio,
    worstRatioLog: worst.id,
    coverH95: sum((s) => s.inH) / sum((s) => s.epochs),
    coverU95: sum((s) => s.inU) / sum((s) => s.epochsU),
    minCoverH95: Math.min(...list.map((s) => s.coverH95)),
    minCoverU95: Math.min(...list.map((s) => s.coverU95)),
    recall: tp + fn ? tp / (tp + fn) : 1,
    precision: tp + fp ? tp / (tp + fp) : 1,
    injected: tp + fn,
    falseAlarms: fp,
    falseAlarmRatio: clean ? fp / clean / nominal : 0,
  };
}
