/**
 * The excursion test of the review: a run of fixes that leaves the track and comes back to it.
 *
 * Why. A multipath burst whose offset grows over seconds (a ramp) passes every one-fix test: each
 * fix is within the gate of a prediction that follows the one before, and at 5–20 Hz, or under a
 * vehicle's process noise, the track follows the whole run; the review then finds every fix close to
 * a track that went along. What gives it away is that the motion before and after the run agree:
 * the receiver went on as if the run had not happened, while the run's fixes lie far from where
 * that motion puts them. A manoeuvre does not come back: after a turn or a stop the track is not
 * where the track before it was heading.
 *
 * The test, for windows W = (t_a, t_a + L] after a kept fix a (L in WINDOW_SEC, starts every
 * START_STEP_SEC) with b the first kept fix after W, under the review's converged decisions:
 * - the forward filter's state at a (it has read fixes up to a only) and the time-reversed filter's
 *   at b (fixes from b on) are predicted into W (x = F x, P = F P Fᵀ + Q; the reversed filter's
 *   velocity turned back) and combined as independent estimates, P = (P_f⁻¹ + P_b⁻¹)⁻¹,
 *   x = P (P_f⁻¹ x_f + P_b⁻¹ x_b): the two-filter form of the smoother (Fraser & Potter, "The
 *   optimum linear smoother as a combination of two optimum linear filters", IEEE TAC 14:387–390,
 *   1969), here a bridge across W that reads none of W's fixes;
 * - the span from a to b has no outage longer than maxGapSec (an outage leaves one side's
 *   prediction so loose that the bridge is the other side's alone, and a stop or turn inside the
 *   outage would read as an excursion);
 * - agreement, judged under the quiet motion (the process noise of the log's motion without its
 *   manoeuvres, classification-start.ts; both sides filtered again with it): at a departing fix of
 *   W (one of its kept fixes at a quarter, half or three quarters), d² = (x_f − x_b)ᵀ (P_f + P_b)⁻¹
 *   (x_f − x_b) over the kinematic states of every axis within the χ² quantile at AGREE_P, and the
 *   ends cross-checked: a's fix within that quantile of the reversed prediction from b, b's of the
 *   forward prediction from a (a window that starts or ends inside a burst fails). Under the
 *   calibrated process noise, which has to allow the log's sharpest turns, a U-turn or a stop
 *   across 10 s still "agrees"; under the quiet one it does not;
 * - departure, judged under the calibrated model: a fix departs where T = Σ (z − H x)² /
 *   (R + H P Hᵀ) against the bridge exceeds the gate's χ² threshold; at least MIN_FAILING of W's
 *   kept fixes and MIN_SHARE of them must depart (from SAMPLE_FIXES of them, evenly spread, before
 *   the window is chosen). Against the combined bridge alone where the agreement was judged under
 *   the quiet motion: a ramp's rising fixes lie near a and far in time from b, where b's own
 *   prediction is too loose to reject anything. Where there is no quiet motion (a constant-
 *   acceleration model, a calibration that fell back) the agreement is only as strict as the
 *   model, and a fix must depart from each side's own prediction as well.
 * Windows are taken from the one whose fixes depart most, none overlapping one taken; their
 * departing fixes are rejected and held out (local-noise-scale.ts withExcursions), so that the
 * review's re-admission cannot walk the track back up the ramp one fix at a time.
 * Measured on the scenario family: docs/outliers.md "Excursion test";
 * docs/decisions/windowed-nis-gate.md has the variants dropped.
 */
import { makeAxisModel, type AxisModel } from '../../models/axis-model.js';
import { forwardFilter, allocateHistory, horizontalShare, type FilterOptions, type SegmentData, type FilterHistory } from '../../estimation/track-filter.js';
import { covIndex } from '../../estimation/segment.js';
import { cholesky, choleskySolve } from '../../estimation/cholesky.js';
import { chiSquareQuantile } from '../../estimation/chi-square.js';
import { reviewThresholds } from './review-decisions.js';
import { reversed } from './review.js';
export { HELD_OUT } from './review.js';
import { gmPhi, gmQ } from '../../models/gauss-markov.js';

