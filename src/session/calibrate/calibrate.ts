/**
 * Per-session noise calibration by maximum likelihood of the filter innovations (prediction-error
 * decomposition of the Gaussian likelihood; Schweppe, "Evaluation of likelihood functions for
 * Gaussian signals", IEEE Trans. IT-11:61–70, 1965; Harvey, "Forecasting, Structural Time Series
 * Models and the Kalman Filter", 1989, §3.4). Parameters, in log space: white fix noise (horizontal,
 * vertical; or the scale of reported sigmas), the sigma and correlation time of the Gauss–Markov fix
 * error, and the process-noise densities. Maximized by Nelder–Mead under the gate (first round) and
 * by projected BFGS with the outlier decisions held fixed (second round; estimation/bfgs-box.ts,
 * Nocedal & Wright, "Numerical Optimization", 2nd ed. 2006, ch. 6); standard errors from the
 * numerical Hessian (observed information).
 * Robustness: fixes that fail the gate contribute a capped term (the gate threshold instead of their
 * NIS), so outliers cannot inflate the noise; a weak log-normal prior (a factor of 10 at one sigma)
 * around the profile keeps unidentifiable parameters physical on short logs; hard bounds keep
 * every parameter physical. Too short a log falls back to the profile with a warning.
 */
import { Matrix, inverse } from 'ml-matrix';
import type { HindcastConfig } from '../../config/schema.js';
import { nelderMead, numericalHessian } from '../../estimation/nelder-mead.js';
import { boxBfgs } from '../../estimation/bfgs-box.js';
import { allocateHistory, forwardFilter, sameHorizontalInputs, totalLogLik, type FilterHistory, type SegmentData } from '../../estimation/track-filter.js';
import { forwardLogLik, forwardLogLikApplies, makeLogLikWork } from '../../estimation/track-loglik.js';
import { buildAxisModels, filterOptions, type AxisParams } from '../prepare/axis-params.js';
import { segmentData, segmentDataRange, segmentGrid, sliceSegment, type PreparedSession } from '../prepare/prepare.js';
import { selectKth } from '../../estimation/select.js';
import { makeScoreWork, trackScore, trackScoreApplies } from '../../estimation/track-score.js';
import type { AxisModel } from '../../models/axis-model.js';
import { NumericalError } from '../../errors.js';
import { qualityLogTerms } from '../prepare/fix-noise.js';
import { applyQualityTable, applyReportedExponent, qualityTable, type QualityTable } from './quality-variances.js';

export type ParamName = 'sigmaHorizontalM' | 'sigmaVerticalM' | 'gmHorizontalSigmaM' | 'gmVerticalSigmaM' | 'gmTauSec' | 'gmVerticalTauSec' | 'qHorizontal' | 'qVertical' | 'hdopExponent' | 'satsExponent' | 'fixQualityExponent' | 'reportedExponent';

/** Parameters searched on their own scale (the exponents of the quality columns, 0 to 1); the others in log space. */
export const LINEAR: ReadonlySet<ParamName> = new Set(['hdopExponent', 'satsExponent', 'fixQualityExponent', 'reportedExponent']);

/** Physical bounds of each parameter. */
export const PARAM_BOUNDS: Record<ParamName, [number, number]> = {
  sigmaHorizontalM: [0.005, 200],
  sigmaVerticalM: [0.005, 400],
  gmHorizontalSigmaM: [0.01, 100],
  gmVerticalSigmaM: [0.01, 200],
  gmTauSec: [2, 3600],
  gmVerticalTauSec: [2, 3600],
  qHorizontal: [1e-6, 1e3],
  qVertical: [1e-7, 1e3],
  hdopExponent: [0, 1],
  satsExponent: [0, 1],
  fixQualityExponent: [0, 1],
  reportedExponent: [0, 1],
};

export interface ParamEstimate {
  value: number;
  /** Standard error (same unit); NaN where the information matrix was not positive definite. */
  se: number;
  /** True when the estimate sits at a bound (the standard error is then not meaningful). */
  atBound: boolean;
}

export interface CalibrationInfo {
  method: string;
  status: 'estimated' | 'fallback';
  reason?: string;
  epochsUsed: number;
  logLikelihood: number;
  evaluations: number;
  /** Exact-gradient passes (each one forward filter and one smoother pass), with those of the standard errors. */
  gradientEvaluations?: number;
  estimates: Partial<Record<ParamName, ParamEstimate>>;
  /** Whether the white sigmas are a scale of the log's reported sigmas. */
  reportedSigmaScale: boolean;
  /** The robust process-noise estimate and the q the second round's decisions were classified under (classification-start.ts). */
  classificationStart?: { robustQHorizontal: number; qHorizontal: number };
  /** Set when the noise was estimated jointly with other logs of the same receiver (pooled.ts). */
  pool?: PoolInfo;
}

/** A pooled calibration as each of its logs records it. */
export interface PoolInfo {
  /** The group's name (its folder, or what the name pattern matched). */
  group: string;
  /** The logs whose likelihoods were added (session names), and those of the group that were too short to take part (they take the shared estimates). */
  members: string[];
  given: string[];
  /** The parameters shared by the group; each log keeps its own process noise. */
  shared: string[];
  epochsUsed: number;
  /** The joint objective at the optimum (log-likelihood with the prior's penalty, as a single log's logLikelihood). */
  logLikelihood: number;
  /** The group's logs that failed (could not be read or processed): not part of the estimate. */
  failed?: string[];
  /** Set when the group could not be pooled: why (each log was then calibrated alone). */
  refused?: string;
}

export interface CalibrationOptions {
  maxEpochs: number;
  minFixes: number;
  minDurationSec: number;
  maxEvaluations: number;
  /**
   * Standard errors from the numerical Hessian (about 2n² evaluations more); off for a round whose
   * estimates only start the next one (processSession's first round: the second's replace them).
   */
  standardErrors?: boolean;
  /**
   * The maximizer: 'quasi-newton' (default; projected BFGS with a difference gradient,
   * estimation/bfgs-box.ts) or 'nelder-mead' (the simplex in two restarts; about 3–5× the evaluations
   * for the same maximum, test/session/calibrate/calibrate-optimizer.test.ts).
   */
  optimizer?: 'quasi-newton' | 'nelder-mead';
  /**
   * The quasi-Newton gradient: 'exact' (default; estimation/track-score.ts where it applies, else
   * differences) or 'difference' (forward and central differences of the objective: the reference
   * the exact one is tested against).
   */
  gradient?: 'exact' | 'difference';
}

