/**
 * Local noise scale of the fixes: a slowly varying multiplier of the measurement variance R,
 * estimated from the fixes' own scatter about the smoothed track, for receivers whose white noise
 * varies over minutes without the quality columns (HDOP, satellites) predicting it. Without it the
 * gate's one noise level is too tight in the noisier stretches (their clean fixes fail the gate en
 * masse) and too loose in the quieter ones.
 *
 * Per fix k the review statistic T_k = Σ_a ν_a²/var_a over its dof_k measured axes (estimation/
 * review.ts: var = R − H Pˢ Hᵀ for a kept fix, R + H Pˢ Hᵀ for a rejected one) is χ²(dof_k) under
 * the model, so with the noise scaled by s², T_k/dof_k ≈ s² χ²(dof)/dof. The estimate is the
 * log-mean over a moving window of ±windowSec/2,
 *
 *   log ŝ²_k = Σ_j (log min(T_j/dof_j, cap) − E[log(χ²(dof_j)/dof_j)]) / (n_k + n₀),
 *
 * the sum over the fixes j of the window (n_k of them), shrunk toward 1 by n₀ prior fixes and bounded
 * to [1/maxScale, maxScale]. The logarithm and the cap (the gate's threshold per dof) keep a burst of
 * rejected fixes from dominating the window; E[log(χ²(m)/m)] = ψ(m/2) + log(2/m) (the digamma
 * function ψ; Johnson, Kotz & Balakrishnan, "Continuous Univariate Distributions" vol. 1, 2nd ed.
 * 1994, ch. 18, the moments of log χ²). The scale is applied to R before the review runs again,
 * in the spirit of the variance-scale estimate of variational-Bayes adaptive Kalman filtering
 * (Särkkä & Nummenmaa, "Recursive noise adaptive Kalman filtering by variational Bayesian
 * approximations", IEEE TAC 54(3):596–600, 2009), here as a windowed robust smoother-residual
 * estimate instead of a recursive one.
 */
import type { AxisModel } from '../../models/axis-model.js';
import type { FilterOptions, SegmentData } from '../../estimation/track-filter.js';
import { findExcursions, HELD_OUT } from './excursion.js';
import { chiSquareQuantile } from '../../estimation/chi-square.js';
import { reviewSegment, type ReviewOptions, type ReviewOutcome } from './review.js';
import type { StageTimings } from '../result/timings.js';
import type { SessionResult } from '../result/result.js';

export interface LocalScaleOptions {
  /** Width of the moving window (s); 0 turns the scale off. */
  windowSec: number;
  /** Prior weight (fixes) toward a scale of 1. */
  priorFixes: number;
  /** Bound of the variance scale: it stays within [1/maxScale, maxScale]. */
  maxScale: number;
  /** Cap of T/dof per fix (the gate's threshold per dof). */
  capPerDof: number;
}

/** E[log(χ²(m)/m)] = ψ(m/2) + log(2/m) for m = 1, 2, 3 (ψ(1/2) = −γ − 2 log 2, ψ(1) = −γ, ψ(3/2) = 2 − γ − 2 log 2). */
const EULER_GAMMA = 0.5772156649015329;
export const MEAN_LOG_CHI2_PER_DOF: readonly number[] = [
  NaN,
  -EULER_GAMMA - 2 * Math.log(2) + Math.log(2),
  -EULER_GAMMA,
  2 - EULER_GAMMA - 2 * Math.log(2) + Math.log(2 / 3),
];

/**
 * The variance scale per epoch (1 where no fix), from the review statistics T, dof of one segment.
 * Epochs are in time order; O(N) with two pointers over prefix sums.
 */
export function localNoiseScale(tSec: Float64Array, T: Float64Array, dof: Uint8Array, o: LocalScaleOptions): Float64Array {
  const N = tSec.length;
  const out = new Float64Array(N).fill(1);
  if (!(o.windowSec > 0)) return out;
  // per epoch: the centred log term and whether it counts
  const term = new Float64Array(N);
  const has = new Uint8Array(N);
  const logCap = Math.log(o.capPerDof);
  for (let k = 0; k < N; k++) {
    const m = dof[k]!;
    const t = T[k]!;
    if (m < 1 || m > 3 || !Number.isFinite(t)) continue;
    // log of T/dof, floored so an exact zero residual stays finite (a 1e-12 share is far below any χ² draw's weight)
    const u = Math.max(t / m, 1e-12);
    term[k] = Math.min(Math.log(u), logCap) - MEAN_LOG_CHI2_PER_DOF[m]!;
    has[k] = 1;
  }
  const half = o.windowSec / 2;
  const logMax = Math.log(o.maxScale);
  let lo = 0, hi = 0;
  let sum = 0, n = 0;
  for (let k = 0; k < N; k++) {
    const t = tSec[k]!;
    while (hi < N && tSec[hi]! <= t + half) {
      if (has[hi]) { sum += term[hi]!; n++; }
      hi++;
    }
    while (lo < N && tSec[lo]! < t - half) {
      if (has[lo]) { sum -= term[lo]!; n--; }
      lo++;
    }
    // shrunk toward log 1 = 0 by the prior's weight, then bounded
    const ls = sum / (n + o.priorFixes);
    out[k] = Math.exp(Math.max(-logMax, Math.min(logMax, ls)));
  }
  return out;
}