/** Window lengths (s): a ramp rises over 2–8 s, holds up to 2 s and fades over up to 5 s. */
export const WINDOW_SEC = [2, 4, 7, 11, 16];
/** Fewest departing fixes of a window. */
export const MIN_FAILING = 2;
/**
 * Probability of the agreement test (χ² over the kinematic states of every axis). Stricter than
 * the gate: a motion that changed across the window (a stop between the two sides) reads d² at the
 * 0.9–0.99 level; on the scenario family 0.99 let such stops through (smartLoc drives: precision
 * 0.90 → 0.83), 0.9 did not, with the same recall.
 */
export const AGREE_P = 0.9;
/**
 * Least share of the window's kept fixes that depart. A ramp's first seconds are within the noise
 * (its offset grows from zero) and a long window holds clean fixes after it; the departing ones are
 * what is rejected. Measured on the scenario family, seed 1: shares of 0.5 / 0.25 / 0.1 gave RMSE
 * ratios 0.970 / 0.959 / 0.951 with the same precision.
 */
export const MIN_SHARE = 0.1;
/** Fixes of a window tested before it is chosen (evenly spread; all of a shorter window). */
const SAMPLE_FIXES = 24;
/** Window starts at most this far apart (s). */
const START_STEP_SEC = 0.5;

export interface Excursion {
  /** The fixes rejected: epoch, T against the bridge, its threshold and dof. */
  fixes: Array<{ k: number; T: number; threshold: number; dof: number }>;
  /** Agreement d² of the two predictions at the window's tested fix, and the probability of its χ² threshold. */
  agreement: number;
  agreementProbability: number;
}

/** What the test needs of the log beyond the model (ReviewOptions excursionQHorizontal, excursionMaxGapSec). */
export interface QuietMotion {
  /** Horizontal process noise of the agreement's bridge (m²/s³); the model's own where unset or not lower. */
  qHorizontal?: number;
  /** Longest span without a fix a bridge may cross (s); unbounded where unset. */
  maxGapSec?: number;
}

/** Scratch for one axis prediction. */
export interface Work {
  F: Float64Array;
  Q: Float64Array;
  P: Float64Array;
  FP: Float64Array;
  x: Float64Array;
  /** A predicted state and covariance (predictMeasuredGeneric's). */
  xo: Float64Array;
  Po: Float64Array;
}

export function makeWork(n: number): Work {
  return { F: new Float64Array(n * n), Q: new Float64Array(n * n), P: new Float64Array(n * n), FP: new Float64Array(n * n), x: new Float64Array(n), xo: new Float64Array(n), Po: new Float64Array(n * n) };
}

/**
 * H x and H P Hᵀ of the history's state at epoch k predicted over dtSec (x = F x, P = F P Fᵀ + Q):
 * the closed form for the constant-velocity model, the matrix products for any other.
 */
export function predictMeasured(model: AxisModel, h: FilterHistory, a: number, k: number, dtSec: number, w: Work, out: Float64Array, o: number): void {
  if (model.params.motion === 'cv') {
    // closed form for the constant-velocity model (x = [p, v, (b)], H = [1, 0, (1)]): the row
    // g = H F = [1, Δt, (φ)], m = g x, v = g P gᵀ + q Δt³/3 (+ σ_b²(1 − φ²))
    const n = model.n, xs = h.x[a]!, Ps = h.P[a]!, dt = dtSec;
    const xo = k * n, po = k * (n === 3 ? 6 : n * n);
    const gm = model.params.gm;
    const hasB = model.iBias >= 0;
    const phi = hasB ? gmPhi(dt, gm!.tauSec) : 0;
    let m = xs[xo]! + dt * xs[xo + 1]!;
    let v: number;
    if (n === 3 && hasB) {
      // P packed [p00, p01, p02, p11, p12, p22]
      const p00 = Ps[po]!, p01 = Ps[po + 1]!, p02 = Ps[po + 2]!, p11 = Ps[po + 3]!, p12 = Ps[po + 4]!, p22 = Ps[po + 5]!;
      m += phi * xs[xo + 2]!;
      v = p00 + dt * dt * p11 + phi * phi * p22 + 2 * (dt * p01 + phi * p02 + dt * phi * p12) + gmQ(dt, gm!);
    } else if (n === 2) {
      const p00 = Ps[po]!, p01 = Ps[po + 1]!, p11 = Ps[po + 3]!;
      v = p00 + 2 * dt * p01 + dt * dt * p11;
    } else v = NaN;
    if (Number.isFinite(v)) {
      out[o] = m;
      out[o + 1] = v + (model.params.q * dt * dt * dt) / 3;
      return;
    }
  }
  predictMeasuredGeneric(model, h, a, k, dtSec, w, out, o);
}

