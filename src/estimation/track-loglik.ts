/**
 * The log-likelihood of a segment under the forward filter (prediction-error decomposition:
 * Schweppe, IEEE Trans. IT-11:61–70, 1965; Harvey 1989 §3.4), without a history: what
 * totalLogLik(forwardFilter(models, data, { ...opt, likelihood: true })) returns, for the case the
 * calibration runs about a thousand times per round (calibrate.ts negLogLik): every axis n = 3,
 * north sharing east's covariances (horizontalShare), an r scale, no q scale, no re-acquisition.
 * The state of the current epoch lives in locals, so nothing is stored per epoch; the operations
 * are forwardFilter's general loop's in its order (predict3p, innovation3p, updateJoseph3p,
 * updateState3 written out; east's P hᵀ, S and log S serve north, the same numbers), so the value
 * is the same bits (test/estimation/forward-loglik.test.ts, against the general loop and its
 * previous form in test/helpers/reference-track-filter.ts).
 * Sources as track-filter.ts: gate Bar-Shalom, Li, Kirubarajan (2001) §5.4; Kalman (1960); Joseph
 * form Grewal & Andrews (2015) §6.
 */
import type { AxisModel } from '../models/axis-model.js';
import { chiSquareQuantile } from './chi-square.js';
import { allocateHistory, ensureStep, makeStepCache, writePrior, type FilterHistory, type FilterOptions, type SegmentData, type StepCache } from './track-filter.js';
import { makeLogLikKernel, runLogLikKernel, type LogLikKernel } from './loglik-wasm.js';

const LOG_2PI = Math.log(2 * Math.PI);

/** Buffers of forwardLogLik, reused across calls (allocated once per calibration). */
export interface LogLikWork {
  /** The models the step cache holds F and Q of (another set of models empties it). */
  models: AxisModel[] | null;
  F: Float64Array[];
  Q: Float64Array[];
  cache: StepCache;
  /** One epoch: the prior is written here (writePrior); its empty extraQ tells ensureStep there is no extra noise. */
  h1: FilterHistory;
  /** Gate thresholds by degrees of freedom, and the gate probability they are for. */
  thresholds: number[];
  gateProbability: number;
  /** The state of the current epoch and the running sum (see forwardLogLik); after a call, the last epoch's filtered x and P. */
  st: Float64Array;
  /** The loop's WebAssembly form (./loglik-wasm.ts: the same bits), or null: the TypeScript loop below. */
  kernel: LogLikKernel | null;
}

export function makeLogLikWork(nAxes: number): LogLikWork {
  const dims = Array.from({ length: nAxes }, () => 3);
  const three = { n: 3 } as AxisModel;
  return {
    models: null,
    F: dims.map(() => new Float64Array(9)),
    Q: dims.map(() => new Float64Array(9)),
    cache: makeStepCache(nAxes, dims),
    h1: allocateHistory(1, dims.map(() => three)),
    thresholds: [],
    gateProbability: NaN,
    st: new Float64Array(22),
    kernel: makeLogLikKernel(),
  };
}

/**
 * Whether forwardLogLik applies: 2 or 3 axes of n = 3, east and north the same model object with
 * the same r scale, `sameInputs` (sameHorizontalInputs of the data, computed once per segment by the
 * caller), no q scale, and a re-acquisition run longer than the segment (so it never happens).
 */
export function forwardLogLikApplies(models: AxisModel[], data: SegmentData, opt: FilterOptions, rScale: number[], sameInputs: boolean): boolean {
  const nAx = models.length;
  if (nAx !== 2 && nAx !== 3) return false;
  if (models[0] !== models[1] || models[0]!.n !== 3 || (nAx === 3 && models[2]!.n !== 3)) return false;
  return sameInputs && Object.is(rScale[0], rScale[1]) && !opt.qScale && opt.reacquireAfter > data.N;
}

/**
 * Σₖ log-likelihood contribution of epoch k (forwardFilter's logLik: −½(Σ (log 2π + log S) + NIS),
 * NIS capped at the gate threshold for a rejected fix; 0 without a fix), for the case of
 * forwardLogLikApplies (checked by the caller). `rScale` multiplies the measurement variances per axis.
 */