export const DEFAULT_CALIBRATION: CalibrationOptions = { maxEpochs: 4000, minFixes: 120, minDurationSec: 180, maxEvaluations: 1200 };

/**
 * The first of processSession's two rounds: its estimates start the second, which replaces them, so
 * no standard errors; half the evaluations, since the second round's BFGS climbs to the maximum
 * from wherever the first stops (measured: the accuracy, consistency and real-drive figures the same
 * to the third digit, the scenario family's pooled figures the same or better, ~15% less time a
 * one-hour 1 Hz log); and at most FIRST_ROUND_MAX_EPOCHS epochs (a longer log: its four chunks, a
 * faster one thinned further), since the simplex's ~600 passes over the whole log were most of a
 * session's time. Measured (docs/noise-model.md "The maximizer"): one-hour 1 Hz logs drawn from the
 * scenario family (26 a seed, seeds 1–3) pooled RMSE ratio and coverage within ±0.004 of the whole-
 * log round; the family itself (seeds 1–5) within +0.007 RMSE ratio and −0.007 coverage; the first
 * round of a one-hour 1 Hz log 240 → ~80 ms.
 */
export const FIRST_ROUND_MAX_EPOCHS = 1200;
export const FIRST_ROUND: CalibrationOptions = { ...DEFAULT_CALIBRATION, maxEpochs: FIRST_ROUND_MAX_EPOCHS, maxEvaluations: 600, standardErrors: false };

/**
 * Prior spread (log space) per parameter. White noise and process noise are well identified by the
 * data (the high-frequency scatter and the manoeuvres); the slow correlated error is hard to tell
 * from slow motion with a single receiver (the likelihood is nearly flat along "less correlated
 * error, more motion"), so its sigma is a property of the receiver class stated in the profile, which
 * the data may move by about 30% at one sigma, and its time constant by a factor of 2.
 * Measured (docs/validation.md): with a factor of 2 on the sigma, ellipse coverage on stop-
 * and-go vehicle logs fell to 0.74–0.92 (the sigma was pulled to half its true value); with 1.3 it is
 * 0.93–0.98, at the price of over-coverage (≈0.99–1.00) for receivers better than the profile says.
 */
const PRIOR_LOG_SD: Record<ParamName, number> = {
  sigmaHorizontalM: Math.log(10),
  sigmaVerticalM: Math.log(10),
  gmHorizontalSigmaM: Math.log(1.3),
  gmVerticalSigmaM: Math.log(1.3),
  gmTauSec: Math.log(2),
  gmVerticalTauSec: Math.log(2),
  qHorizontal: Math.log(10),
  qVertical: Math.log(10),
  // no prior: flat between "ignore" (0) and "proportional" (1)
  hdopExponent: Infinity,
  satsExponent: Infinity,
  fixQualityExponent: Infinity,
  reportedExponent: Infinity,
};

/**
 * Weight (in log space) of the vertical correlated sigma's evidence in the centre of the horizontal
 * one's prior: centre = log profile σ_bH + w · (log σ_bV − log profile σ_bV), i.e. half-way between
 * the profile and the vertical estimate times the profile's horizontal-to-vertical ratio. Under
 * horizontal motion the data identify only the error's diffusion 2σ²/τ, so σ_bH comes from its
 * prior; the vertical series of a platform that hardly climbs identifies σ_bV, and one receiver's
 * horizontal and vertical correlated errors scale together (common practice: the vertical 1.5–2.5 ×
 * the horizontal). Applied with noise.correlatedSigmaPrior 'vertical' (default 'profile': the
 * profile value alone). Measured on the scenario family without bursts (docs/noise-model.md), with
 * the floor below: pooled horizontal coverage walk 0.90 → 0.93, drone 0.81 → 0.84, circle 0.53 →
 * 0.61, urban 0.65 → 0.68, van 0.94 → 0.90; w = 1 lost more of the van (0.87), where the vertical
 * sigma is inflated by climbs.
 */
export const GM_VERTICAL_EVIDENCE_WEIGHT = 0.5;

/**
 * Floor of the vertical process noise relative to the horizontal one (qV ≥ f · qH), soft: a one-
 * sided log-normal penalty of VERTICAL_Q_FLOOR_LOG_SD below it. Without it qV falls to ~1e-4 on
 * moving logs, and the climbs of a vehicle or a walker are absorbed as correlated error (which then
 * inflates σ_bV, and through GM_VERTICAL_EVIDENCE_WEIGHT σ_bH). A still log has qH ≈ 0 and is not
 * held up. With noise.correlatedSigmaPrior 'vertical' only. Measured with the weight above: pooled
 * vertical coverage walk 0.89 → 0.95, circle 0.68 → 0.78, the lowest log's 0.16 → 0.47.
 */
export const VERTICAL_Q_FLOOR_RATIO = 0.05;
export const VERTICAL_Q_FLOOR_LOG_SD = 0.01;

/** Number of contiguous chunks the calibration subset of a long log is made of. */
export const CALIBRATION_CHUNKS = 4;

/**
 * Longest epoch interval (s) the calibration thins a fast log to: a log of more than maxEpochs
 * epochs at a rate above 1 Hz is read at every stride-th epoch (a 10 Hz log at down to 1 Hz), so
 * that the epochs calibrated span minutes to hours rather than four windows of 100 s. The model is
 * in continuous time, so the thinned log has the same parameters; what is lost is some of the
 * white noise's information, which a fast log has in excess. Measured (docs/noise-model.md): a 24-
 * minute 10 Hz van log read in four 100 s windows put the correlated error's time constant at
 * 227–245 s for 60 s and its vertical sigma at 2.5–2.7 m for 1.4 m (coverage 1.000).
 */
export const CALIBRATION_MAX_INTERVAL_SEC = 1;

/** The usable epochs of each segment (segments of 3 epochs or more) and their total. */
function usableSegments(ps: PreparedSession, bridgeFactor: number): { segs: Array<{ seg: number; N: number }>; total: number } {
  const segs: Array<{ seg: number; N: number }> = [];
  let total = 0;
  for (let si = 0; si < ps.segments.length; si++) {
    const N = segmentGrid(ps, ps.segments[si]!, bridgeFactor).tSec.length;
    if (N < 3) continue;
    segs.push({ seg: si, N });
    total += N;
  }
  return { segs, total };
}