/** predictMeasured by the matrix products F P Fᵀ + Q (predictState; any model; the reference of the closed form). */
export function predictMeasuredGeneric(model: AxisModel, h: FilterHistory, a: number, k: number, dtSec: number, w: Work, out: Float64Array, o: number): void {
  const n = model.n, hv = model.h;
  predictState(model, h, a, k, dtSec, false, w, w.xo, w.Po);
  // m = H x, v = H P Hᵀ
  let m = 0, v = 0;
  for (let i = 0; i < n; i++) {
    if (hv[i] === 0) continue;
    m += hv[i]! * w.xo[i]!;
    for (let j = 0; j < n; j++) if (hv[j] !== 0) v += hv[i]! * hv[j]! * w.Po[i * n + j]!;
  }
  out[o] = m;
  out[o + 1] = v;
}

/** The full state of the history at epoch k predicted over dtSec into x (n) and P (n×n); flip turns the velocity's sign (the reversed filter's). */
function predictState(model: AxisModel, h: FilterHistory, a: number, k: number, dtSec: number, flip: boolean, w: Work, x: Float64Array, P: Float64Array): void {
  const n = model.n;
  const xs = h.x[a]!, Ps = h.P[a]!;
  const stride = n === 3 ? 6 : n * n;
  for (let i = 0; i < n; i++) {
    w.x[i] = xs[k * n + i]!;
    for (let j = 0; j < n; j++) w.P[i * n + j] = Ps[k * stride + covIndex(n, i, j)]!;
  }
  model.fillF(dtSec, w.F);
  model.fillQ(dtSec, w.Q);
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let l = 0; l < n; l++) s += w.F[i * n + l]! * w.P[l * n + j]!;
      w.FP[i * n + j] = s;
    }
  for (let i = 0; i < n; i++) {
    let fx = 0;
    for (let l = 0; l < n; l++) fx += w.F[i * n + l]! * w.x[l]!;
    x[i] = fx;
    for (let j = 0; j < n; j++) {
      let s = w.Q[i * n + j]!;
      for (let l = 0; l < n; l++) s += w.FP[i * n + l]! * w.F[j * n + l]!;
      P[i * n + j] = s;
    }
  }
  if (flip) {
    // velocity (index 1) of the time-reversed filter: v = −v_reversed
    x[1] = -x[1]!;
    for (let j = 0; j < n; j++) if (j !== 1) {
      P[1 * n + j] = -P[1 * n + j]!;
      P[j * n + 1] = -P[j * n + 1]!;
    }
  }
}

/** A⁻¹ of a symmetric positive-definite n×n matrix by its Cholesky factor (estimation/cholesky.ts) into out; false where A is not positive definite. */
function invertSpd(n: number, A: Float64Array, out: Float64Array, L: Float64Array): boolean {
  if (!cholesky(n, A, 0, L)) return false;
  out.fill(0, 0, n * n);
  for (let i = 0; i < n; i++) out[i * n + i] = 1;
  choleskySolve(n, L, out, n);
  return true;
}