export function forwardLogLik(models: AxisModel[], data: SegmentData, opt: FilterOptions, rScale: number[], w: LogLikWork): number {
  const N = data.N;
  if (N === 0) return 0;
  const up = models.length === 3;
  if (w.models === null || w.models.length !== models.length || w.models.some((m, a) => m !== models[a])) {
    // other models: the cached steps are not theirs
    w.models = models.slice();
    const c = w.cache;
    c.dt.fill(NaN);
    c.qs.fill(NaN);
    c.current.fill(-1);
    c.next.fill(0);
  }
  if (!(w.gateProbability === opt.gateProbability)) {
    w.thresholds = [0, 0, 0, 0].map((_, d) => (d === 0 ? Infinity : chiSquareQuantile(opt.gateProbability, d)));
    w.gateProbability = opt.gateProbability;
  }
  const thresholds = w.thresholds;
  const tSec = data.tSec, use = data.use;
  const zE = data.z[0]!, zN = data.z[1]!, zU = up ? data.z[2]! : zE;
  const rE = data.r[0]!, rU = up ? data.r[2]! : rE;
  const sH = rScale[0]!, sU = up ? rScale[2]! : 1;
  const hH = models[0]!.h, hV = up ? models[2]!.h : hH;
  const e0 = hH[0]!, e1 = hH[1]!, e2 = hH[2]!;
  const v0 = hV[0]!, v1 = hV[1]!, v2 = hV[2]!;
  // the prior (forwardFilter's writePrior, into the one-epoch history)
  const h1 = w.h1;
  writePrior(models, data, opt, h1);
  // the state between epochs, kept in a buffer rather than in loop-carried locals (on-stack
  // replacement of this loop boxed those: measured 2.5× slower); within an epoch it is in locals.
  // x east 0–2, north 3–5, up 6–8; P east (= north) 9–14, up 15–20; the sum 21
  const st = w.st;
  const xE0 = h1.x[0]!, xN0 = h1.x[1]!, PE0 = h1.P[0]!;
  st[0] = xE0[0]!; st[1] = xE0[1]!; st[2] = xE0[2]!;
  st[3] = xN0[0]!; st[4] = xN0[1]!; st[5] = xN0[2]!;
  for (let i = 0; i < 6; i++) st[9 + i] = PE0[i]!;
  if (up) {
    const xU0 = h1.x[2]!, PU0 = h1.P[2]!;
    st[6] = xU0[0]!; st[7] = xU0[1]!; st[8] = xU0[2]!;
    for (let i = 0; i < 6; i++) st[15 + i] = PU0[i]!;
  } else st.fill(0, 6, 9), st.fill(0, 15, 21);
  // totalLogLik's sum; epochs without a contribution add 0, which leaves a sum that starts at +0 unchanged
  st[21] = 0;
  if (w.kernel) return runLogLikKernel(w.kernel, models, data, thresholds, rScale, st);
  let lastDt = NaN;
  let FH = w.F[0]!, QH = w.Q[0]!, FV = up ? w.F[2]! : FH, QV = up ? w.Q[2]! : QH;
  for (let k = 0; k < N; k++) {
    let xe0 = st[0]!, xe1 = st[1]!, xe2 = st[2]!;
    let xn0 = st[3]!, xn1 = st[4]!, xn2 = st[5]!;
    let xu0 = st[6]!, xu1 = st[7]!, xu2 = st[8]!;
    let pe00 = st[9]!, pe01 = st[10]!, pe02 = st[11]!, pe11 = st[12]!, pe12 = st[13]!, pe22 = st[14]!;
    let pu00 = st[15]!, pu01 = st[16]!, pu02 = st[17]!, pu11 = st[18]!, pu12 = st[19]!, pu22 = st[20]!;
    if (k > 0) {
      // Δt of this step; F, Q looked up only when it changes (no extra noise: no re-acquisition)
      const dt = tSec[k]! - tSec[k - 1]!;
      if (dt !== lastDt) {
        lastDt = ensureStep(models, data, h1, k, null, w.F, w.Q, w.cache, lastDt);
        FH = w.F[0]!;
        QH = w.Q[0]!;
        if (up) {
          FV = w.F[2]!;
          QV = w.Q[2]!;
        }
      }
      {
        // east: x⁻ = F x, P⁻ = F P Fᵀ + Q (predict3p written out)
        const f00 = FH[0]!, f01 = FH[1]!, f02 = FH[2]!, f10 = FH[3]!, f11 = FH[4]!, f12 = FH[5]!, f20 = FH[6]!, f21 = FH[7]!, f22 = FH[8]!;
        const x0 = xe0, x1 = xe1, x2 = xe2;
        const p00 = pe00, p01 = pe01, p02 = pe02, p11 = pe11, p12 = pe12, p22 = pe22;
        // x⁻ = F x
        xe0 = f00 * x0 + f01 * x1 + f02 * x2;
        xe1 = f10 * x0 + f11 * x1 + f12 * x2;
        xe2 = f20 * x0 + f21 * x1 + f22 * x2;
        // A = F P
        const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
        const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
        const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
        // P⁻ = A Fᵀ + Q (upper triangle)
        pe00 = QH[0]! + a00 * f00 + a01 * f01 + a02 * f02;
        pe01 = QH[1]! + a00 * f10 + a01 * f11 + a02 * f12;
        pe02 = QH[2]! + a00 * f20 + a01 * f21 + a02 * f22;
        pe11 = QH[4]! + a10 * f10 + a11 * f11 + a12 * f12;
        pe12 = QH[5]! + a10 * f20 + a11 * f21 + a12 * f22;
        pe22 = QH[8]! + a20 * f20 + a21 * f21 + a22 * f22;
        // north: x⁻ = F x (predictState3; its F holds east's numbers, the same model); P⁻ is east's
        const y0 = xn0, y1 = xn1, y2 = xn2;
        xn0 = f00 * y0 + f01 * y1 + f02 * y2;
        xn1 = f10 * y0 + f11 * y1 + f12 * y2;
        xn2 = f20 * y0 + f21 * y1 + f22 * y2;
      }
      if (up) {
        // up: x⁻ = F x, P⁻ = F P Fᵀ + Q (predict3p written out)
        const f00 = FV[0]!, f01 = FV[1]!, f02 = FV[2]!, f10 = FV[3]!, f11 = FV[4]!, f12 = FV[5]!, f20 = FV[6]!, f21 = FV[7]!, f22 = FV[8]!;
        const x0 = xu0, x1 = xu1, x2 = xu2;
        const p00 = pu00, p01 = pu01, p02 = pu02, p11 = pu11, p12 = pu12, p22 = pu22;
        // x⁻ = F x
        xu0 = f00 * x0 + f01 * x1 + f02 * x2;
        xu1 = f10 * x0 + f11 * x1 + f12 * x2;
        xu2 = f20 * x0 + f21 * x1 + f22 * x2;
        // A = F P
        const a00 = f00 * p00 + f01 * p01 + f02 * p02, a01 = f00 * p01 + f01 * p11 + f02 * p12, a02 = f00 * p02 + f01 * p12 + f02 * p22;
        const a10 = f10 * p00 + f11 * p01 + f12 * p02, a11 = f10 * p01 + f11 * p11 + f12 * p12, a12 = f10 * p02 + f11 * p12 + f12 * p22;
        const a20 = f20 * p00 + f21 * p01 + f22 * p02, a21 = f20 * p01 + f21 * p11 + f22 * p12, a22 = f20 * p02 + f21 * p12 + f22 * p22;
        // P⁻ = A Fᵀ + Q (upper triangle)
        pu00 = QV[0]! + a00 * f00 + a01 * f01 + a02 * f02;
        pu01 = QV[1]! + a00 * f10 + a01 * f11 + a02 * f12;
        pu02 = QV[2]! + a00 * f20 + a01 * f21 + a02 * f22;
        pu11 = QV[4]! + a10 * f10 + a11 * f11 + a12 * f12;
        pu12 = QV[5]! + a10 * f20 + a11 * f21 + a12 * f22;
        pu22 = QV[8]! + a20 * f20 + a21 * f21 + a22 * f22;
      }
    }
    const u = use[k]!;
    if (u !== 0) {
      // ---- innovations and the joint gate ----
      let nis = 0;
      let dof = 0;
      let ll = 0;
      // horizontal: east and north measured together (sameHorizontalInputs), with the same r and r scale
      const ze = zE[k]!;
      let nuE = 0, nuN = 0, SH = NaN, rH = 0, wH0 = 0, wH1 = 0, wH2 = 0;
      if (Number.isFinite(ze)) {
        rH = rE[k]! * sH;
        const hx = e0 * xe0 + e1 * xe1 + e2 * xe2;
        // P hᵀ
        wH0 = pe00 * e0 + pe01 * e1 + pe02 * e2;
        wH1 = pe01 * e0 + pe11 * e1 + pe12 * e2;
        wH2 = pe02 * e0 + pe12 * e1 + pe22 * e2;
        // S = h P hᵀ + r (east's; north's is the same numbers)
        SH = rH + e0 * wH0 + e1 * wH1 + e2 * wH2;
        // ν = z − h x⁻
        nuE = ze - hx;
        nuN = zN[k]! - (e0 * xn0 + e1 * xn1 + e2 * xn2);
        // log-likelihood terms log 2π + log S, one per axis (north's equals east's)
        const lH = LOG_2PI + Math.log(SH);
        // NIS = Σ ν²/S over independent axes
        nis += (nuE * nuE) / SH;
        ll += lH;
        dof++;
        nis += (nuN * nuN) / SH;
        ll += lH;
        dof++;
      }
      const zu = up ? zU[k]! : NaN;
      let nuU = 0, SU = NaN, rV = 0, wV0 = 0, wV1 = 0, wV2 = 0;
      if (up && Number.isFinite(zu)) {
        rV = rU[k]! * sU;
        const hx = v0 * xu0 + v1 * xu1 + v2 * xu2;
        // P hᵀ
        wV0 = pu00 * v0 + pu01 * v1 + pu02 * v2;
        wV1 = pu01 * v0 + pu11 * v1 + pu12 * v2;
        wV2 = pu02 * v0 + pu12 * v1 + pu22 * v2;
        // S = h P hᵀ + r
        SU = rV + v0 * wV0 + v1 * wV1 + v2 * wV2;
        // ν = z − h x⁻
        nuU = zu - hx;
        nis += (nuU * nuU) / SU;
        ll += LOG_2PI + Math.log(SU);
        dof++;
      }
      if (dof !== 0) {
        const thr = thresholds[dof]!;
        if (u === 2 || nis <= thr) {
          // an axis whose S is not finite is not updated (as in the general loop)
          if (Number.isFinite(SH)) {
            const w0 = wH0, w1 = wH1, w2 = wH2;
            // K = P hᵀ S⁻¹
            const k0 = w0 / SH, k1 = w1 / SH, k2 = w2 / SH;
            // x ← x + K ν
            xe0 += k0 * nuE;
            xe1 += k1 * nuE;
            xe2 += k2 * nuE;
            // h P hᵀ recomputed from w (= S − r up to rounding), as updateJoseph3p
            const c = e0 * w0 + e1 * w1 + e2 * w2 + rH;
            // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
            const n00 = pe00 - 2 * k0 * w0 + c * k0 * k0;
            const n01 = pe01 - k0 * w1 - w0 * k1 + c * k0 * k1;
            const n02 = pe02 - k0 * w2 - w0 * k2 + c * k0 * k2;
            const n11 = pe11 - 2 * k1 * w1 + c * k1 * k1;
            const n12 = pe12 - k1 * w2 - w1 * k2 + c * k1 * k2;
            const n22 = pe22 - 2 * k2 * w2 + c * k2 * k2;
            pe00 = n00; pe01 = n01; pe02 = n02; pe11 = n11; pe12 = n12; pe22 = n22;
            // x ← x + K ν (north: updateState3's K = P hᵀ S⁻¹ from east's P hᵀ and S, which is east's K)
            xn0 += k0 * nuN;
            xn1 += k1 * nuN;
            xn2 += k2 * nuN;
          }
          if (Number.isFinite(SU)) {
            const w0 = wV0, w1 = wV1, w2 = wV2;
            // K = P hᵀ S⁻¹
            const k0 = w0 / SU, k1 = w1 / SU, k2 = w2 / SU;
            // x ← x + K ν
            xu0 += k0 * nuU;
            xu1 += k1 * nuU;
            xu2 += k2 * nuU;
            // h P hᵀ recomputed from w (= S − r up to rounding), as updateJoseph3p
            const c = v0 * w0 + v1 * w1 + v2 * w2 + rV;
            // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
            const n00 = pu00 - 2 * k0 * w0 + c * k0 * k0;
            const n01 = pu01 - k0 * w1 - w0 * k1 + c * k0 * k1;
            const n02 = pu02 - k0 * w2 - w0 * k2 + c * k0 * k2;
            const n11 = pu11 - 2 * k1 * w1 + c * k1 * k1;
            const n12 = pu12 - k1 * w2 - w1 * k2 + c * k1 * k2;
            const n22 = pu22 - 2 * k2 * w2 + c * k2 * k2;
            pu00 = n00; pu01 = n01; pu02 = n02; pu11 = n11; pu12 = n12; pu22 = n22;
          }
          // accepted: −½ (Σ (log 2π + log S) + NIS)
          st[21] += -0.5 * (ll + nis);
        } else {
          // rejected: capped likelihood contribution keeps outliers from dominating calibration
          st[21] += -0.5 * (ll + thr);
        }
      }
    }
    st[0] = xe0; st[1] = xe1; st[2] = xe2;
    st[3] = xn0; st[4] = xn1; st[5] = xn2;
    st[6] = xu0; st[7] = xu1; st[8] = xu2;
    st[9] = pe00; st[10] = pe01; st[11] = pe02; st[12] = pe11; st[13] = pe12; st[14] = pe22;
    st[15] = pu00; st[16] = pu01; st[17] = pu02; st[18] = pu11; st[19] = pu12; st[20] = pu22;
  }
  return st[21]!;
}
