/**
 * Model-adequacy check against over-smoothing: is the motion model too stiff for this log?
 *
 * With one receiver, the fixes measure position plus a slow correlated error, and the likelihood
 * cannot always tell slow motion from slow error (DEVELOPERS.md, "Decisions"). On a log that keeps
 * turning tightly (a walker circling a plot of a few metres), maximum likelihood can settle on an
 * almost still platform and a correlated error of several times the receiver profile: the track then
 * cuts every turn and is worse than the fixes it came from. The two explanations fit the fixes about
 * equally well (measured: the stiff one often has the higher likelihood), so the choice is made on
 * what each costs when it is wrong: taking motion for error moves the track off the fixes by the
 * size of the motion (1.6–2.5 × the raw error measured on circling logs); taking error for motion
 * leaves the track near the fixes (no worse than raw). The check therefore prefers motion when all
 * three hold:
 *   (1) the fixes depart from the track in long runs: the lag-1 s autocorrelation ρ of the kept
 *       fixes' horizontal residuals (fix − smoothed position, pooled over east and north; Box &
 *       Jenkins, "Time Series Analysis", 1976, §2.1.4 for the sample autocorrelation) is above
 *       RHO_STIFF, where a model that follows the platform leaves ρ ≤ ~0 (smoothing makes neighbouring
 *       residuals negatively correlated; measured −0.39 to −0.02 on the walk, vehicle and drone
 *       scenarios) — and
 *   (2) the correlated error this needs lies far outside the receiver profile: its estimated sigma
 *       is more than SIGMA_RATIO_STIFF times the profile's (the calibration's prior spread on it is a
 *       factor of 1.3, so this is beyond 2.6 prior standard deviations: a prior–data conflict, Box,
 *       "Sampling and Bayes' inference in scientific modelling and robustness", JRSS A 143, 1980) —
 *   (3) and the departure moves like a platform, not like the model's fix error: adjacent
 *       increments of the residuals over a lag of 2, 3 or 4 s (the largest excess counts) correlate
 *       more than the fitted white + Gauss–Markov error allows (modelIncrementCorrelation; that
 *       error's adjacent increments are always negatively correlated), by more than
 *       PERSISTENCE_EXCESS_STIFF. Measured: +0.13 to +0.23 on the stiff circling fits, −0.11 to
 *       −0.01 on walks, a vehicle and a drone whose true correlated error was 2.3–3.3 × the
 *       profile's (where (1) and (2) alone re-modelled two of seven and cost coverage, 0.995 → 0.882
 *       and 0.907 → 0.621).
 * Then the remedy: the horizontal process noise, white noise and correlated sigma are estimated again
 * by maximum likelihood (Nelder–Mead on their logarithms, the outlier decisions of the first run held
 * fixed, the calibration's prior on the correlated sigma) with the correlated sigma limited to
 * GM_REFIT_LIMIT times the profile's, in the configured motion model; then the session is classified,
 * reviewed and smoothed again under those parameters.
 * A log that looks static (calibrate.ts) is not re-modelled: its wander is its error.
 * Pure functions; no file system.
 */
import type { HindcastConfig } from '../../config/schema.js';
import { makeAxisModel } from '../../models/axis-model.js';
import { allocateHistory, forwardFilter, totalLogLik, type SegmentData } from '../../estimation/track-filter.js';
import { nelderMead } from '../../estimation/nelder-mead.js';
import { STATUS, type SessionResult } from '../result/result.js';
import { calibrationWindows, DEFAULT_CALIBRATION, PARAM_BOUNDS } from '../calibrate/calibrate.js';
import { filterOptions, type AxisParams } from '../prepare/axis-params.js';
import { segmentDataRange, segmentGrid, type PreparedSession } from '../prepare/prepare.js';