/** Per-axis scratch of the bridge: the two predicted states, their inverses, the combination, a Cholesky factor. */
class BridgeScratch {
  xf: Float64Array; Pf: Float64Array; xb: Float64Array; Pb: Float64Array;
  If: Float64Array; Ib: Float64Array; S: Float64Array; Si: Float64Array; Pc: Float64Array;
  L: Float64Array; y: Float64Array; xc: Float64Array;
  constructor(n: number) {
    const v = () => new Float64Array(n), m = () => new Float64Array(n * n);
    this.xf = v(); this.Pf = m(); this.xb = v(); this.Pb = m();
    this.If = m(); this.Ib = m(); this.S = m(); this.Si = m(); this.Pc = m();
    this.L = m(); this.y = v(); this.xc = v();
  }
}

/**
 * The bridge across a window between kept epochs a and b of one segment, and the tests against it
 * (see the file header). Holds the forward history, the reversed filter's and the scratch.
 */
class Bridge {
  private readonly nAx: number;
  private readonly t: Float64Array;
  private readonly ws: Work[];
  private readonly sc: BridgeScratch;
  /** Per axis at the current epoch: each side's and the combined prediction of the measured quantity, and the kinematic disagreement d². */
  private readonly mF: Float64Array; private readonly vF: Float64Array; private readonly mB: Float64Array; private readonly vB: Float64Array;
  private readonly mC: Float64Array; private readonly vC: Float64Array; private readonly dA: Float64Array;
  private dofA = 0;
  private readonly one = new Float64Array(2);
  private readonly agreeThr = new Map<number, number>();
  /** χ² thresholds per dof at the gate probability and at AGREE_P. */
  readonly thr: number[];
  private readonly thrAgree: number[];

  constructor(private readonly models: AxisModel[], private readonly work: SegmentData, private readonly forward: FilterHistory, private readonly opt: FilterOptions, probability: number) {
    this.nAx = models.length;
    this.t = work.tSec;
    this.ws = models.map((m) => makeWork(m.n));
    this.sc = new BridgeScratch(Math.max(...models.map((m) => m.n)));
    const z = () => new Float64Array(this.nAx);
    this.mF = z(); this.vF = z(); this.mB = z(); this.vB = z(); this.mC = z(); this.vC = z(); this.dA = z();
    this.thr = reviewThresholds(probability).reject;
    this.thrAgree = reviewThresholds(AGREE_P).reject;
  }

  private backHist: FilterHistory | null = null;
  /** The time-reversed filter under the same decisions (its gate cannot reject: every use is 2 or 0), run when first needed. */
  private get back(): FilterHistory {
    if (!this.backHist) {
      const rv = reversed(this.work);
      // east and north share one covariance array where their inputs are alike (as the review's histories do: ~48 MB less at 1M epochs)
      const share = horizontalShare(this.models, rv, this.opt.rScale, this.opt.qScale);
      this.backHist = forwardFilter(this.models, rv, this.opt, allocateHistory(this.work.N, this.models, share));
    }
    return this.backHist;
  }

  /** The reversed history's index of epoch b. */
  private rb(b: number): number {
    return this.work.N - 1 - b;
  }