/**
 * The calibration's thinning stride: 1 for a log of at most maxEpochs epochs or at 1 Hz or slower;
 * otherwise the smallest stride that brings the log to maxEpochs, at most the one that reaches
 * CALIBRATION_MAX_INTERVAL_SEC.
 */
export function calibrationStride(ps: PreparedSession, bridgeFactor: number, maxEpochs: number): number {
  const { total } = usableSegments(ps, bridgeFactor);
  if (total <= maxEpochs || !(ps.intervalSec > 0)) return 1;
  // + 0.01: an interval of 0.2 s measured as 0.2000001 (times in ms) must still give 5
  const maxStride = Math.max(1, Math.floor(CALIBRATION_MAX_INTERVAL_SEC / ps.intervalSec + 0.01));
  return Math.min(maxStride, Math.ceil(total / maxEpochs));
}

/**
 * Where the calibration subset lies: null when the log (at most maxEpochs epochs after thinning by
 * calibrationStride, over its segments of 3 epochs or more) is used whole; otherwise
 * CALIBRATION_CHUNKS contiguous chunks of maxEpochs / CALIBRATION_CHUNKS thinned epochs (that many
 * times the stride at the log's own rate) centred at equal steps through the log, each kept inside
 * its segment, as [segment index, first epoch, epoch count] at the log's own rate. So the cost of
 * calibration does not grow with the log while it still sees its beginning, middle and end.
 */
export function calibrationWindows(ps: PreparedSession, bridgeFactor: number, maxEpochs: number): Array<{ seg: number; start: number; len: number }> | null {
  const { segs, total } = usableSegments(ps, bridgeFactor);
  const stride = calibrationStride(ps, bridgeFactor, maxEpochs);
  if (total <= maxEpochs * stride) return null;
  const L = Math.floor(maxEpochs / CALIBRATION_CHUNKS) * stride;
  const out: Array<{ seg: number; start: number; len: number }> = [];
  for (let c = 0; c < CALIBRATION_CHUNKS; c++) {
    // chunk centred at (c + ½)/C of the concatenated epochs, kept inside its segment
    let pos = Math.floor(((c + 0.5) / CALIBRATION_CHUNKS) * total);
    let j = 0;
    while (pos >= segs[j]!.N) pos -= segs[j++]!.N;
    const { seg, N } = segs[j]!;
    const len = Math.min(L, N);
    const start = Math.max(0, Math.min(pos - (len >> 1), N - len));
    out.push({ seg, start, len });
  }
  return out;
}

/** One item of the calibration subset: its segment, first epoch there, the filter inputs and the fix of each epoch (−1 for none). */
interface SubsetItem {
  seg: number;
  start: number;
  data: SegmentData;
  fix: Int32Array;
}

/** Segment data of the calibration subset (calibrationWindows) at the log's own rate, with each item's segment, first epoch and fixes. */
function calibrationSubset(ps: PreparedSession, base: AxisParams, bridgeFactor: number, maxEpochs: number): SubsetItem[] {
  // unit white sigma and the proportional factors: the objective scales the variances per evaluation
  const unit = { ...base, sigmaHorizontalM: 1, sigmaVerticalM: 1, hdopExponent: 1, satsExponent: 1, fixQualityExponent: 1, reportedExponent: 1 };
  const windows = calibrationWindows(ps, bridgeFactor, maxEpochs);
  const out: SubsetItem[] = [];
  if (!windows) {
    for (let si = 0; si < ps.segments.length; si++) {
      const { data, fix } = segmentData(ps, ps.segments[si]!, unit, bridgeFactor);
      if (data.N >= 3) out.push({ seg: si, start: 0, data, fix });
    }
    return out;
  }
  // each chunk alone (the same values as the slice of its whole segment's data)
  for (const { seg, start, len } of windows) {
    const fix = segmentGrid(ps, ps.segments[seg]!, bridgeFactor).fix.subarray(start, start + len);
    out.push({ seg, start, data: segmentDataRange(ps, ps.segments[seg]!, unit, bridgeFactor, start, start + len), fix });
  }
  return out;
}

/** Every stride-th epoch of d (from its first), with its fixes. */
function thin(d: SegmentData, fix: Int32Array, stride: number): { data: SegmentData; fix: Int32Array } {
  if (stride === 1) return { data: d, fix };
  const N = Math.ceil(d.N / stride);
  const pick = <T extends Float64Array | Uint8Array | Int32Array>(a: T, make: (n: number) => T): T => {
    const o = make(N);
    for (let k = 0; k < N; k++) o[k] = a[k * stride]!;
    return o;
  };
  const f64 = (n: number) => new Float64Array(n);
  return {
    data: { N, tSec: pick(d.tSec, f64), z: d.z.map((a) => pick(a, f64)), r: d.r.map((a) => pick(a, f64)), use: pick(d.use, (n) => new Uint8Array(n)) },
    fix: pick(fix, (n) => new Int32Array(n)),
  };
}

/** The item from its first epoch that carries a fix (the forward filter starts on one), or null when fewer than 3 epochs remain. */
function startOnFix(d: SegmentData, fix: Int32Array): { data: SegmentData; fix: Int32Array } | null {
  let k = 0;
  while (k < d.N && d.use[k] === 0) k++;
  if (d.N - k < 3) return null;
  return k === 0 ? { data: d, fix } : { data: sliceSegment(d, k, d.N), fix: fix.subarray(k) };
}

/** horizontalExtentM of a prepared session (both calibration rounds read it). */
const extents = new WeakMap<PreparedSession, number>();

/** Robust spread (m) of the horizontal fixes: the larger of the 5–95 % ranges of east and north. */
function horizontalExtentM(ps: PreparedSession): number {
  let v = extents.get(ps);
  if (v === undefined) extents.set(ps, (v = horizontalExtentOf(ps)));
  return v;
}

function horizontalExtentOf(ps: PreparedSession): number {
  return Math.max(range90(ps, ps.e), range90(ps, ps.n));
}