/** Residual autocorrelation above which the track is taken to leave the fixes in long runs. */
export const RHO_STIFF = 0.5;
/** Correlated-error sigma, as a multiple of the profile's, above which it conflicts with the profile. */
export const SIGMA_RATIO_STIFF = 2;
/**
 * Upper limit of the correlated sigma in the refit, as a multiple of the profile's (about 1.5 prior
 * standard deviations). On a circling log the likelihood pushes the correlated error to whatever
 * limit it is given (the stiff explanation fits as well), so the limit sets the split. Measured on
 * circling walkers 1–8 (test/session/check/adequacy.test.ts; four re-modelled): held at the profile (1.0),
 * smoothed/raw pooled 0.82 but horizontal coverage 0.68 on the log whose true error was 1.4 × the
 * profile's; 2.0 (the conflict limit) 0.85 and coverage 0.92–1.00; 1.5: 0.83 and 0.92–1.00.
 */
export const GM_REFIT_LIMIT = 1.5;
/** Prior spread (log space) of the correlated sigma, as in the calibration (calibrate.ts). */
const GM_PRIOR_LOG_SD = Math.log(1.3);
/** Lag of the residual autocorrelation (s); at least one epoch. */
export const RESIDUAL_LAG_SEC = 1;
/** Lags of the increment persistence test (s; each at least one epoch): the largest excess counts, so turns of different periods are seen. */
export const INCREMENT_LAGS_SEC = [2, 3, 4];
/** Excess of the residuals' increment correlation over the model's prediction above which they move like a platform. */
export const PERSISTENCE_EXCESS_STIFF = 0.06;

export interface AdequacyCheck {
  /** What was measured: the lag-1 s autocorrelation of the kept fixes' horizontal residuals. */
  statistic: 'residual autocorrelation';
  lagSec: number;
  /** ρ of the first run; NaN with too few residual pairs. */
  residualAutocorrelation: number;
  /** Estimated horizontal correlated-error sigma over the profile's. */
  correlatedSigmaRatio: number;
  /** Adjacent-increment correlation of the residuals at the lag (of INCREMENT_LAGS_SEC) with the largest excess, observed and as the model's fix error predicts it, and the excess (observed − predicted). */
  incrementLagSec: number;
  incrementCorrelation: number;
  modelIncrementCorrelation: number;
  persistenceExcess: number;
  thresholds: { residualAutocorrelation: number; correlatedSigmaRatio: number; persistenceExcess: number };
  /** 'adequate': no change; 'more process noise': re-modelled; 'static log': stiff by the test but left as estimated (a still platform). */
  outcome: 'adequate' | 'more process noise' | 'static log';
  /** Plain words for the report. */
  message: string;
  /** After re-modelling: ρ of the final run and the parameters that changed (before → after). */
  after?: { residualAutocorrelation: number; qHorizontal: [number, number]; sigmaHorizontalM: [number, number]; gmHorizontalSigmaM: [number, number] };
}

/**
 * Sample autocorrelation at lagSec of the kept fixes' horizontal residuals (fix − smoothed), the
 * east and north series pooled (means removed per axis), over pairs of epochs of the same segment.
 */
export function residualAutocorrelation(r: SessionResult, intervalSec: number, lagSec = RESIDUAL_LAG_SEC): { rho: number; pairs: number } {
  const raw = r.rawEnu;
  if (!raw || r.N < 3) return { rho: NaN, pairs: 0 };
  const lag = Math.max(1, Math.round(lagSec / intervalSec));
  const kept = (j: number) => (r.status[j] === STATUS.kept || r.status[j] === STATUS.userKept) && Number.isFinite(raw[0][j]!) && Number.isFinite(raw[1][j]!);
  const mean = [0, 0];
  let n = 0;
  for (let j = 0; j < r.N; j++)
    if (kept(j)) {
      for (let a = 0; a < 2; a++) mean[a]! += raw[a]![j]! - r.posEnu[a]![j]!;
      n++;
    }
  if (n < 3) return { rho: NaN, pairs: 0 };
  mean[0]! /= n;
  mean[1]! /= n;
  let c = 0, v = 0, pairs = 0;
  for (let j = 0; j + lag < r.N; j++) {
    const k = j + lag;
    if (!kept(j) || !kept(k) || r.segment[j] !== r.segment[k]) continue;
    for (let a = 0; a < 2; a++) {
      const x = raw[a]![j]! - r.posEnu[a]![j]! - mean[a]!;
      const y = raw[a]![k]! - r.posEnu[a]![k]! - mean[a]!;
      // ρ = Σ x_t x_{t+L} / Σ ½(x_t² + x_{t+L}²) over the same pairs (stays in [−1, 1] with gaps)
      c += x * y;
      v += 0.5 * (x * x + y * y);
    }
    pairs++;
  }
  return { rho: pairs >= 10 && v > 0 ? c / v : NaN, pairs };
}