  /**
   * The bridge at epoch k: the two predicted states combined as independent estimates,
   * P = (P_f⁻¹ + P_b⁻¹)⁻¹, x = P (P_f⁻¹ x_f + P_b⁻¹ x_b); false where a covariance is singular.
   */
  at(a: number, b: number, k: number): boolean {
    const { sc, t } = this;
    this.dofA = 0;
    for (let ax = 0; ax < this.nAx; ax++) {
      const md = this.models[ax]!, n = md.n, h = md.h;
      predictState(md, this.forward, ax, a, t[k]! - t[a]!, false, this.ws[ax]!, sc.xf, sc.Pf);
      predictState(md, this.back, ax, this.rb(b), t[b]! - t[k]!, true, this.ws[ax]!, sc.xb, sc.Pb);
      // information form: invert each side, add, invert back (Cholesky: the covariances are positive definite, and a lost one fails loudly)
      if (!invertSpd(n, sc.Pf, sc.If, sc.L) || !invertSpd(n, sc.Pb, sc.Ib, sc.L)) return false;
      for (let i = 0; i < n * n; i++) sc.S[i] = sc.If[i]! + sc.Ib[i]!;
      if (!invertSpd(n, sc.S, sc.Pc, sc.L)) return false;
      for (let i = 0; i < n; i++) {
        let s1 = 0;
        for (let j = 0; j < n; j++) s1 += sc.If[i * n + j]! * sc.xf[j]! + sc.Ib[i * n + j]! * sc.xb[j]!;
        sc.y[i] = s1;
      }
      for (let i = 0; i < n; i++) {
        let s1 = 0;
        for (let j = 0; j < n; j++) s1 += sc.Pc[i * n + j]! * sc.y[j]!;
        sc.xc[i] = s1;
      }
      // H x and H P Hᵀ of the combined state and of each side's
      let m = 0, v = 0, m1 = 0, v1 = 0, m2 = 0, v2 = 0;
      for (let i = 0; i < n; i++) {
        if (h[i] === 0) continue;
        m += h[i]! * sc.xc[i]!;
        m1 += h[i]! * sc.xf[i]!;
        m2 += h[i]! * sc.xb[i]!;
        for (let j = 0; j < n; j++) {
          if (h[j] === 0) continue;
          v += h[i]! * h[j]! * sc.Pc[i * n + j]!;
          v1 += h[i]! * h[j]! * sc.Pf[i * n + j]!;
          v2 += h[i]! * h[j]! * sc.Pb[i * n + j]!;
        }
      }
      this.mC[ax] = m; this.vC[ax] = v; this.mF[ax] = m1; this.vF[ax] = v1; this.mB[ax] = m2; this.vB[ax] = v2;
      // d² = (x_f − x_b)ᵀ (P_f + P_b)⁻¹ (x_f − x_b) over the kinematic states (the fix-error state is not separable from position)
      const nk = md.nMotion;
      for (let i = 0; i < nk; i++) for (let j = 0; j < nk; j++) sc.S[i * nk + j] = sc.Pf[i * n + j]! + sc.Pb[i * n + j]!;
      if (!invertSpd(nk, sc.S, sc.Si, sc.L)) return false;
      let d2 = 0;
      for (let i = 0; i < nk; i++) for (let j = 0; j < nk; j++) d2 += (sc.xf[i]! - sc.xb[i]!) * sc.Si[i * nk + j]! * (sc.xf[j]! - sc.xb[j]!);
      this.dA[ax] = d2;
      this.dofA += nk;
    }
    return true;
  }

  /**
   * Judge departures against the combined bridge alone (set where the agreement is judged under the
   * quiet motion); otherwise against the least of it and each side's own prediction.
   */
  combinedOnly = false;

  /** T of fix k against the bridge last computed: T = Σ (z − H x)² / (R + H P Hᵀ) over its measured axes (see combinedOnly). */
  departure(k: number): { T: number; dof: number } {
    let T = 0, Tf = 0, Tb = 0, dof = 0;
    for (let ax = 0; ax < this.nAx; ax++) {
      const z = this.work.z[ax]![k]!;
      if (!Number.isFinite(z)) continue;
      const r = this.work.r[ax]![k]!;
      T += (z - this.mC[ax]!) ** 2 / (r + this.vC[ax]!);
      Tf += (z - this.mF[ax]!) ** 2 / (r + this.vF[ax]!);
      Tb += (z - this.mB[ax]!) ** 2 / (r + this.vB[ax]!);
      dof++;
    }
    return { T: this.combinedOnly ? T : Math.min(T, Tf, Tb), dof };
  }

  /** Whether fix k departs from the bridge at it (computing it). */
  departs(a: number, b: number, k: number): { T: number; dof: number } | null {
    if (!this.at(a, b, k)) return null;
    const d = this.departure(k);
    return d.dof > 0 && d.T > this.thr[d.dof]! ? d : null;
  }