/** Multiply the measurement variances of every axis by the scale (in place). */
export function scaleVariances(data: SegmentData, scale: Float64Array): void {
  for (const r of data.r) for (let k = 0; k < data.N; k++) r[k] = r[k]! * scale[k]!;
}

/** Local-scale settings from the configuration's window and the gate probability (cap = the gate's χ²(3) threshold per dof). */
export function localScaleOptions(windowSec: number, gateProbability: number): LocalScaleOptions {
  return { windowSec, priorFixes: LOCAL_SCALE_PRIOR_FIXES, maxScale: LOCAL_SCALE_MAX, capPerDof: chiSquareQuantile(gateProbability, 3) / 3 };
}

/** Prior weight toward 1 (fixes): at 1 Hz a 60 s window holds 60, so the data dominate; a window of a few fixes stays near 1. */
export const LOCAL_SCALE_PRIOR_FIXES = 10;
/** Bound of the variance scale (sd × 0.5 to × 2): the quality factors of receivers rarely move the error further within a log; beyond it the session verdict, not R, should speak. */
export const LOCAL_SCALE_MAX = 4;

/**
 * The review of one segment under the local noise scale: review (estimation/review.ts statistics
 * under the calibrated R), estimate the scale from its statistics, multiply R by it (data.r in
 * place), and review again from the gates. Returns the second outcome and the scale (null: off).
 */
export function reviewWithLocalScale(
  models: AxisModel[],
  data: SegmentData,
  offered: Uint8Array,
  opt: FilterOptions,
  ro: ReviewOptions,
  lo: LocalScaleOptions,
  tm?: StageTimings,
): { rev: ReviewOutcome; scale: Float64Array | null } {
  const first = reviewSegment(models, data, offered, opt, ro, undefined, tm);
  if (!(lo.windowSec > 0)) return { rev: withExcursions(models, data, offered, opt, ro, first, tm), scale: null };
  const scale = localNoiseScale(data.tSec, first.T, first.dof, lo);
  scaleVariances(data, scale);
  const rev = reviewSegment(models, data, offered, opt, ro, undefined, tm);
  return { rev: withExcursions(models, data, offered, opt, ro, rev, tm), scale };
}

/**
 * The local variance scale per epoch of a finished run (1 where none was applied), kept beside the
 * result: the session verdict (verdict.ts) judges the fixes against the calibrated noise, not
 * against the noise the scale has already widened.
 */
const scales = new WeakMap<SessionResult, Float64Array>();

export function attachNoiseScale(r: SessionResult, scale: Float64Array): void {
  scales.set(r, scale);
}

export function noiseScaleOf(r: SessionResult): Float64Array | undefined {
  return scales.get(r);
}

/** Scans of the excursion test per classification: a second finds what the first one's runs hid (family seed 1: drone RMSE ratio 1.017 → 1.000); it runs only where the first found something. */
export const EXCURSION_SCANS = 2;

/**
 * The review outcome with its excursions (excursion.ts) rejected and held out, then reviewed again
 * from those decisions; `offered` is marked in place (HELD_OUT), so the plans carry the hold to the
 * final run. Off with ro.excursions === false.
 */
export function withExcursions(models: AxisModel[], data: SegmentData, offered: Uint8Array, opt: FilterOptions, ro: ReviewOptions, rev: ReviewOutcome, tm?: StageTimings): ReviewOutcome {
  if (ro.excursions === false) return rev;
  for (let scan = 0; scan < EXCURSION_SCANS; scan++) {
    const gated = Uint8Array.from(offered, (u) => (u === 1 ? 1 : 0));
    const t0 = tm ? performance.now() : 0;
    const ex = findExcursions(models, rev.data, rev.filtered, gated, opt, ro.probability, { qHorizontal: ro.excursionQHorizontal, maxGapSec: ro.excursionMaxGapSec });
    if (tm) tm.review += performance.now() - t0;
    if (ex.length === 0) return rev;
    const kept = rev.kept.slice();
    const why = new Map(rev.why);
    for (const e of ex)
      for (const f of e.fixes) {
        offered[f.k] = HELD_OUT;
        kept[f.k] = 0;
        why.set(f.k, { test: 'excursion', statistic: f.T, threshold: f.threshold, dof: f.dof });
      }
    rev = reviewSegment(models, data, offered, opt, ro, { kept, gateRejected: rev.gateRejected, why }, tm);
  }
  return rev;
}