/** Whether the check finds the model too stiff (the three conditions of the file header). */
export function tooStiff(rho: number, sigmaRatio: number, persistenceExcess: number): boolean {
  return Number.isFinite(rho) && rho > RHO_STIFF && sigmaRatio > SIGMA_RATIO_STIFF && Number.isFinite(persistenceExcess) && persistenceExcess > PERSISTENCE_EXCESS_STIFF;
}

/**
 * The horizontal model re-estimated with its correlated sigma limited to GM_REFIT_LIMIT × the
 * profile's: process noise q, white sigma and correlated sigma by maximum likelihood of the
 * horizontal innovations (time constant as calibrated), the first run's
 * outlier decisions held fixed (kept fixes used without gate, the others left out), over the whole
 * log or the calibration's chunks of a long one. The vertical parameters are left as they were.
 */
export function refitHorizontalMotion(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams, prior: AxisParams, r: SessionResult): AxisParams {
  const bridge = cfg.segments.bridgeFactor;
  // the first epoch of each segment in r (segments are contiguous and in order)
  const segStart: number[] = [];
  for (let j = 0; j < r.N; j++) if (j === 0 || r.segment[j] !== r.segment[j - 1]) segStart.push(j);
  const windows = calibrationWindows(ps, bridge, DEFAULT_CALIBRATION.maxEpochs) ?? ps.segments.map((seg, si) => ({ seg: si, start: 0, len: segmentGrid(ps, seg, bridge).tSec.length }));
  const unit = { ...p, sigmaHorizontalM: 1, sigmaVerticalM: 1 };
  const items: SegmentData[] = [];
  for (const w of windows) {
    if (w.len < 3 || segStart[w.seg] === undefined) continue;
    const d = segmentDataRange(ps, ps.segments[w.seg]!, unit, bridge, w.start, w.start + w.len);
    const use = new Uint8Array(d.N);
    const j0 = segStart[w.seg]! + w.start;
    for (let k = 0; k < d.N; k++) {
      const st = r.status[j0 + k]!;
      use[k] = d.use[k] && (st === STATUS.kept || st === STATUS.userKept) ? 2 : 0;
    }
    let k0 = 0;
    while (k0 < d.N && use[k0] === 0) k0++;
    if (d.N - k0 < 3) continue;
    items.push({ N: d.N - k0, tSec: d.tSec.subarray(k0), z: [d.z[0]!.subarray(k0), d.z[1]!.subarray(k0)], r: [d.r[0]!.subarray(k0), d.r[1]!.subarray(k0)], use: use.subarray(k0) });
  }
  const fopt = { ...filterOptions(cfg, p), reacquireAfter: Number.MAX_SAFE_INTEGER, likelihood: true };
  const [qLo, qHi] = PARAM_BOUNDS.qHorizontal;
  const [sLo, sHi] = PARAM_BOUNDS.sigmaHorizontalM;
  const gm0 = prior.gmHorizontalSigmaM;
  const gmHi = GM_REFIT_LIMIT * gm0;
  const negLogLik = (x: number[]): number => {
    const q = Math.exp(x[0]!), s = Math.exp(x[1]!), gm = Math.exp(x[2]!);
    if (q < qLo || q > qHi || s < sLo || s > sHi || gm < PARAM_BOUNDS.gmHorizontalSigmaM[0] || gm > gmHi) return Infinity;
    const m = makeAxisModel({ motion: p.motion, q, gm: { sigmaM: gm, tauSec: p.gmTauSec } });
    let ll = 0;
    for (const d of items) {
      const h = allocateHistory(d.N, [m, m]);
      forwardFilter([m, m], d, { ...fopt, rScale: [s * s, s * s] }, h);
      ll += totalLogLik(h);
    }
    // the calibration's log-normal prior on the correlated sigma (a factor of 1.3 at one sigma)
    return -ll + 0.5 * (Math.log(gm / gm0) / GM_PRIOR_LOG_SD) ** 2;
  };
  // start from the profile's process noise and correlated error (the motion the stiff fit gave away) and the white sigma found
  const clamp = (v: number, lo: number, hi: number) => Math.log(Math.min(Math.max(v, lo), hi));
  const x0 = [clamp(prior.qHorizontal, qLo, qHi), clamp(p.sigmaHorizontalM, sLo, sHi), Math.log(gm0)];
  const res = nelderMead(negLogLik, x0, { step: [0.7, 0.3, 0.2], maxEvaluations: 180, fTolerance: 1e-3, xTolerance: 5e-3 });
  return { ...p, qHorizontal: Math.exp(res.x[0]!), sigmaHorizontalM: Math.exp(res.x[1]!), gmHorizontalSigmaM: Math.exp(res.x[2]!) };
}