  /** T of fix k against one side's prediction alone (forward from a, or reversed from b). */
  private oneSided(fromForward: boolean, a: number, b: number, k: number): { T: number; dof: number } {
    const { t, one } = this;
    let T = 0, dof = 0;
    for (let ax = 0; ax < this.nAx; ax++) {
      const z = this.work.z[ax]![k]!;
      if (!Number.isFinite(z)) continue;
      if (fromForward) predictMeasured(this.models[ax]!, this.forward, ax, a, t[k]! - t[a]!, this.ws[ax]!, one, 0);
      else predictMeasured(this.models[ax]!, this.back, ax, this.rb(b), t[b]! - t[k]!, this.ws[ax]!, one, 0);
      T += (z - one[0]!) ** 2 / (this.work.r[ax]![k]! + one[1]!);
      dof++;
    }
    return { T, dof };
  }

  /** The ends cross-checked at AGREE_P: a's fix against the reversed prediction from b, b's against the forward prediction from a. */
  endsAgree(a: number, b: number): boolean {
    const ea = this.oneSided(false, a, b, a), eb = this.oneSided(true, a, b, b);
    return !(ea.dof > 0 && ea.T > this.thrAgree[ea.dof]!) && !(eb.dof > 0 && eb.T > this.thrAgree[eb.dof]!);
  }

  /** The kinematic disagreement d² of the bridge last computed, and its threshold at AGREE_P. */
  agreement(): { d2: number; thr: number } {
    let d2 = 0;
    for (let ax = 0; ax < this.nAx; ax++) d2 += this.dA[ax]!;
    let thrA = this.agreeThr.get(this.dofA);
    if (thrA === undefined) this.agreeThr.set(this.dofA, (thrA = chiSquareQuantile(AGREE_P, this.dofA)));
    return { d2, thr: thrA };
  }
}

/** A window that passed the tests: after kept a, its epochs up to end (exclusive), b the kept epoch after it. */
interface Candidate {
  from: number;
  to: number;
  end: number;
  /** Estimated number of departing fixes. */
  estimate: number;
  d2: number;
}

/** The window after kept a of length L tested (see the file header); null where it is not an excursion. */
function testWindow(br: Bridge, bq: Bridge, work: SegmentData, gated: Uint8Array, nextKept: Int32Array, keptBefore: Int32Array, outagesBefore: Int32Array, a: number, e: number): Candidate | null {
  const N = work.N;
  const kept = (k: number) => work.use[k] === 2 && gated[k] === 1;
  const b = nextKept[e]!;
  if (b >= N || e - a < 2) return null;
  // no outage across the bridge (one ending after a, up to b)
  if (outagesBefore[b + 1]! - outagesBefore[a + 1]! > 0) return null;
  // the gated fixes of W that are kept now (the ones the test may take out)
  const nW = keptBefore[e]! - keptBefore[a + 1]!;
  if (nW < MIN_FAILING) return null;
  // prefilter: one of W's kept fixes at a quarter, half or three quarters departs (a ramp's high part
  // is often rejected already, so its kept fixes are the rising ones)
  let mid = -1, c = 0, q = 1;
  for (let k = a + 1; k < e && q < 4; k++) {
    if (!kept(k) || ++c < Math.ceil((q * nW) / 4)) continue;
    q++;
    if (br.departs(a, b, k)) {
      mid = k;
      break;
    }
  }
  if (mid < 0) return null;
  // no manoeuvre across W under the quiet motion: the two sides agree at that fix, and at the ends
  if (bq !== br && !bq.at(a, b, mid)) return null;
  const ag = bq.agreement();
  if (!(ag.d2 <= ag.thr) || !bq.endsAgree(a, b)) return null;
  // the share of W's fixes that depart, from at most SAMPLE_FIXES of them evenly spread (exact for short windows)
  const stride = Math.max(1, Math.floor(nW / SAMPLE_FIXES));
  let seen = 0, failed = 0, i = 0;
  for (let k = a + 1; k < e; k++) {
    if (!kept(k) || i++ % stride !== 0) continue;
    seen++;
    if (br.departs(a, b, k)) failed++;
  }
  const estimate = seen ? (failed / seen) * nW : 0;
  return failed >= Math.min(MIN_FAILING, seen) && estimate >= MIN_FAILING && failed >= MIN_SHARE * seen ? { from: a, to: b, end: e, estimate, d2: ag.d2 } : null;
}

