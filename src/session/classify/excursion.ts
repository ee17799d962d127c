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
 * - agreement: at W's middle kept fix, d² = (x_f − x_b)ᵀ (P_f + P_b)⁻¹ (x_f − x_b) over the
 *   kinematic states of every axis within the χ² quantile at AGREE_P (no manoeuvre across W), and
 *   the ends cross-checked: a's fix within the gate of the reversed prediction from b, b's within
 *   that of the forward prediction from a (a window that starts or ends inside a burst fails);
 * - departure: a fix departs where T = Σ (z − H x)² / (R + H P Hᵀ) exceeds the gate's χ² threshold
 *   against the bridge and against each side's own prediction; at least MIN_FAILING of W's kept
 *   fixes and MIN_SHARE of them must depart (from SAMPLE_FIXES of them, evenly spread, before the
 *   window is chosen).
 * Windows are taken from the one whose fixes depart most, none overlapping one taken; their
 * departing fixes are rejected and held out (local-noise-scale.ts withExcursions), so that the
 * review's re-admission cannot walk the track back up the ramp one fix at a time.
 */
import type { AxisModel } from '../../models/axis-model.js';
import { forwardFilter, allocateHistory, type FilterOptions, type SegmentData, type FilterHistory } from '../../estimation/track-filter.js';
import { covIndex } from '../../estimation/segment.js';
import { chiSquareQuantile } from '../../estimation/chi-square.js';

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
  /** Agreement d² of the two predictions at the window's middle fix, and its threshold. */
  agreement: number;
  agreementThreshold: number;
}

/** Scratch for one axis prediction. */
interface Work {
  F: Float64Array;
  Q: Float64Array;
  P: Float64Array;
  FP: Float64Array;
  x: Float64Array;
}

function makeWork(n: number): Work {
  return { F: new Float64Array(n * n), Q: new Float64Array(n * n), P: new Float64Array(n * n), FP: new Float64Array(n * n), x: new Float64Array(n) };
}

/**
 * H x and H P Hᵀ of the history's state at epoch k predicted over dtSec (sign: −1 for the reversed
 * filter, whose velocity is turned back; H = [1, 0, …, (1)] reads position and bias, which the turn
 * does not touch, so only the prediction is needed).
 */
function predictMeasured(model: AxisModel, h: FilterHistory, a: number, k: number, dtSec: number, w: Work, out: Float64Array, o: number): void {
  const n = model.n;
  const xs = h.x[a]!, Ps = h.P[a]!;
  const stride = n === 3 ? 6 : n * n;
  for (let i = 0; i < n; i++) {
    w.x[i] = xs[k * n + i]!;
    for (let j = 0; j < n; j++) w.P[i * n + j] = Ps[k * stride + covIndex(n, i, j)]!;
  }
  model.fillF(dtSec, w.F);
  model.fillQ(dtSec, w.Q);
  // F P
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = 0;
      for (let l = 0; l < n; l++) s += w.F[i * n + l]! * w.P[l * n + j]!;
      w.FP[i * n + j] = s;
    }
  // m = H F x; v = H (F P Fᵀ + Q) Hᵀ
  const hv = model.h;
  let m = 0, v = 0;
  for (let i = 0; i < n; i++) {
    if (hv[i] === 0) continue;
    let fx = 0;
    for (let l = 0; l < n; l++) fx += w.F[i * n + l]! * w.x[l]!;
    m += hv[i]! * fx;
    for (let j = 0; j < n; j++) {
      if (hv[j] === 0) continue;
      let s = w.Q[i * n + j]!;
      for (let l = 0; l < n; l++) s += w.FP[i * n + l]! * w.F[j * n + l]!;
      v += hv[i]! * hv[j]! * s;
    }
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

/** A⁻¹ of an n×n matrix (n ≤ 4) by Gauss–Jordan elimination with partial pivoting, into out; false where singular. */
function invert(n: number, A: Float64Array, out: Float64Array, scratch: Float64Array): boolean {
  const m = 2 * n;
  for (let i = 0; i < n; i++)
    for (let j = 0; j < m; j++) scratch[i * m + j] = j < n ? A[i * n + j]! : j - n === i ? 1 : 0;
  for (let c = 0; c < n; c++) {
    let piv = c;
    for (let r = c + 1; r < n; r++) if (Math.abs(scratch[r * m + c]!) > Math.abs(scratch[piv * m + c]!)) piv = r;
    const pv = scratch[piv * m + c]!;
    if (!(Math.abs(pv) > 0)) return false;
    if (piv !== c) for (let j = 0; j < m; j++) { const tmp = scratch[c * m + j]!; scratch[c * m + j] = scratch[piv * m + j]!; scratch[piv * m + j] = tmp; }
    for (let j = 0; j < m; j++) scratch[c * m + j] = scratch[c * m + j]! / pv;
    for (let r = 0; r < n; r++) {
      if (r === c) continue;
      const f = scratch[r * m + c]!;
      if (f === 0) continue;
      for (let j = 0; j < m; j++) scratch[r * m + j] = scratch[r * m + j]! - f * scratch[c * m + j]!;
    }
  }
  for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) out[i * n + j] = scratch[i * m + n + j]!;
  return true;
}

