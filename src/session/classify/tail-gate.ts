/**
 * The gate's threshold fitted to the tails of the log's own fix errors. The gate and the review
 * test each fix's statistic T (χ²(dof) under the Gaussian model) at the configured probability p,
 * so that a clean fix fails with probability 1 − p. Receivers' white errors are often
 * heavier-tailed than Gaussian (Student-t-like): then the same threshold rejects clean fixes many
 * times more often than 1 − p (measured on the scenario family: 13–43 × nominal on logs with
 * Student t errors of 6–3 degrees of freedom, 2 × on Gaussian ones).
 *
 * The fit, after the classification under the calibrated model:
 * 1. each gated fix's statistic as the equivalent one-degree-of-freedom deviate
 *    g = √(χ²₁ quantile of F_χ²(T; dof)) (a fix at the configured threshold maps to the same g
 *    whatever its dof);
 * 2. the empirical quantiles of g at 0.75 and 0.95 (the bulk: a few per cent of outliers hardly
 *    move them), and the shape β of the exponential-power family (Box & Tiao, "Bayesian Inference
 *    in Statistical Analysis", 1973, §3.2.1; β = 2 Gaussian, β = 1 Laplace) whose |X| has the same
 *    ratio of those quantiles: with |X/c|^β ~ Gamma(1/β), the p-quantile of |X| is
 *    c · (G⁻¹_{1/β}(p))^{1/β} = c · (χ²_{2/β}(p)/2)^{1/β};
 * 3. that family's (1 − nominal)-quantile, scaled through the 0.75 quantile, as the threshold
 *    deviate g✱, and the thresholds multiplied by λ = (g✱ ÷ g₀)² (g₀ the Gaussian one), held to
 *    [1, MAX_FACTOR]: a gate is never narrowed below the configured one, and a fix beyond √2 × the
 *    Gaussian threshold's deviate stays an outlier whatever the tails; only shapes clearly below
 *    the Gaussian's (HEAVY_SHAPE) and inside the search range widen it.
 * The classification is then run again with the gate probability that gives those thresholds.
 * This is the idea of an empirical null distribution for many simultaneous tests (Efron,
 * "Large-scale simultaneous hypothesis testing: the choice of a null hypothesis", JASA 99:96–104,
 * 2004), fitted here to the shape of the tail instead of a location and scale.
 */
import { chiSquareCdf, chiSquareQuantile } from '../../estimation/chi-square.js';
import { reviewThresholds } from './review-decisions.js';

/**
 * At most this factor on the χ² thresholds (the deviate's threshold at most √2 × the Gaussian one,
 * 4.9 sd at the default 0.9995). Measured on the scenario family with jump outliers only (seed 1):
 * a cap of 4 took outlier recall from 0.997 to 0.929 (drone and degraded logs), 2 to 0.988.
 */
export const MAX_FACTOR = 2;
/**
 * Shapes below this count as heavy tails. On logs with Gaussian white noise the statistic's bulk
 * reads shapes of 1.3–2 (the calibrated model is not the simulated one: quality weights, correlated
 * error); Student t logs of 3–6 degrees of freedom read 0.6–1.3 (scenario family, seeds 1–2).
 */
export const HEAVY_SHAPE = 1.2;
/**
 * Widen only where fewer than this share of the top-5 % statistics follow another (independent
 * errors: 0.05). Measured on the scenario family (seeds 1–2): logs with Gaussian white noise whose
 * bulk reads heavy (model misfit) 0.37–0.72, all but one above 0.4; Student t and contaminated logs
 * 0.04–0.5, most below 0.4; on the fixed vehicle scenario of seed 3 (Gaussian, misfit) 0.46.
 */
export const MAX_CLUSTERING = 0.4;
/** The search's lower bound of the shape: a fit there means no unimodal tail describes the bulk. */
export const MIN_SHAPE = 0.5;
/** Fewest gated fixes for a fit. */
export const MIN_FIXES = 400;
/** Gated fixes read at most (evenly spread; the quantiles need no more). */
const MAX_SAMPLE = 5000;
/** Quantiles of the bulk that fix the shape. */
const P_LO = 0.75;
const P_HI = 0.95;

export interface TailGate {
  /** Gated fixes the fit read. */
  fixes: number;
  /** Empirical ratio of the deviate's 0.95 and 0.75 quantiles (Gaussian: 1.704). */
  quantileRatio: number;
  /** Of the gated fixes in the top 5 % whose previous gated fix is too, the share (independent errors: 0.05). */
  clustering: number;
  /** Exponential-power shape (2: Gaussian tails, nothing changed). */
  shape: number;
  /** Factor applied to the χ² thresholds (1: the configured gate). */
  factor: number;
  /** The gate probability the classification used (the configured one where factor is 1). */
  probability: number;
}