/** The 5–95 % range of a coordinate over the offered fixes (the 5% and 95% order statistics, selected without sorting). */
function range90(ps: PreparedSession, a: Float64Array): number {
  const all = new Float64Array(a.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) if (ps.offered[i] !== 0 && Number.isFinite(a[i]!)) all[m++] = a[i]!;
  if (m < 2) return 0;
  const v = all.subarray(0, m);
  return selectKth(v, Math.floor(0.95 * (m - 1))) - selectKth(v, Math.floor(0.05 * (m - 1)));
}

/** What calibrateSession returns: the parameters, how they were found, and the warnings. */
export type CalibrationResult = { params: AxisParams; info: CalibrationInfo; warnings: string[] };

/** Why the log is too short to calibrate (too few usable fixes, or too short a span of them), or null when it is long enough. */
function tooShortReason(ps: PreparedSession, opt: CalibrationOptions): string | null {
  let offered = 0;
  let t0 = Infinity, t1 = -Infinity;
  for (let i = 0; i < ps.series.n; i++)
    if (ps.offered[i]) {
      offered++;
      t0 = Math.min(t0, ps.series.tSec[i]!);
      t1 = Math.max(t1, ps.series.tSec[i]!);
    }
  if (offered < opt.minFixes) return `only ${offered} usable fixes (needs ${opt.minFixes})`;
  if (t1 - t0 < opt.minDurationSec) return `only ${Math.round(t1 - t0)} s of fixes (needs ${opt.minDurationSec} s)`;
  return null;
}

/** The parameters estimated for the session, in search order, and whether the vertical correlation time is one of them. */
function calibratedNames(ps: PreparedSession, cfg: HindcastConfig): { names: ParamName[]; ownTauV: boolean } {
  const names: ParamName[] = ['sigmaHorizontalM', 'gmHorizontalSigmaM', 'gmTauSec'];
  // the vertical correlation time: its own parameter, or the horizontal one's value (noise.verticalCorrelationTime)
  const ownTauV = ps.hasHeight && cfg.noise.verticalCorrelationTime === 'own';
  if (ps.hasHeight) names.splice(1, 0, 'sigmaVerticalM'), names.push('gmVerticalSigmaM');
  if (ownTauV) names.push('gmVerticalTauSec');
  // the process noise is estimated on a static log too (staticLogWarning)
  names.push('qHorizontal');
  if (ps.hasHeight) names.push('qVertical');
  // how far the quality columns predict the error: an exponent each, 0 (ignore) to 1 (proportional)
  const ex = ps.factors.exponents;
  if (ex.hdop) names.push('hdopExponent');
  if (ex.sats) names.push('satsExponent');
  if (ex.fixQuality) names.push('fixQualityExponent');
  if (ex.reported) names.push('reportedExponent');
  return { names, ownTauV };
}

/**
 * The warning for a log that looks static, or null. A static log is estimated like any other: its
 * process noise goes to (near) its lower bound, and with the motion model still, the wander of the
 * fixes is the correlated error, which is then well identified. Measured on 2-hour static logs
 * (test/session/consistency.test.ts): holding q at the profile value instead (it lets the motion
 * absorb the correlated error) gave a time constant of ~300 s for a true 45 s and 0.87–0.88
 * horizontal coverage; estimated, 36–50 s and 0.96–1.00.
 */
function staticLogWarning(ps: PreparedSession, prior: AxisParams): string | null {
  const staticLog = horizontalExtentM(ps) < 6 * prior.sigmaHorizontalM;
  return staticLog ? 'the log looks static (fixes spread less than a few sigmas): the motion model is estimated as (nearly) still' : null;
}

/** One item of the objective: its filter inputs, whether east and north have the same inputs, and each epoch's quality log terms (null where no exponent is estimated). */
interface ObjectiveItem {
  data: SegmentData;
  sameInputs: boolean;
  terms: Float64Array | null;
  /** With reported sigmas and their exponent: per axis, log(s / median) of each epoch's fix (0 without one). */
  reportedTerms: Float64Array[] | null;
  /** The distinct combinations of those terms (qualityTable), where they are given. */
  quality: QualityTable | null;
}

/** The calibration subset as the objective reads it: under held-fixed decisions when given, thinned by calibrationStride, each chunk from its first fix. */
function objectiveSubset(
  ps: PreparedSession,
  cfg: HindcastConfig,
  prior: AxisParams,
  opt: CalibrationOptions,
  withExponents: boolean,
  useOverride?: Map<number, Uint8Array>,
): ObjectiveItem[] {
  const chunks = calibrationSubset(ps, prior, cfg.segments.bridgeFactor, opt.maxEpochs);
  // held-fixed outlier decisions (2 kept without gate, 0 rejected) replace the gate when given
  if (useOverride)
    for (const item of chunks) {
      const u = useOverride.get(item.seg);
      if (u) item.data = { ...item.data, use: u.subarray(item.start, item.start + item.data.N) };
    }
  const stride = calibrationStride(ps, cfg.segments.bridgeFactor, opt.maxEpochs);
  // with whether east and north have the same inputs (a property of the data alone, so found once),
  // and, where the exponents are estimated, the log quality terms of each epoch's fix (qualityLogTerms)
  const subset: ObjectiveItem[] = [];
  const lt = new Float64Array(4);
  for (const item of chunks) {
    const thinned = thin(item.data, item.fix, stride);
    // a whole segment starts on its first fix already (kept as it is, also under held-fixed decisions)
    const d = item.start > 0 ? startOnFix(thinned.data, thinned.fix) : thinned;
    if (!d) continue;
    let terms: Float64Array | null = null;
    let reportedTerms: Float64Array[] | null = null;
    if (withExponents && ps.factors.reported) {
      const med = ps.factors.reportedMedians!;
      reportedTerms = ps.factors.perAxis.slice(0, d.data.r.length).map((s, a) => {
        const t = new Float64Array(d.data.N);
        for (let k = 0; k < d.data.N; k++) if (d.fix[k]! >= 0) t[k] = Math.log(s[d.fix[k]!]! / med[a]!);
        return t;
      });
    } else if (withExponents) {
      terms = new Float64Array(4 * d.data.N);
      for (let k = 0; k < d.data.N; k++) {
        const i = d.fix[k]!;
        if (i < 0) continue;
        qualityLogTerms(ps.series, ps.factors, i, lt);
        terms.set(lt, 4 * k);
      }
    }
    subset.push({ data: d.data, sameInputs: sameHorizontalInputs(d.data), terms, reportedTerms, quality: terms ? qualityTable(terms, d.data.N) : null });
  }
  return subset;
}