/**
 * The excursions of a segment under the review's converged decisions. `work` holds them in `use`
 * (2 kept, 0 not); `forward` is the forward filter's history under them; gated marks the fixes the
 * review judges (offered === 1). Returns the excursions found, their fixes not yet changed.
 */
export function findExcursions(models: AxisModel[], work: SegmentData, forward: FilterHistory, gated: Uint8Array, opt: FilterOptions, probability: number, quiet: QuietMotion = {}): Excursion[] {
  const N = work.N, t = work.tSec;
  const br = new Bridge(models, work, forward, opt, probability);
  // the agreement's bridge: both sides filtered again under the quiet motion's process noise (the model's own where that is not lower)
  let bq = br;
  const qq = quiet.qHorizontal;
  // (a constant-velocity q: the classification start's; a model re-made as constant acceleration keeps its own)
  if (qq !== undefined && qq >= 0 && models[0]!.params.motion === 'cv') {
    if (qq < models[0]!.params.q) {
      const qh = makeAxisModel({ ...models[0]!.params, q: qq });
      const qm = [qh, qh, ...models.slice(2)];
      bq = new Bridge(qm, work, forwardFilter(qm, work, opt, allocateHistory(N, qm, horizontalShare(qm, work, opt.rScale, opt.qScale))), opt, probability);
    }
    // an agreement as strict as the quiet motion's lets the departure be judged against the combined bridge
    br.combinedOnly = true;
  }
  // outages: per epoch, how many spans of more than maxGapSec without a fix end before it
  const maxGap = quiet.maxGapSec ?? Infinity;
  const outagesBefore = new Int32Array(N + 1);
  let lastFixT = NaN;
  for (let k = 0; k < N; k++) {
    const fix = Number.isFinite(work.z[0]![k]!);
    outagesBefore[k + 1] = outagesBefore[k]! + (fix && t[k]! - lastFixT > maxGap ? 1 : 0);
    if (fix) lastFixT = t[k]!;
  }
  // the next kept epoch after each epoch (N: none), and the kept gated fixes before each epoch
  const nextKept = new Int32Array(N + 1).fill(N);
  for (let k = N - 1; k >= 0; k--) nextKept[k] = work.use[k] === 2 ? k : nextKept[k + 1]!;
  const keptBefore = new Int32Array(N + 1);
  for (let k = 0; k < N; k++) keptBefore[k + 1] = keptBefore[k]! + (work.use[k] === 2 && gated[k] === 1 ? 1 : 0);
  const found: Candidate[] = [];
  // per window length, the end of the window (the first epoch after t_a + L), moving on with a
  const ends = new Int32Array(WINDOW_SEC.length);
  let lastStartT = -Infinity;
  for (let a = 0; a < N; a++) {
    if (work.use[a] !== 2 || t[a]! - lastStartT < START_STEP_SEC) continue;
    lastStartT = t[a]!;
    for (let li = 0; li < WINDOW_SEC.length; li++) {
      let e = Math.max(ends[li]!, a + 1);
      while (e < N && t[e]! <= t[a]! + WINDOW_SEC[li]!) e++;
      ends[li] = e;
      const c = testWindow(br, bq, work, gated, nextKept, keptBefore, outagesBefore, a, e);
      if (c) found.push(c);
    }
  }
  // the windows that depart most first; none overlapping a window taken; their departing fixes listed
  found.sort((p, q) => q.estimate - p.estimate || p.from - q.from);
  const taken: Array<[number, number]> = [];
  const out: Excursion[] = [];
  for (const f of found) {
    if (taken.some(([p, q]) => f.from < q && p < f.to)) continue;
    const fixes: Excursion['fixes'] = [];
    for (let k = f.from + 1; k < f.end; k++) {
      if (work.use[k] !== 2 || gated[k] !== 1) continue;
      const d = br.departs(f.from, f.to, k);
      if (d) fixes.push({ k, T: d.T, threshold: br.thr[d.dof]!, dof: d.dof });
    }
    if (fixes.length < MIN_FAILING) continue;
    taken.push([f.from, f.to]);
    out.push({ fixes, agreement: f.d2, agreementProbability: AGREE_P });
  }
  return out;
}
