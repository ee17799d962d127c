/**
 * forwardFilter of src/estimation/track-filter.ts in its former form (one generic
 * loop over the axes for every case), kept verbatim as the reference for the bit-for-bit test of
 * the current form (test/estimation/forward-filter-shared.test.ts).
 * The re-acquisition rule has been given the current option `reacquireAfterSec` (the run of
 * rejections must also have lasted that long), the same condition as the current form's, so that
 * both are compared under the default configuration; nothing else is changed.
 * Gate: Bar-Shalom, Li, Kirubarajan (2001) §5.4. Re-acquisition: see track-filter.ts.
 */
import type { AxisModel } from '../../src/models/axis-model.js';
import { chiSquareQuantile } from '../../src/estimation/chi-square.js';
import { innovation, makeScratch, predict, updateJoseph, type KalmanScratch } from '../../src/estimation/kalman.js';
import { innovation3p, predict3p, predictState3, updateJoseph3p, updateState3 } from '../../src/estimation/kalman3.js';
import { allocateHistory, copy6, covIndex, covStride, ensureStep, horizontalShare, makeStepCache, type FilterHistory, type FilterOptions, type FilterResume, type SegmentData, type StepCache } from '../../src/estimation/track-filter.js';

const LOG_2PI = Math.log(2 * Math.PI);

/** Buffers reused across epochs of one pass. */
interface Work {
  F: Float64Array[];
  Q: Float64Array[];
  s: KalmanScratch[];
  cache: StepCache;
  nu: Float64Array;
  S: Float64Array;
  out1: Float64Array;
}

function makeWork(models: AxisModel[]): Work {
  return {
    F: models.map((m) => new Float64Array(m.n * m.n)),
    Q: models.map((m) => new Float64Array(m.n * m.n)),
    s: models.map((m) => makeScratch(m.n)),
    cache: makeStepCache(models.length, models.map((m) => m.n)),
    nu: new Float64Array(models.length),
    S: new Float64Array(models.length),
    out1: new Float64Array(1),
  };
}

/** Whether epoch k of h equals the saved state within tol (every element of x and P, every axis). */
function sameState(models: AxisModel[], h: FilterHistory, k: number, sx: Float64Array[], sP: Float64Array[], tol: number): boolean {
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    const x = h.x[a]!;
    const P = h.P[a]!;
    const ox = sx[a]!;
    const oP = sP[a]!;
    const ps = covStride(n);
    for (let i = 0; i < n; i++) if (!(Math.abs(x[k * n + i]! - ox[i]!) <= tol)) return false;
    for (let i = 0; i < ps; i++) if (!(Math.abs(P[k * ps + i]! - oP[i]!) <= tol)) return false;
  }
  return true;
}

/**
 * Run the forward filter over a segment. The first epoch must carry a fix (use ≠ 0).
 * With `resume`, only the epochs affected by a change of use are recomputed (see FilterResume).
 */