/** A parameter's search coordinate: its value clamped to its bounds, in log space (the exponents: their own scale). */
export function toX(nm: ParamName, v: number): number {
  const c = Math.min(Math.max(v, PARAM_BOUNDS[nm][0]), PARAM_BOUNDS[nm][1]);
  return LINEAR.has(nm) ? c : Math.log(c);
}

/** A parameter's value from its search coordinate. */
export function fromX(nm: ParamName, x: number): number {
  return LINEAR.has(nm) ? x : Math.exp(x);
}

/** A parameter's starting value in p: the exponents half-way unless set, the vertical time constant the horizontal one's unless set. */
function startOf(p: AxisParams, nm: ParamName): number {
  return LINEAR.has(nm) ? (p[nm] as number | undefined) ?? 0.5 : (p[nm] as number | undefined) ?? (nm === 'gmVerticalTauSec' ? p.gmTauSec : NaN);
}

/** The parameters at search coordinates x: base with the searched names replaced (the vertical time constant the horizontal one's unless its own). */
function paramsAt(x: number[], names: ParamName[], base: AxisParams, ownTauV: boolean): AxisParams {
  const p = { ...base };
  names.forEach((nm, i) => ((p as Record<ParamName, number>)[nm] = fromX(nm, x[i]!)));
  if (!ownTauV) p.gmVerticalTauSec = p.gmTauSec;
  return p;
}

/** The subset's variances rewritten for the exponents of p (where they are estimated); the axis models and r scales of p. */
function makeApply(ps: PreparedSession, subset: ObjectiveItem[], withExponents: boolean): (p: AxisParams) => { models: AxisModel[]; rScale: number[] } {
  // the exponents the subset's r holds (NaN: not yet written)
  let rExp = [NaN, NaN, NaN];
  return (p) => {
    const models = buildAxisModels(p, ps.hasHeight);
    const rScale = [p.sigmaHorizontalM ** 2, p.sigmaHorizontalM ** 2, p.sigmaVerticalM ** 2];
    if (withExponents) {
      const aH = p.hdopExponent ?? 1, aS = p.satsExponent ?? 1, aQ = p.fixQualityExponent ?? 1, aR = p.reportedExponent ?? 1;
      if (ps.factors.reported) {
        if (aR !== rExp[0]) {
          for (const { data: d, reportedTerms } of subset) applyReportedExponent(d, reportedTerms!, ps.factors.reportedMedians!, aR);
          rExp = [aR, NaN, NaN];
        }
      } else if (aH !== rExp[0] || aS !== rExp[1] || aQ !== rExp[2]) {
        for (const { data: d, quality } of subset) applyQualityTable(d, quality!, aH, aS, aQ);
        rExp = [aH, aS, aQ];
      }
    }
    return { models, rScale };
  };
}