/** Whether the log looks static: its fixes spread (5–95% range per horizontal axis) less than six profile sigmas (as calibrate.ts decides). */
export function looksStatic(ps: PreparedSession, prior: AxisParams): boolean {
  const ext = (a: Float64Array) => {
    const v: number[] = [];
    for (let i = 0; i < a.length; i++) if (ps.offered[i] !== 0 && Number.isFinite(a[i]!)) v.push(a[i]!);
    if (v.length < 2) return 0;
    v.sort((x, y) => x - y);
    return v[Math.floor(0.95 * (v.length - 1))]! - v[Math.floor(0.05 * (v.length - 1))]!;
  };
  return Math.max(ext(ps.e), ext(ps.n)) < 6 * prior.sigmaHorizontalM;
}

/**
 * The check on a finished run r under parameters p (prior: the profile), and the remedy when it
 * finds the model too stiff: `rerun` gives the session under new parameters (classification,
 * review and smoothing again). Returns the run to keep, its parameters and the check's record.
 */
export function applyAdequacyCheck(ps: PreparedSession, cfg: HindcastConfig, p: AxisParams, prior: AxisParams, r: SessionResult, rerun: (q: AxisParams) => SessionResult): { r: SessionResult; params: AxisParams; check: AdequacyCheck } {
  const { rho } = residualAutocorrelation(r, ps.intervalSec);
  const ratio = prior.gmHorizontalSigmaM > 0 ? p.gmHorizontalSigmaM / prior.gmHorizontalSigmaM : 1;
  // the lag with the largest excess of the residuals' increment correlation over the model's
  let incLagSec = NaN, inc = NaN, incModel = NaN;
  for (const lagSec of INCREMENT_LAGS_SEC) {
    const L = Math.max(1, Math.round(lagSec / ps.intervalSec)) * ps.intervalSec;
    const o = residualIncrementCorrelation(r, ps.intervalSec, L).rho;
    const m = modelIncrementCorrelation(p, L);
    if (Number.isFinite(o) && !(o - m <= inc - incModel)) [incLagSec, inc, incModel] = [L, o, m];
  }
  const base = {
    statistic: 'residual autocorrelation' as const,
    lagSec: Math.max(1, Math.round(RESIDUAL_LAG_SEC / ps.intervalSec)) * ps.intervalSec,
    residualAutocorrelation: rho,
    correlatedSigmaRatio: ratio,
    incrementLagSec: incLagSec,
    incrementCorrelation: inc,
    modelIncrementCorrelation: incModel,
    persistenceExcess: inc - incModel,
    thresholds: { residualAutocorrelation: RHO_STIFF, correlatedSigmaRatio: SIGMA_RATIO_STIFF, persistenceExcess: PERSISTENCE_EXCESS_STIFF },
  };
  const fmt = (x: number) => x.toFixed(2);
  if (!tooStiff(rho, ratio, base.persistenceExcess))
    return {
      r,
      params: p,
      check: {
        ...base,
        outcome: 'adequate',
        message: `adequate (residual autocorrelation ${fmt(rho)} at ${base.lagSec} s, limit ${RHO_STIFF}; correlated error ${fmt(ratio)} × the profile's, limit ${SIGMA_RATIO_STIFF}; residual persistence ${fmt(base.persistenceExcess)} above the model's, limit ${PERSISTENCE_EXCESS_STIFF})`,
      },
    };
  if (looksStatic(ps, prior))
    return { r, params: p, check: { ...base, outcome: 'static log', message: `left as estimated: the track departs from the fixes in long runs (residual autocorrelation ${fmt(rho)}), but the log looks static, so the wander of the fixes is taken as their error` } };
  const q = refitHorizontalMotion(ps, cfg, p, prior, r);
  const r2 = rerun(q);
  const after = residualAutocorrelation(r2, ps.intervalSec).rho;
  return {
    r: r2,
    params: q,
    check: {
      ...base,
      outcome: 'more process noise',
      message:
        `too stiff: the track departed from the fixes in long runs (residual autocorrelation ${fmt(rho)} at ${base.lagSec} s) that kept moving like the platform (persistence ${fmt(base.persistenceExcess)} above what the fix error allows), with a correlated error ${fmt(ratio)} × the profile's; ` +
        `re-modelled with the correlated error limited to ${GM_REFIT_LIMIT} × the profile's and more process noise (q ${p.qHorizontal.toPrecision(2)} → ${q.qHorizontal.toPrecision(2)}), residual autocorrelation now ${fmt(after)}`,
      after: { residualAutocorrelation: after, qHorizontal: [p.qHorizontal, q.qHorizontal], sigmaHorizontalM: [p.sigmaHorizontalM, q.sigmaHorizontalM], gmHorizontalSigmaM: [p.gmHorizontalSigmaM, q.gmHorizontalSigmaM] },
    },
  };
}