export function refForwardFilter(models: AxisModel[], data: SegmentData, opt: FilterOptions, history?: FilterHistory, resume?: FilterResume): FilterHistory {
  const N = data.N;
  const h = history ?? allocateHistory(N, models);
  const w = makeWork(models);
  const nAx = models.length;
  const thresholds = [0, 0, 0, 0].map((_, d) => (d === 0 ? Infinity : chiSquareQuantile(opt.gateProbability, d)));
  const rewound = new Set<number>();
  const rScale = opt.rScale ?? models.map(() => 1);

  const likelihood = opt.likelihood === true;
  // north takes east's covariances (predict and update its state only)
  const share = horizontalShare(models, data, opt.rScale, opt.qScale);
  // Δt of the step whose F, Q are in w.F, w.Q (NaN: none, or not reusable; see ensureStep)
  let lastDt = NaN;
  let runStart = -1;
  let runCount = 0;
  let k = 0;
  // resume: the old state of the epoch being recomputed, the next change not yet reached, the window's first epoch
  const sx = resume ? models.map((m) => new Float64Array(m.n)) : [];
  const sP = resume ? models.map((m) => new Float64Array(covStride(m.n))) : [];
  let ci = 0;
  let winStart = -1;
  if (resume) {
    if (!history) throw new Error('forwardFilter: resume needs the previous history');
    if (resume.changed.length === 0) return h;
    k = resume.changed[0]!;
    winStart = k;
  }
  while (k < N) {
    if (resume) {
      if (k > winStart && sameState(models, h, k - 1, sx, sP, resume.tol)) {
        // same state, same inputs up to the next change: skip to it
        resume.windows.push(winStart, k - 1);
        if (ci >= resume.changed.length) {
          winStart = -1;
          break;
        }
        k = resume.changed[ci]!;
        winStart = k;
      }
      while (ci < resume.changed.length && resume.changed[ci]! <= k) ci++;
      if (data.use[k] === 1) throw new Error('forwardFilter: resume is for ungated passes (use 0 or 2)');
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        for (let i = 0; i < n; i++) sx[a]![i] = h.x[a]![k * n + i]!;
        const ps = covStride(n);
        for (let i = 0; i < ps; i++) sP[a]![i] = h.P[a]![k * ps + i]!;
      }
    }
    // ---- prediction (or prior at the first epoch) ----
    for (let a = 0; a < nAx; a++) {
      const m = models[a]!;
      const n = m.n;
      const x = h.x[a]!;
      const P = h.P[a]!;
      if (k === 0) {
        // prior: position at the first fix (or 0), diffuse kinematics, stationary GM error
        x.fill(0, 0, n);
        P.fill(0, 0, covStride(n));
        const z0 = data.z[a]![0]!;
        x[0] = Number.isFinite(z0) ? z0 : 0;
        for (let i = 0; i < m.nMotion; i++) P[covIndex(n, i, i)] = opt.priorVar[i]!;
        if (m.iBias >= 0) P[covIndex(n, m.iBias, m.iBias)] = m.params.gm!.sigmaM ** 2;
      }
    }
    if (k > 0) {
      lastDt = ensureStep(models, data, h, k, opt.qScale, w.F, w.Q, w.cache, lastDt);
      for (let a = 0; a < nAx; a++) {
        const n = models[a]!.n;
        if (share && a === 1) {
          predictState3(w.F[1]!, h.x[1]!, (k - 1) * 3, h.x[1]!, k * 3);
          copy6(h.P[0]!, h.P[1]!, k * 6);
        } else if (n === 3) predict3p(w.F[a]!, w.Q[a]!, h.x[a]!, (k - 1) * 3, h.P[a]!, (k - 1) * 6, h.x[a]!, k * 3, h.P[a]!, k * 6);
        else predict(n, w.F[a]!, w.Q[a]!, h.x[a]!, (k - 1) * n, h.P[a]!, (k - 1) * n * n, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!);
      }
    }
    h.accepted[k] = 0;
    h.logLik[k] = 0;
    h.nis[k] = NaN;
    h.dof[k] = 0;
    h.threshold[k] = NaN;
    const use = data.use[k]!;
    if (use === 0) {
      k++;
      continue;
    }
    // ---- innovations and the joint gate ----
    let nis = 0;
    let dof = 0;
    let ll = 0;
    for (let a = 0; a < nAx; a++) {
      const z = data.z[a]![k]!;
      if (!Number.isFinite(z)) {
        w.S[a] = NaN;
        continue;
      }
      const m = models[a]!;
      const n = m.n;
      const r = data.r[a]![k]! * rScale[a]!;
      const nu = n === 3 ? innovation3p(m.h, z, r, h.x[a]!, k * 3, h.P[a]!, k * 6, w.s[a]!.w, w.out1) : innovation(n, m.h, z, r, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!, w.out1);
      const S = w.out1[0]!;
      w.nu[a] = nu;
      w.S[a] = S;
      // NIS = Σ ν²/S over independent axes
      nis += (nu * nu) / S;
      if (likelihood) ll += LOG_2PI + Math.log(S);
      dof++;
    }
    if (dof === 0) {
      k++;
      continue;
    }
    const thr = thresholds[dof]!;
    h.nis[k] = nis;
    h.dof[k] = dof;
    h.threshold[k] = thr;
    const pass = use === 2 || nis <= thr;
    if (pass) {
      for (let a = 0; a < nAx; a++) {
        if (!Number.isFinite(w.S[a]!)) continue;
        const m = models[a]!;
        const n = m.n;
        // innovation() left P hᵀ in this axis's own scratch
        const r = data.r[a]![k]! * rScale[a]!;
        if (share && a === 1) {
          updateState3(w.nu[1]!, w.S[1]!, w.s[1]!.w, h.x[1]!, k * 3);
          copy6(h.P[0]!, h.P[1]!, k * 6);
        } else if (n === 3) updateJoseph3p(m.h, w.nu[a]!, w.S[a]!, r, w.s[a]!.w, h.x[a]!, k * 3, h.P[a]!, k * 6);
        else updateJoseph(n, m.h, w.nu[a]!, w.S[a]!, r, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!);
      }
      h.accepted[k] = 1;
      if (likelihood) h.logLik[k] = -0.5 * (ll + nis);
      runStart = -1;
      runCount = 0;
      k++;
      continue;
    }
    // rejected: capped likelihood contribution keeps outliers from dominating calibration
    if (likelihood) h.logLik[k] = -0.5 * (ll + thr);
    if (runCount === 0) runStart = k;
    runCount++;
    if (runCount >= opt.reacquireAfter && runStart > 0 && !rewound.has(runStart) && (!opt.reacquireAfterSec || data.tSec[k]! - data.tSec[runStart - 1]! >= opt.reacquireAfterSec)) {
      // ---- re-acquire: rewind to the run start with inflated covariance ----
      rewound.add(runStart);
      const extra: Float64Array[] = [];
      const span = Math.max(data.tSec[k]! - data.tSec[runStart - 1]!, 1e-3);
      const misses: number[] = [];
      for (let a = 0; a < nAx; a++) {
        const m = models[a]!;
        // largest miss of this axis over the run: rejected epochs hold only their prediction, so
        // z − H x⁻ there is the innovation the gate rejected
        let miss = 0;
        for (let j = runStart; j <= k; j++) {
          const z = data.z[a]![j]!;
          if (Number.isFinite(z) && data.use[j]) miss = Math.max(miss, Math.abs(z - h.x[a]![j * m.n]! - (m.iBias >= 0 ? h.x[a]![j * m.n + m.iBias]! : 0)));
        }
        misses.push(miss);
      }
      // the horizontal axes (0 east, 1 north) are inflated alike, by the larger miss of the two (a
      // horizontal manoeuvre loses both; and their covariances stay equal, see horizontalShare)
      if (nAx >= 2) misses[0] = misses[1] = Math.max(misses[0]!, misses[1]!);
      for (let a = 0; a < nAx; a++) {
        const m = models[a]!;
        const miss = misses[a]!;
        const e = new Float64Array(m.n);
        e[0] = miss * miss;
        if (m.nMotion > 1) e[1] = Math.max((miss / span) ** 2 * 4, 1);
        if (m.nMotion > 2) e[2] = Math.max((miss / (span * span)) ** 2 * 4, 0.1);
        extra.push(e);
      }
      h.extraQ.set(runStart, extra);
      h.reacquired.push(runStart);
      k = runStart;
      runStart = -1;
      runCount = 0;
      continue;
    }
    k++;
  }
  if (resume && winStart >= 0) resume.windows.push(winStart, N - 1);
  return h;
}