/** The reversed data of a segment (time negated and reversed), for the time-reversed filter. */
function reversedData(d: SegmentData): SegmentData {
  const N = d.N;
  const rev = (x: Float64Array) => x.slice(0, N).reverse();
  const tSec = new Float64Array(N);
  for (let i = 0; i < N; i++) tSec[i] = -d.tSec[N - 1 - i]!;
  return { N, tSec, z: d.z.map(rev), r: d.r.map(rev), use: d.use.slice(0, N).reverse() };
}

/**
 * The excursions of a segment under the review's converged decisions. `work` holds them in `use`
 * (2 kept, 0 not); `forward` is the forward filter's history under them; gated marks the fixes the
 * review judges (offered === 1). Returns the excursions found, their fixes not yet changed.
 */
export function findExcursions(models: AxisModel[], work: SegmentData, forward: FilterHistory, gated: Uint8Array, opt: FilterOptions, probability: number): Excursion[] {
  const N = work.N;
  const nAx = models.length;
  const t = work.tSec;
  const kept = (k: number) => work.use[k] === 2;
  // the time-reversed filter under the same decisions (its gate cannot reject: every use is 2 or 0)
  const rv = reversedData(work);
  const back = forwardFilter(models, rv, opt, allocateHistory(N, models, false));
  const thr = [Infinity, 1, 2, 3].map((d) => (d === 0 ? Infinity : chiSquareQuantile(probability, d)));
  const thrAgree = [Infinity, 1, 2, 3].map((d) => (d === 0 ? Infinity : chiSquareQuantile(AGREE_P, d)));
  const ws = models.map((m) => makeWork(m.n));
  // the next kept epoch after each epoch (N: none)
  const nextKept = new Int32Array(N + 1).fill(N);
  for (let k = N - 1; k >= 0; k--) nextKept[k] = kept(k) ? k : nextKept[k + 1]!;
  // per axis at the current epoch: each side's and the combined prediction of the measured quantity
  // (m, v), and the two states' disagreement d² (with its dof)
  const mF = new Float64Array(nAx), vF = new Float64Array(nAx), mB = new Float64Array(nAx), vB = new Float64Array(nAx);
  const mC = new Float64Array(nAx), vC = new Float64Array(nAx), dA = new Float64Array(nAx);
  let dofA = 0;
  const nMax = Math.max(...models.map((m) => m.n));
  const xf = new Float64Array(nMax), Pf = new Float64Array(nMax * nMax), xb = new Float64Array(nMax), Pb = new Float64Array(nMax * nMax);
  const If = new Float64Array(nMax * nMax), Ib = new Float64Array(nMax * nMax), S = new Float64Array(nMax * nMax), Si = new Float64Array(nMax * nMax), Pc = new Float64Array(nMax * nMax);
  const gj = new Float64Array(2 * nMax * nMax), y = new Float64Array(nMax), xc = new Float64Array(nMax);
  // the bridge at epoch k between kept a (forward) and kept b (reversed): the two predicted states
  // combined as independent estimates, P = (P_f⁻¹ + P_b⁻¹)⁻¹, x = P (P_f⁻¹ x_f + P_b⁻¹ x_b)
  const bridge = (a: number, b: number, k: number): boolean => {
    dofA = 0;
    for (let ax = 0; ax < nAx; ax++) {
      const md = models[ax]!, n = md.n, w = ws[ax]!, h = md.h;
      predictState(md, forward, ax, a, t[k]! - t[a]!, false, w, xf, Pf);
      predictState(md, back, ax, N - 1 - b, t[b]! - t[k]!, true, w, xb, Pb);
      if (!invert(n, Pf, If, gj) || !invert(n, Pb, Ib, gj)) return false;
      for (let i = 0; i < n * n; i++) S[i] = If[i]! + Ib[i]!;
      if (!invert(n, S, Pc, gj)) return false;
      for (let i = 0; i < n; i++) {
        let s1 = 0;
        for (let j = 0; j < n; j++) s1 += If[i * n + j]! * xf[j]! + Ib[i * n + j]! * xb[j]!;
        y[i] = s1;
      }
      let m = 0, v = 0, m1 = 0, v1 = 0, m2 = 0, v2 = 0;
      for (let i = 0; i < n; i++) {
        let s1 = 0;
        for (let j = 0; j < n; j++) s1 += Pc[i * n + j]! * y[j]!;
        xc[i] = s1;
      }
      for (let i = 0; i < n; i++) {
        if (h[i] === 0) continue;
        m += h[i]! * xc[i]!;
        m1 += h[i]! * xf[i]!;
        m2 += h[i]! * xb[i]!;
        for (let j = 0; j < n; j++) {
          if (h[j] === 0) continue;
          v += h[i]! * h[j]! * Pc[i * n + j]!;
          v1 += h[i]! * h[j]! * Pf[i * n + j]!;
          v2 += h[i]! * h[j]! * Pb[i * n + j]!;
        }
      }
      mC[ax] = m; vC[ax] = v; mF[ax] = m1; vF[ax] = v1; mB[ax] = m2; vB[ax] = v2;
      // d² = (x_f − x_b)ᵀ (P_f + P_b)⁻¹ (x_f − x_b) over the kinematic states (the fix-error state is not separable from position)
      const nk = md.nMotion;
      for (let i = 0; i < nk; i++) for (let j = 0; j < nk; j++) S[i * nk + j] = Pf[i * n + j]! + Pb[i * n + j]!;
      if (!invert(nk, S, Si, gj)) return false;
      let d2 = 0;
      for (let i = 0; i < nk; i++) for (let j = 0; j < nk; j++) d2 += (xf[i]! - xb[i]!) * Si[i * nk + j]! * (xf[j]! - xb[j]!);
      dA[ax] = d2;
      dofA += nk;
    }
    return true;
  };
  // T of fix k against the bridge: against the combined estimate and against each side's own prediction (the least of the three)
  const departure = (k: number): { T: number; dof: number } => {
    let T = 0, Tf = 0, Tb = 0, dof = 0;
    for (let ax = 0; ax < nAx; ax++) {
      const z = work.z[ax]![k]!;
      if (!Number.isFinite(z)) continue;
      const r = work.r[ax]![k]!;
      T += (z - mC[ax]!) ** 2 / (r + vC[ax]!);
      Tf += (z - mF[ax]!) ** 2 / (r + vF[ax]!);
      Tb += (z - mB[ax]!) ** 2 / (r + vB[ax]!);
      dof++;
    }
    return { T: Math.min(T, Tf, Tb), dof };
  };
  const one = new Float64Array(2);
  const departsFromBoth = (a: number, b: number, k: number): boolean => {
    // the forward side first: on most windows the middle fix is where the forward prediction puts it
    let Tf = 0, Tb = 0, dof = 0;
    for (let ax = 0; ax < nAx; ax++) {
      const z = work.z[ax]![k]!;
      if (!Number.isFinite(z)) continue;
      predictMeasured(models[ax]!, forward, ax, a, t[k]! - t[a]!, ws[ax]!, one, 0);
      Tf += (z - one[0]!) ** 2 / (work.r[ax]![k]! + one[1]!);
      dof++;
    }
    if (!(dof > 0 && Tf > thr[dof]!)) return false;
    for (let ax = 0; ax < nAx; ax++) {
      const z = work.z[ax]![k]!;
      if (!Number.isFinite(z)) continue;
      predictMeasured(models[ax]!, back, ax, N - 1 - b, t[b]! - t[k]!, ws[ax]!, one, 0);
      Tb += (z - one[0]!) ** 2 / (work.r[ax]![k]! + one[1]!);
    }
    return Tb > thr[dof]!;
  };
  const endsAgree = (a: number, b: number): boolean => {
    let Ta = 0, Tb = 0, da = 0, db = 0;
    for (let ax = 0; ax < nAx; ax++) {
      const za = work.z[ax]![a]!, zb = work.z[ax]![b]!;
      if (Number.isFinite(za)) {
        predictMeasured(models[ax]!, back, ax, N - 1 - b, t[b]! - t[a]!, ws[ax]!, one, 0);
        Ta += (za - one[0]!) ** 2 / (work.r[ax]![a]! + one[1]!);
        da++;
      }
      if (Number.isFinite(zb)) {
        predictMeasured(models[ax]!, forward, ax, a, t[b]! - t[a]!, ws[ax]!, one, 0);
        Tb += (zb - one[0]!) ** 2 / (work.r[ax]![b]! + one[1]!);
        db++;
      }
    }
    return !(da > 0 && Ta > thrAgree[da]!) && !(db > 0 && Tb > thrAgree[db]!);
  };
  const agreeThr = new Map<number, number>();
  const agreement = (): { d2: number; thr: number } => {
    let d2 = 0;
    for (let ax = 0; ax < nAx; ax++) d2 += dA[ax]!;
    let thrA = agreeThr.get(dofA);
    if (thrA === undefined) agreeThr.set(dofA, (thrA = chiSquareQuantile(AGREE_P, dofA)));
    return { d2, thr: thrA };
  };
  const found: Array<{ from: number; to: number; end: number; estimate: number; d2: number }> = [];
  let lastStartT = -Infinity;
  for (let a = 0; a < N; a++) {
    if (!kept(a) || t[a]! - lastStartT < START_STEP_SEC) continue;
    lastStartT = t[a]!;
    for (const L of WINDOW_SEC) {
      // W = the epochs after a up to t_a + L; b the first kept epoch after W
      let e = a + 1;
      while (e < N && t[e]! <= t[a]! + L) e++;
      const b = nextKept[e]!;
      if (b >= N || e - a < 2) continue;
      // the gated fixes of W that are kept now (the ones the test may take out)
      let mid = -1, nW = 0;
      for (let k = a + 1; k < e; k++) if (gated[k] && kept(k)) nW++;
      if (nW < MIN_FAILING) continue;
      // prefilter: the middle kept fix of W must depart, and the two sides agree there
      let c = 0;
      for (let k = a + 1; k < e && mid < 0; k++) if (gated[k] && kept(k) && ++c >= (nW + 1) >> 1) mid = k;
      // a necessary condition first, from the two one-sided predictions alone (no inversions): the
      // middle fix departs from each side's own prediction
      if (!departsFromBoth(a, b, mid)) continue;
      if (!bridge(a, b, mid)) continue;
      const dm = departure(mid);
      if (!(dm.dof > 0 && dm.T > thr[dm.dof]!)) continue;
      // the ends cross-checked: the fix at a against the reversed filter's prediction from b, and the
      // fix at b against the forward prediction from a (a window that starts or ends inside a burst fails here)
      if (!endsAgree(a, b)) continue;
      const ag = agreement();
      const d2 = ag.d2;
      if (!(d2 <= ag.thr)) continue;
      // the share of W's fixes that depart, from at most SAMPLE_FIXES of them evenly spread (exact for short windows)
      const stride = Math.max(1, Math.floor(nW / SAMPLE_FIXES));
      let seen = 0, failed = 0, i = 0;
      for (let k = a + 1; k < e; k++) {
        if (!(gated[k] && kept(k)) || i++ % stride !== 0) continue;
        if (!bridge(a, b, k)) continue;
        const d = departure(k);
        seen++;
        if (d.dof > 0 && d.T > thr[d.dof]!) failed++;
      }
      const estimate = seen ? (failed / seen) * nW : 0;
      if (failed >= Math.min(MIN_FAILING, seen) && estimate >= MIN_FAILING && failed >= MIN_SHARE * seen) found.push({ from: a, to: b, end: e, estimate, d2 });
    }
  }
  // the windows that fail most first; none overlapping a window taken; their departing fixes listed
  found.sort((p, q) => q.estimate - p.estimate || p.from - q.from);
  const taken: Array<[number, number]> = [];
  const out: Excursion[] = [];
  for (const f of found) {
    if (taken.some(([p, q]) => f.from < q && p < f.to)) continue;
    const fixes: Excursion['fixes'] = [];
    for (let k = f.from + 1; k < f.end; k++) {
      if (!(gated[k] && kept(k)) || !bridge(f.from, f.to, k)) continue;
      const d = departure(k);
      if (d.dof > 0 && d.T > thr[d.dof]!) fixes.push({ k, T: d.T, threshold: thr[d.dof]!, dof: d.dof });
    }
    if (fixes.length < MIN_FAILING) continue;
    taken.push([f.from, f.to]);
    out.push({ fixes, agreement: f.d2, agreementThreshold: AGREE_P });
  }
  return out;
}