/** The log-likelihood of the subset's innovations under parameters p (rewrites the subset's variances where the exponents change). */
function makeLogLik(cfg: HindcastConfig, prior: AxisParams, subset: ObjectiveItem[], apply: ReturnType<typeof makeApply>, nAxes: number): (p: AxisParams) => number {
  const histories = new Map<SegmentData, FilterHistory>();
  const fopt = filterOptions(cfg, prior);
  // no re-acquisition here: its covariance inflation would explain manoeuvres for free
  const lopt = { ...fopt, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
  const llWork = makeLogLikWork(nAxes);
  return (p) => {
    const { models, rScale } = apply(p);
    let ll = 0;
    for (const { data: d, sameInputs } of subset) {
      // the common case (n = 3, east and north shared) without a history: the same value as
      // totalLogLik of the forward pass below (test/estimation/forward-loglik.test.ts)
      if (forwardLogLikApplies(models, d, lopt, rScale, sameInputs)) {
        ll += forwardLogLik(models, d, lopt, rScale, llWork);
        continue;
      }
      let h = histories.get(d);
      if (!h || h.x[0]!.length !== d.N * models[0]!.n) {
        h = allocateHistory(d.N, models);
        histories.set(d, h);
      }
      h.extraQ.clear();
      h.reacquired.length = 0;
      // no re-acquisition here: its covariance inflation would explain manoeuvres for free
      forwardFilter(models, d, { ...fopt, rScale, reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true }, h);
      ll += totalLogLik(h);
    }
    return ll;
  };
}

/**
 * The exact gradient of the log-likelihood in search coordinates (estimation/track-score.ts, Fisher's
 * identity), or null where it does not apply (another motion model, fixes under the gate): then the
 * optimizer takes differences. The per-axis derivatives are mapped to the searched parameters by the
 * chain rule: the white sigma scales every R of its axes (∂ log R/∂ log σ = 2), an exponent moves
 * log R by twice its log term, the horizontal noise parameters are shared by east and north, and the
 * vertical time constant is the horizontal one's unless it is searched on its own.
 */
function makeLogLikGradient(
  ps: PreparedSession,
  cfg: HindcastConfig,
  prior: AxisParams,
  subset: ObjectiveItem[],
  apply: ReturnType<typeof makeApply>,
  names: ParamName[],
  toParams: (x: number[]) => AxisParams,
  ownTauV: boolean,
): ((x: number[]) => number[]) | null {
  const fopt = { ...filterOptions(cfg, prior), reacquireAfter: Number.MAX_SAFE_INTEGER };
  const probe = apply(toParams(names.map((nm) => toX(nm, startOf(prior, nm)))));
  if (!subset.every(({ data }) => trackScoreApplies(probe.models, data, fopt))) return null;
  const works = subset.map(({ data }) => makeScoreWork(probe.models, data.N));
  const idx = (nm: ParamName) => names.indexOf(nm);
  const iSH = idx('sigmaHorizontalM'), iSV = idx('sigmaVerticalM'), iBH = idx('gmHorizontalSigmaM'), iBV = idx('gmVerticalSigmaM');
  const iTH = idx('gmTauSec'), iTV = idx('gmVerticalTauSec'), iQH = idx('qHorizontal'), iQV = idx('qVertical');
  const iEH = idx('hdopExponent'), iES = idx('satsExponent'), iEQ = idx('fixQualityExponent'), iER = idx('reportedExponent');
  const sums = new Float64Array(5);
  return (x) => {
    const { models, rScale } = apply(toParams(x));
    const g = new Array<number>(names.length).fill(0);
    const add = (i: number, v: number) => {
      if (i >= 0) g[i] = g[i]! + v;
    };
    for (let s = 0; s < subset.length; s++) {
      const { data, quality, reportedTerms } = subset[s]!;
      let sc: ReturnType<typeof trackScore>;
      try {
        sc = trackScore(models, data, fopt, rScale, works[s]!);
      } catch (e) {
        // a predicted covariance that lost positive definiteness at extreme parameters: no exact
        // gradient here (NaN), so the optimizer takes differences at this point
        if (e instanceof NumericalError) return g.map(() => NaN);
        throw e;
      }
      for (let a = 0; a < sc.axes.length; a++) {
        const ax = sc.axes[a]!;
        const vertical = a === 2;
        add(vertical ? iQV : iQH, ax.dLogQ);
        add(vertical ? iBV : iBH, ax.dLogSigmaB);
        add(vertical ? (ownTauV ? iTV : iTH) : iTH, ax.dLogTau);
        weightedTermSums(sc.dLogR[a]!, data.N, quality, vertical, reportedTerms ? reportedTerms[a]! : null, sums);
        add(vertical ? iSV : iSH, 2 * sums[0]!);
        add(iEH, 2 * sums[1]!);
        add(iES, 2 * sums[2]!);
        add(iEQ, 2 * sums[3]!);
        add(iER, 2 * sums[4]!);
      }
    }
    return g;
  };
}

/**
 * Over an axis's epochs, with w = ∂ log L / ∂ log r per epoch: Σ w, and Σ w × the epoch's log
 * quality terms (DOP, satellites, fix quality: log r = 2 (αₕ t_dop + αₛ t_sats + α_q t_quality),
 * quality-variances.ts) or its reported-sigma term, into out[0..5). A module-level function (not a
 * closure made per calibration) so that its loop is compiled once for all sessions of a thread.
 */
function weightedTermSums(w: Float64Array, N: number, quality: QualityTable | null, vertical: boolean, reported: Float64Array | null, out: Float64Array): void {
  let sumW = 0, sumH = 0, sumS = 0, sumQ = 0, sumR = 0;
  const idx = quality ? (vertical ? quality.idxV : quality.idxH) : null;
  const comb = quality ? (vertical ? quality.combV : quality.combH) : null;
  for (let k = 0; k < N; k++) {
    const wk = w[k]!;
    if (wk === 0) continue;
    sumW += wk;
    if (comb) {
      const c = 3 * idx![k]!;
      sumH += wk * comb[c]!;
      sumS += wk * comb[c + 1]!;
      sumQ += wk * comb[c + 2]!;
    } else if (reported) sumR += wk * reported[k]!;
  }
  out[0] = sumW;
  out[1] = sumH;
  out[2] = sumS;
  out[3] = sumQ;
  out[4] = sumR;
}

/** The prior's penalty (−log density up to a constant) at search coordinates x, around the prior centres xPrior. */
export function makePriorPenalty(names: ParamName[], xPrior: number[], cfg: HindcastConfig): (x: number[]) => number {
  const iTauH = names.indexOf('gmTauSec'), iTauV = names.indexOf('gmVerticalTauSec');
  // noise.correlatedSigmaPrior 'vertical': the horizontal correlated sigma's prior follows the vertical estimate, with a floor on qV
  const fromVertical = cfg.noise.correlatedSigmaPrior === 'vertical';
  const iGmH = names.indexOf('gmHorizontalSigmaM'), iGmV = fromVertical ? names.indexOf('gmVerticalSigmaM') : -1;
  const iQH = names.indexOf('qHorizontal'), iQV = fromVertical ? names.indexOf('qVertical') : -1;
  const logQFloor = Math.log(VERTICAL_Q_FLOOR_RATIO);
  return (x) => {
    // weak log-normal prior around the profile (none on the exponents: flat between their bounds)
    // (the vertical time constant's is centred on the horizontal one: it departs from it where the
    // vertical series says so, and follows it where that series says little; the horizontal
    // correlated sigma's moves with the vertical one by GM_VERTICAL_EVIDENCE_WEIGHT)
    let pen = 0;
    for (let i = 0; i < names.length; i++) {
      const sd = PRIOR_LOG_SD[names[i]!];
      const centre =
        i === iTauV ? x[iTauH]!
        : i === iGmH && iGmV >= 0 ? xPrior[i]! + GM_VERTICAL_EVIDENCE_WEIGHT * (x[iGmV]! - xPrior[iGmV]!)
        : xPrior[i]!;
      if (Number.isFinite(sd)) pen += 0.5 * ((x[i]! - centre) / sd) ** 2;
    }
    // soft floor log qV ≥ log f + log qH (one-sided quadratic: smooth, so the Hessian stays finite)
    if (iQV >= 0 && iQH >= 0) {
      const below = logQFloor + x[iQH]! - x[iQV]!;
      if (below > 0) pen += 0.5 * (below / VERTICAL_Q_FLOOR_LOG_SD) ** 2;
    }
    return pen;
  };
}

/** The objective: −log-likelihood plus the prior's penalty at search coordinates x, infinite outside the bounds. */
export function makeObjective(names: ParamName[], toParams: (x: number[]) => AxisParams, logLik: (p: AxisParams) => number, penalty: (x: number[]) => number): (x: number[]) => number {
  return (x) => {
    for (let i = 0; i < names.length; i++) {
      const nm = names[i]!;
      const [lo, hi] = PARAM_BOUNDS[nm];
      if (x[i]! < toX(nm, lo) || x[i]! > toX(nm, hi)) return Infinity;
    }
    const ll = logLik(toParams(x));
    return -ll + penalty(x);
  };
}

/** Minimize the objective from x0: projected BFGS inside the bounds (quasiNewton) or the simplex in two restarts. */
export function minimize(
  negLogLik: (x: number[]) => number,
  names: ParamName[],
  x0: number[],
  opt: CalibrationOptions,
  quasiNewton: boolean,
  gradient?: (x: number[]) => number[],
  diagonalStart?: (x: number[], f: number) => number[],
): { x: number[]; f: number; evaluations: number; gradients: number } {
  if (quasiNewton) {
    // projected BFGS inside the bounds; a difference step of 1e-5 (log space: 0.001 %) is far below
    // the standard errors and far above the objective's rounding
    const q = boxBfgs(negLogLik, x0, {
      lo: names.map((nm) => toX(nm, PARAM_BOUNDS[nm][0])),
      hi: names.map((nm) => toX(nm, PARAM_BOUNDS[nm][1])),
      maxEvaluations: opt.maxEvaluations,
      gradientStep: names.map(() => 1e-5),
      maxStep: 1,
      fTolerance: 1e-6,
      // a diagonal start from second differences at 0.01 (1 % in log space): the search starts near the optimum
      curvatureStep: names.map(() => 0.01),
      gradient,
      ...(diagonalStart ? { diagonalStart } : {}),
    });
    return { x: q.x, f: q.f, evaluations: q.evaluations, gradients: q.gradients };
  }
  // two restarts: the second from the first optimum, which escapes early simplex collapse
  const res1 = nelderMead(negLogLik, x0, { step: names.map((nm) => (LINEAR.has(nm) ? 0.3 : 0.7)), maxEvaluations: Math.floor(opt.maxEvaluations * 0.6), fTolerance: 1e-2, xTolerance: 1e-2 });
  const res2 = nelderMead(negLogLik, res1.x, { step: names.map((nm) => (LINEAR.has(nm) ? 0.1 : 0.25)), maxEvaluations: Math.floor(opt.maxEvaluations * 0.4), fTolerance: 1e-3, xTolerance: 5e-3 });
  const res = res2.f <= res1.f ? res2 : res1;
  return { x: res.x, f: res.f, evaluations: res1.evaluations + res2.evaluations, gradients: 0 };
}

/** The objective's gradient: −∇ log L (exact) plus the prior penalty's by central differences (a quadratic: exact to rounding). */
export function objectiveGradient(llGradient: (x: number[]) => number[], penalty: (x: number[]) => number): (x: number[]) => number[] {
  const h = 1e-6;
  return (x) => {
    const g = llGradient(x).map((v) => -v);
    const y = x.slice();
    for (let i = 0; i < x.length; i++) {
      y[i] = x[i]! + h;
      const up = penalty(y);
      y[i] = x[i]! - h;
      const down = penalty(y);
      y[i] = x[i]!;
      g[i] = g[i]! + (up - down) / (2 * h);
    }
    return g;
  };
}

/**
 * The Hessian of the objective over the parameters `free` at x by central differences of the exact
 * gradient (2 gradients a parameter instead of the 2n² values of second differences), symmetrized.
 * Step 0.01 in search coordinates (1 % in log space): truncation error O(h²) far below the
 * standard errors' own precision.
 */
function gradientHessian(gradient: (x: number[]) => number[], x: number[], free: number[]): number[][] {
  const h = 0.01;
  const cols = free.map((i) => {
    const up = x.slice(), down = x.slice();
    up[i] = x[i]! + h;
    down[i] = x[i]! - h;
    const gu = gradient(up), gd = gradient(down);
    return free.map((r) => (gu[r]! - gd[r]!) / (2 * h));
  });
  return free.map((_, a) => free.map((_, b) => 0.5 * (cols[b]![a]! + cols[a]![b]!)));
}

/** Standard errors in search coordinates at the optimum x over the parameters `free` (NaN elsewhere, or where the information matrix is singular). */
function searchStandardErrors(negLogLik: (x: number[]) => number, x: number[], free: number[], gradient?: (x: number[]) => number[], hessian?: HessianOf): number[] {
  const seLog: number[] = x.map(() => NaN);
  try {
    const sub = (y: number[]) => {
      const xs = x.slice();
      free.forEach((i, j) => (xs[i] = y[j]!));
      return negLogLik(xs);
    };
    const finite = (M: number[][]) => M.every((row) => row.every(Number.isFinite));
    let H = !free.length ? [] : hessian ? hessian(x, free) : gradient ? gradientHessian(gradient, x, free) : numericalHessian(sub, free.map((i) => x[i]!), free.map(() => 0.02));
    // an exact gradient unavailable somewhere near x: the second differences of the objective
    if (gradient && !finite(H)) H = numericalHessian(sub, free.map((i) => x[i]!), free.map(() => 0.02));
    if (free.length && H.every((row) => row.every(Number.isFinite))) {
      const C = inverse(new Matrix(H));
      free.forEach((i, j) => {
        const v = C.get(j, j);
        seLog[i] = v > 0 ? Math.sqrt(v) : NaN;
      });
    }
  } catch {
    /* singular information matrix: standard errors stay NaN */
  }
  return seLog;
}

/** The objective's Hessian at x over the coordinates `free` (a search whose structure gives a cheaper one than gradientHessian). */
export type HessianOf = (x: number[], free: number[]) => number[][];

/**
 * The estimates at the optimum x, one per entry of `names` (a name may repeat: a pooled search has a
 * process noise per log), with standard errors when `standardErrors` and whether each sits at a bound;
 * `hessian`, where given, replaces the differences of the gradient for the standard errors.
 */
export function estimatesAt(
  negLogLik: (x: number[]) => number,
  names: ParamName[],
  x: number[],
  standardErrors: boolean,
  gradient?: (x: number[]) => number[],
  hessian?: HessianOf,
): { list: ParamEstimate[]; gradients: number } {
  // standard errors from the observed information (Hessian of −log L in log space), over the
  // parameters inside their bounds (a parameter at a bound is held there: the objective is infinite
  // beyond it, so its own curvature is undefined and would leave every standard error NaN)
  const values = names.map((nm, i) => fromX(nm, x[i]!));
  const atBound = names.map((nm, i) => {
    const [lo, hi] = PARAM_BOUNDS[nm];
    const v = values[i]!;
    // the exponents: within 0.02 of 0 or 1; the others within 5%
    return LINEAR.has(nm) ? v <= lo + 0.02 || v >= hi - 0.02 : v <= lo * 1.05 || v >= hi / 1.05;
  });
  const free = names.map((_, i) => i).filter((i) => !atBound[i]);
  const seLog = standardErrors ? searchStandardErrors(negLogLik, x, free, gradient, hessian) : names.map(() => NaN);
  // delta method: se(θ) ≈ θ · se(log θ) (the exponents: their own scale)
  const list = names.map((nm, i) => ({ value: values[i]!, se: LINEAR.has(nm) ? seLog[i]! : values[i]! * seLog[i]!, atBound: atBound[i]! }));
  return { list, gradients: standardErrors && gradient && !hessian ? 2 * free.length : 0 };
}

/** estimatesAt keyed by parameter name (names distinct). */
function paramEstimates(
  negLogLik: (x: number[]) => number,
  names: ParamName[],
  x: number[],
  standardErrors: boolean,
  gradient?: (x: number[]) => number[],
): { estimates: CalibrationInfo['estimates']; gradients: number } {
  const { list, gradients } = estimatesAt(negLogLik, names, x, standardErrors, gradient);
  const estimates: CalibrationInfo['estimates'] = {};
  names.forEach((nm, i) => (estimates[nm] = list[i]!));
  return { estimates, gradients };
}

/**
 * One log's calibration problem: what calibrateSession maximizes, in parts, so that a pooled
 * calibration (pooled.ts) can add several logs' likelihoods over shared parameters.
 */
export interface CalibrationProblem {
  ps: PreparedSession;
  names: ParamName[];
  ownTauV: boolean;
  /** Search coordinates of the prior centres and of the start. */
  xPrior: number[];
  x0: number[];
  toParams: (x: number[]) => AxisParams;
  /** The innovations' log-likelihood under p (the subset's variances rewritten for its exponents). */
  logLik: (p: AxisParams) => number;
  /** Its exact gradient in search coordinates, or null (differences then). */
  llGradient: ((x: number[]) => number[]) | null;
  /** Whether quasi-Newton applies (decisions held fixed: a smooth objective). */
  quasiNewton: boolean;
  epochsUsed: number;
  warnings: string[];
}

/**
 * The calibration problem of a log (see calibrateSession for the arguments), or the reason the log
 * is too short to calibrate.
 */
export function calibrationProblem(
  ps: PreparedSession,
  cfg: HindcastConfig,
  prior: AxisParams,
  opt: CalibrationOptions = DEFAULT_CALIBRATION,
  start?: AxisParams,
  useOverride?: Map<number, Uint8Array>,
): CalibrationProblem | { short: string } {
  const short = tooShortReason(ps, opt);
  if (short !== null) return { short };
  const warnings: string[] = [];
  const { names, ownTauV } = calibratedNames(ps, cfg);
  const staticWarning = staticLogWarning(ps, prior);
  if (staticWarning) warnings.push(staticWarning);
  const ex = ps.factors.exponents;
  const withExponents = ex.hdop || ex.sats || ex.fixQuality || ex.reported;
  const subset = objectiveSubset(ps, cfg, prior, opt, withExponents, useOverride);
  const epochsUsed = subset.reduce((a, d) => a + d.data.N, 0);
  // the prior is centred on the profile; the search starts from `start` (an earlier round) when given;
  // the exponents start half-way (the profile states none) unless an earlier round estimated them
  const xPrior = names.map((nm) => toX(nm, startOf(prior, nm)));
  const x0 = names.map((nm) => toX(nm, startOf(start ?? prior, nm)));
  const base = start ?? prior;
  const toParams = (x: number[]): AxisParams => paramsAt(x, names, base, ownTauV);
  const apply = makeApply(ps, subset, withExponents);
  const logLik = makeLogLik(cfg, prior, subset, apply, ps.hasHeight ? 3 : 2);
  // the exact gradient where the decisions are held fixed (a smooth objective) and the model is the common one
  const llGradient = useOverride && opt.gradient !== 'difference' ? makeLogLikGradient(ps, cfg, prior, subset, apply, names, toParams, ownTauV) : null;
  // quasi-Newton where the outlier decisions are held fixed (a smooth objective); under the gate
  // (the first round) the objective jumps wherever a fix crosses the threshold, which stalls a
  // difference gradient (measured on vehicle and drone logs: BFGS from the profile stopped 70–3,800
  // below the simplex's log-likelihood, and 2–70 below when started from the simplex's first
  // restart), so that round keeps the simplex
  const quasiNewton = opt.optimizer !== 'nelder-mead' && useOverride !== undefined;
  return { ps, names, ownTauV, xPrior, x0, toParams, logLik, llGradient, quasiNewton, epochsUsed, warnings };
}

/** The profile's values for a log too short to calibrate, with the warning that says so. */
export function fallbackCalibration(ps: PreparedSession, prior: AxisParams, short: string): CalibrationResult {
  return {
    params: prior,
    info: { method: 'profile values', status: 'fallback', reason: short, epochsUsed: 0, logLikelihood: NaN, evaluations: 0, estimates: {}, reportedSigmaScale: ps.factors.reported },
    warnings: [`noise calibration skipped: ${short}; the profile's values are used`],
  };
}

/**
 * Estimate the session's parameters. `start` (an earlier round's estimate) is where the search
 * begins; the prior stays centred on the profile. `useOverride` (per segment) holds outlier decisions
 * fixed (2 kept without gate, 0 rejected) instead of the gate.
 */
export function calibrateSession(
  ps: PreparedSession,
  cfg: HindcastConfig,
  prior: AxisParams,
  opt: CalibrationOptions = DEFAULT_CALIBRATION,
  start?: AxisParams,
  useOverride?: Map<number, Uint8Array>,
): CalibrationResult {
  const pb = calibrationProblem(ps, cfg, prior, opt, start, useOverride);
  if ('short' in pb) return fallbackCalibration(ps, prior, pb.short);
  const { names, toParams, quasiNewton } = pb;
  const penalty = makePriorPenalty(names, pb.xPrior, cfg);
  const negLogLik = makeObjective(names, toParams, pb.logLik, penalty);
  const gradient = pb.llGradient ? objectiveGradient(pb.llGradient, penalty) : undefined;
  const res = minimize(negLogLik, names, pb.x0, opt, quasiNewton, gradient);
  const params = toParams(res.x);
  const estimates = paramEstimates(negLogLik, names, res.x, opt.standardErrors !== false, gradient);
  return {
    params,
    info: {
      method: `maximum likelihood of the filter innovations (${quasiNewton ? (gradient ? 'quasi-Newton, exact gradient' : 'quasi-Newton') : 'Nelder–Mead'}), capped outlier terms, weak prior`,
      status: 'estimated',
      epochsUsed: pb.epochsUsed,
      logLikelihood: -res.f,
      evaluations: res.evaluations,
      gradientEvaluations: res.gradients + estimates.gradients,
      estimates: estimates.estimates,
      reportedSigmaScale: ps.factors.reported,
    },
    warnings: pb.warnings,
  };
}