/**
 * Correlation of adjacent increments of the kept fixes' horizontal residuals over lagSec:
 * corr(d(t+L) − d(t), d(t+2L) − d(t+L)), east and north pooled, triples within a segment. For the
 * model's fix error (first-order Gauss–Markov plus white noise) it is never positive: a Gauss–Markov
 * process's adjacent increments correlate by −(1 − e^(−L/τ))/2 and white noise's by −1/2 (both follow
 * from the autocovariance σ²e^(−|t|/τ); common practice). A residual that keeps moving the same way
 * — a turn the track does not follow — makes it positive.
 */
export function residualIncrementCorrelation(r: SessionResult, intervalSec: number, lagSec: number): { rho: number; triples: number } {
  const raw = r.rawEnu;
  if (!raw) return { rho: NaN, triples: 0 };
  const L = Math.max(1, Math.round(lagSec / intervalSec));
  const kept = (j: number) => (r.status[j] === STATUS.kept || r.status[j] === STATUS.userKept) && Number.isFinite(raw[0][j]!) && Number.isFinite(raw[1][j]!);
  let c = 0, v = 0, triples = 0;
  for (let j = 0; j + 2 * L < r.N; j++) {
    const k = j + L, m = j + 2 * L;
    if (!kept(j) || !kept(k) || !kept(m) || r.segment[j] !== r.segment[m]) continue;
    for (let a = 0; a < 2; a++) {
      const d0 = raw[a]![j]! - r.posEnu[a]![j]!, d1 = raw[a]![k]! - r.posEnu[a]![k]!, d2 = raw[a]![m]! - r.posEnu[a]![m]!;
      const x = d1 - d0, y = d2 - d1;
      c += x * y;
      v += 0.5 * (x * x + y * y);
    }
    triples++;
  }
  return { rho: triples >= 10 && v > 0 ? c / v : NaN, triples };
}

/**
 * The adjacent-increment correlation over lagSec that the model's own fix error predicts for
 * residuals that are that error (white sigma σw, Gauss–Markov sigma σg and time constant τ):
 * with g = 1 − e^(−L/τ), increments have variance 2σg²g + 2σw² and adjacent ones covariance
 * −σg²g² − σw², so ρ = −(σg²g² + σw²) / (2σg²g + 2σw²) (from the autocovariance; common practice).
 */
export function modelIncrementCorrelation(p: AxisParams, lagSec: number): number {
  const g = 1 - Math.exp(-lagSec / p.gmTauSec);
  const sg2 = p.gmHorizontalSigmaM ** 2, sw2 = p.sigmaHorizontalM ** 2;
  return -(sg2 * g * g + sw2) / (2 * sg2 * g + 2 * sw2);
}