/** p-quantile of |X| for the exponential-power family of shape β at unit c. */
function powerQuantile(p: number, beta: number): number {
  return Math.pow(chiSquareQuantile(p, 2 / beta) / 2, 1 / beta);
}

/** The shape β in [0.5, 2] whose quantile ratio matches `ratio` (2 at or below the Gaussian ratio). */
export function shapeForRatio(ratio: number): number {
  const f = (b: number) => powerQuantile(P_HI, b) / powerQuantile(P_LO, b);
  if (!(ratio > f(2))) return 2;
  let lo = MIN_SHAPE, hi = 2;
  if (ratio >= f(lo)) return lo;
  // f decreases in β: bisection
  for (let i = 0; i < 50; i++) {
    const mid = 0.5 * (lo + hi);
    if (f(mid) > ratio) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

/**
 * The χ² threshold factor for a shape β, at the configured probability: g✱ = qLo · Q_β(probability)/
 * Q_β(P_LO) against the Gaussian g₀, with qLo the Gaussian's P_LO-quantile (the calibration sets the
 * scale; only the shape of the tail is taken from the fit).
 */
export function thresholdFactor(beta: number, qLo: number, probability: number): number {
  const g0 = Math.sqrt(chiSquareQuantile(probability, 1));
  const gStar = qLo * (powerQuantile(probability, beta) / powerQuantile(P_LO, beta));
  return Math.min(MAX_FACTOR, Math.max(1, (gStar / g0) ** 2));
}

/**
 * The tail fit from the review statistics of the classification (T, dof per epoch of each segment,
 * offered[k] === 1 the gated fixes). null where too few fixes.
 */
export function fitTailGate(stats: Array<{ T: Float64Array; dof: Uint8Array; offered: Uint8Array }>, probability: number): TailGate | null {
  let n = 0;
  for (const s of stats) for (let k = 0; k < s.T.length; k++) if (s.offered[k] === 1 && s.dof[k]! > 0 && Number.isFinite(s.T[k]!)) n++;
  if (n < MIN_FIXES) return null;
  const step = Math.max(1, Math.floor(n / MAX_SAMPLE));
  const g: number[] = [];
  let i = 0;
  for (const s of stats)
    for (let k = 0; k < s.T.length; k++) {
      if (!(s.offered[k] === 1 && s.dof[k]! > 0 && Number.isFinite(s.T[k]!))) continue;
      if (i++ % step !== 0) continue;
      const c = chiSquareCdf(s.T[k]!, s.dof[k]!);
      // beyond the 1 − 1e-12 level the exact value does not matter (only the bulk's quantiles are read)
      g.push(c >= 1 - 1e-12 ? 7.1 : Math.sqrt(chiSquareQuantile(c, 1)));
    }
  g.sort((a, b) => a - b);
  const q = (p: number) => g[Math.min(g.length - 1, Math.floor(p * g.length))]!;
  const quantileRatio = q(P_HI) / q(P_LO);
  // clustering: of the fixes in the top (1 − P_HI) whose previous gated fix is too, the share (iid: 1 − P_HI)
  const cHi = chiSquareCdf(q(P_HI) ** 2, 1);
  const tHi = reviewThresholds(cHi).reject;
  let prevHigh = 0, both = 0;
  for (const s of stats) {
    let prev = false, has = false;
    for (let k = 0; k < s.T.length; k++) {
      if (!(s.offered[k] === 1 && s.dof[k]! > 0 && Number.isFinite(s.T[k]!))) continue;
      const high = s.T[k]! > tHi[s.dof[k]!]!;
      if (has && prev) {
        prevHigh++;
        if (high) both++;
      }
      prev = high;
      has = true;
    }
  }
  const clustering = prevHigh ? both / prevHigh : 0;
  const shape = shapeForRatio(quantileRatio);
  // heavy tails only where the shape is clearly below the Gaussian's and inside the family's range
  // (at its 0.5 bound the bulk itself is outside what one noise level describes: a degraded log)
  // and only where the large statistics are isolated, as independent heavy-tailed errors make them:
  // runs of them are model misfit (a manoeuvre, a followed burst), which a wider gate would let in
  const factor = shape > MIN_SHAPE && shape < HEAVY_SHAPE && clustering < MAX_CLUSTERING ? thresholdFactor(shape, Math.sqrt(chiSquareQuantile(P_LO, 1)), probability) : 1;
  const p3 = factor > 1 ? chiSquareCdf(factor * chiSquareQuantile(probability, 3), 3) : probability;
  return { fixes: g.length, quantileRatio, clustering, shape, factor, probability: Math.min(p3, 1 - 1e-9) };
}

