/**
 * Forward pass over one segment of epochs: three independent axis filters (east, north, up) with a
 * joint chi-square gate on the normalized innovation squared (NIS) of each fix, and re-acquisition
 * after a run of rejections.
 * Gate: Bar-Shalom, Li, Kirubarajan (2001) §5.4 (NIS ~ χ²(m) under the model; validation region).
 * Re-acquisition: when `reacquireAfter` consecutive fixes fail the gate (and, with `reacquireAfterSec`,
 * the run has lasted that long), the model has lost the
 * track (a manoeuvre beyond its process noise, or a step in the fix error): the filter rewinds to the
 * epoch before the run, inflates the covariance there (a recorded extra process noise that the
 * smoother reuses, so forward and backward passes see the same model), and runs the epochs again.
 */
import type { AxisModel } from '../models/axis-model.js';
import { chiSquareQuantile } from './chi-square.js';
import { innovation, makeScratch, predict, updateJoseph, type KalmanScratch } from './kalman.js';
import { innovation3p, predict3p, predictState3, updateJoseph3p, updateState3 } from './kalman3.js';

/** Epoch-wise inputs of one segment, per axis arrays indexed by epoch. */
export interface SegmentData {
  /** Number of epochs. */
  N: number;
  tSec: Float64Array;
  /** Measured coordinate per axis (m, local frame); NaN where the axis is not measured. */
  z: Float64Array[];
  /** Measurement variance per axis (m²). */
  r: Float64Array[];
  /** 0 no measurement (bridged epoch, invalid or user-rejected fix), 1 gated fix, 2 fix accepted without gating (user-kept). */
  use: Uint8Array;
}

export interface FilterOptions {
  /** Probability of the chi-square gate (e.g. 0.999). */
  gateProbability: number;
  /** Consecutive rejected fixes after which the filter re-acquires. */
  reacquireAfter: number;
  /**
   * Optional duration (s) the run of rejections must also last, from the last epoch before it to the
   * current fix, before the filter re-acquires (0 or absent: the count alone). A count of fixes is a
   * different time at every fix rate: at 10 Hz six fixes are 0.6 s, shorter than a multipath burst,
   * so the filter would re-acquire onto the burst; a duration is what separates a lost track (a
   * manoeuvre or a step persists) from a burst (it ends).
   */
  reacquireAfterSec?: number;
  /** Prior variances for the first epoch, per kinematic derivative (position, velocity, acceleration), m², (m/s)², (m/s²)². */
  priorVar: [number, number, number];
  /** Optional per-axis, per-epoch multiplier of the kinematic process noise of the step ending at that epoch. */
  qScale?: Float64Array[] | null;
  /** Optional multiplier of the measurement variances per axis (used by calibration). */
  rScale?: number[] | null;
  /** Fill the per-epoch log-likelihood (calibration); otherwise it stays 0 and its logarithms are skipped. */
  likelihood?: boolean;
}

/** Forward history of one segment; x/P hold filtered values (later overwritten by the smoother). */
export interface FilterHistory {
  N: number;
  /** Per axis: N×n states. */
  x: Float64Array[];
  /** Per axis: N covariances of covStride(n) doubles each (n = 3: the upper triangle, see covIndex; otherwise n×n row-major). */
  P: Float64Array[];
  /** NIS of each offered fix against the prediction (NaN where none). */
  nis: Float64Array;
  /** Degrees of freedom of that NIS. */
  dof: Uint8Array;
  /** Gate threshold used at that epoch. */
  threshold: Float64Array;
  /** 1 where the fix was used in the update. */
  accepted: Uint8Array;
  /** Extra process-noise diagonal added to the step ending at an epoch (re-acquisition), per axis. */
  extraQ: Map<number, Float64Array[]>;
  /** Gaussian log-likelihood contribution of each epoch (capped at the gate for rejected fixes); filled with FilterOptions.likelihood, else 0. */
  logLik: Float64Array;
  /** Epochs where re-acquisition happened. */
  reacquired: number[];
}

const LOG_2PI = Math.log(2 * Math.PI);

/**
 * Doubles per epoch of an axis covariance in a history: for n = 3 the upper triangle
 * [p00, p01, p02, p11, p12, p22] (the covariances are symmetric bit for bit: every kernel writes them
 * mirrored), otherwise the full n×n matrix.
 */
export function covStride(n: number): number {
  return n === 3 ? 6 : n * n;
}

/** Index of element (i, j) within one epoch's covariance of an axis with state dimension n (see covStride). */
export function covIndex(n: number, i: number, j: number): number {
  if (n !== 3) return i * n + j;
  const r = i < j ? i : j, c = i < j ? j : i;
  return r * 3 - (r * (r - 1)) / 2 + (c - r);
}

/**
 * Whether the north axis (1) can take the east axis's (0) covariances instead of computing them:
 * the same n = 3 model object, the same measurement variances, scale and process-noise scale at
 * every epoch, and both measured or both not. Then the two covariance recursions are the same
 * arithmetic on the same numbers (re-acquisition inflates both horizontal axes alike), so P is
 * computed once and copied, bit for bit what the second computation would give.
 */
export function horizontalShare(models: AxisModel[], data: SegmentData, rScale: number[] | null | undefined, qScale: Float64Array[] | null | undefined): boolean {
  if (models.length < 2 || models[0] !== models[1] || models[0]!.n !== 3) return false;
  if (rScale && rScale[0] !== rScale[1]) return false;
  if (qScale && qScale[0] !== qScale[1]) return false;
  return sameHorizontalInputs(data);
}

/** The data half of horizontalShare: east and north have the same measurement variances at every epoch, and are measured or not together. */
export function sameHorizontalInputs(data: SegmentData): boolean {
  if (data.r.length < 2) return false;
  const r0 = data.r[0]!, r1 = data.r[1]!, z0 = data.z[0]!, z1 = data.z[1]!;
  for (let k = 0; k < data.N; k++) {
    if (!Object.is(r0[k], r1[k])) return false;
    if (Number.isFinite(z0[k]!) !== Number.isFinite(z1[k]!)) return false;
  }
  return true;
}

/** Copy one packed 3×3 covariance (6 doubles at offset o) from a to b. */
export function copy6(a: Float64Array, b: Float64Array, o: number): void {
  b[o] = a[o]!; b[o + 1] = a[o + 1]!; b[o + 2] = a[o + 2]!;
  b[o + 3] = a[o + 3]!; b[o + 4] = a[o + 4]!; b[o + 5] = a[o + 5]!;
}

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

export function allocateHistory(N: number, models: AxisModel[], shareHorizontal = false): FilterHistory {
  const P = models.map((m, a) => (shareHorizontal && a === 1 ? undefined : new Float64Array(N * covStride(m.n))));
  // north's covariances are east's array: only for histories that every pass writes with
  // horizontalShare true (north's covariance a copy of east's at every epoch, so one array holds both)
  if (shareHorizontal) {
    if (!(models.length >= 2 && models[0] === models[1] && models[0]!.n === 3)) throw new Error('allocateHistory: east and north cannot share');
    P[1] = P[0];
  }
  return historyOf(
    { N, nis: new Float64Array(N).fill(NaN), dof: new Uint8Array(N), threshold: new Float64Array(N).fill(NaN), accepted: new Uint8Array(N), extraQ: new Map(), logLik: new Float64Array(N), reacquired: [] },
    models.map((m) => new Float64Array(N * m.n)),
    P as Float64Array[],
  );
}

/**
 * A history with the per-epoch flags and statistics of `h` and the states x, P. Every history is
 * built by this one literal, so all share one object shape (a second shape makes the kernels'
 * property loads polymorphic: the benchmark's kernel after a session fell from 1.30 to 0.84 M epochs/s).
 */
export function historyOf(h: Omit<FilterHistory, 'x' | 'P'>, x: Float64Array[], P: Float64Array[]): FilterHistory {
  return { N: h.N, x, P, nis: h.nis, dof: h.dof, threshold: h.threshold, accepted: h.accepted, extraQ: h.extraQ, logLik: h.logLik, reacquired: h.reacquired };
}

/**
 * Remembers the last few distinct steps (Δt, q scale) of every axis with their F and Q, so regular
 * sampling does not recompute them every epoch. Several slots, since Unix times in seconds carry
 * rounding of ~1e-7 s: a regular 10 Hz log has two or three distinct Δt values, not one.
 * The caller's F[a], Q[a] are pointed at the slot's arrays instead of being copied from them (a
 * 10 Hz log alternates between its Δt values, and the copies were about a tenth of a pass); a step
 * that is not cached (re-acquisition noise) is computed into the axis's own arrays `ownF`, `ownQ`.
 * The slots hold what fillF, fillQ wrote, so results do not depend on the cache.
 */
export interface StepCache {
  slots: number;
  /** Per axis and slot: Δt and q scale of the step held (NaN: empty). */
  dt: Float64Array;
  qs: Float64Array;
  /** Per axis and slot: F and Q (n×n each). */
  F: Float64Array[];
  Q: Float64Array[];
  /** Per axis: F and Q of a step not cached. */
  ownF: Float64Array[];
  ownQ: Float64Array[];
  /** Per axis: the slot the caller's F[a], Q[a] point at now (−1: none). */
  current: Int32Array;
  /** Per axis: next slot to overwrite. */
  next: Int32Array;
}

const CACHE_SLOTS = 4;

export function makeStepCache(nAxes: number, dims?: number[]): StepCache {
  const nn = (a: number) => (dims ? dims[a]! * dims[a]! : 16);
  return {
    slots: CACHE_SLOTS,
    dt: new Float64Array(nAxes * CACHE_SLOTS).fill(NaN),
    qs: new Float64Array(nAxes * CACHE_SLOTS).fill(NaN),
    F: Array.from({ length: nAxes * CACHE_SLOTS }, (_, i) => new Float64Array(nn(Math.floor(i / CACHE_SLOTS)))),
    Q: Array.from({ length: nAxes * CACHE_SLOTS }, (_, i) => new Float64Array(nn(Math.floor(i / CACHE_SLOTS)))),
    ownF: Array.from({ length: nAxes }, (_, a) => new Float64Array(nn(a))),
    ownQ: Array.from({ length: nAxes }, (_, a) => new Float64Array(nn(a))),
    current: new Int32Array(nAxes).fill(-1),
    next: new Int32Array(nAxes),
  };
}

/**
 * Fill F and Q (with any recorded extra noise) of every axis for the step ending at epoch k. With a
 * cache whose arrays fit the models (n×n), F[a] and Q[a] are replaced by the cache's arrays (a slot's,
 * or the axis's own for a step with extra noise): read them again after the call, do not keep them.
 */
export function stepMatrices(models: AxisModel[], data: SegmentData, h: FilterHistory, k: number, qScale: Float64Array[] | null | undefined, F: Float64Array[], Q: Float64Array[], cache?: StepCache): void {
  const dt = data.tSec[k]! - data.tSec[k - 1]!;
  const extra = h.extraQ.size > 0 ? h.extraQ.get(k) : undefined;
  for (let a = 0; a < models.length; a++) {
    const m = models[a]!;
    const qs = qScale ? qScale[a]![k]! : 1;
    if (!cache || cache.ownF[a]!.length !== m.n * m.n) {
      // no usable cache: compute into the caller's arrays
      m.fillF(dt, F[a]!);
      m.fillQ(dt, Q[a]!, qs);
      if (extra) for (let i = 0; i < m.n; i++) Q[a]![i * m.n + i] += extra[a]![i]!;
      continue;
    }
    const base = a * cache.slots;
    if (!extra) {
      // the step of the last epoch again (regular sampling): F and Q already point at it; a slot is
      // filled only on a miss, so no other slot holds the same step
      const cur = cache.current[a]!;
      if (cur >= 0 && cache.dt[base + cur] === dt && cache.qs[base + cur] === qs) continue;
      let hit = -1;
      for (let s = 0; s < cache.slots; s++)
        if (cache.dt[base + s] === dt && cache.qs[base + s] === qs) {
          hit = s;
          break;
        }
      if (hit < 0) {
        // a miss: compute into the next slot
        hit = cache.next[a]!;
        cache.next[a] = (hit + 1) % cache.slots;
        cache.dt[base + hit] = dt;
        cache.qs[base + hit] = qs;
        m.fillF(dt, cache.F[base + hit]!);
        m.fillQ(dt, cache.Q[base + hit]!, qs);
      }
      F[a] = cache.F[base + hit]!;
      Q[a] = cache.Q[base + hit]!;
      cache.current[a] = hit;
      continue;
    }
    // an epoch with extra noise is not cached: the axis's own arrays, matching no slot
    const oF = cache.ownF[a]!, oQ = cache.ownQ[a]!;
    m.fillF(dt, oF);
    m.fillQ(dt, oQ, qs);
    const e = extra[a]!;
    for (let i = 0; i < m.n; i++) oQ[i * m.n + i] += e[i]!;
    F[a] = oF;
    Q[a] = oQ;
    cache.current[a] = -1;
  }
}

/**
 * F and Q of the step ending at epoch k, unless w.F, w.Q already hold it: regular sampling repeats
 * the step, so they are recomputed only when Δt changes, at a step with re-acquisition noise, or
 * always under a per-epoch q scale. `heldDt` is the Δt they hold (NaN: none, or not reusable);
 * returns the new one.
 */
export function ensureStep(models: AxisModel[], data: SegmentData, h: FilterHistory, k: number, qScale: Float64Array[] | null | undefined, F: Float64Array[], Q: Float64Array[], cache: StepCache, heldDt: number): number {
  const dt = data.tSec[k]! - data.tSec[k - 1]!;
  const extra = h.extraQ.size > 0 && h.extraQ.has(k);
  if (dt === heldDt && !extra) return heldDt;
  if (!extra && !qScale) {
    // a Δt seen before (a regular log alternates between two or three): every axis that holds it
    // with q scale 1 in the same slot (they fill their slots in step when no q scale is given)
    // points at that slot, what stepMatrices would do axis by axis
    const sl = cache.slots;
    let s = 0;
    while (s < sl && !(cache.dt[s] === dt && cache.qs[s] === 1)) s++;
    if (s < sl) {
      let all = true;
      for (let a = 0; a < models.length && all; a++) {
        const i = a * sl + s;
        all = cache.dt[i] === dt && cache.qs[i] === 1 && cache.ownF[a]!.length === models[a]!.n * models[a]!.n;
      }
      if (all) {
        for (let a = 0; a < models.length; a++) {
          F[a] = cache.F[a * sl + s]!;
          Q[a] = cache.Q[a * sl + s]!;
          cache.current[a] = s;
        }
        return dt;
      }
    }
  }
  stepMatrices(models, data, h, k, qScale, F, Q, cache);
  // a step with re-acquisition noise, or any step under a q scale, leaves F, Q reusable by none
  return qScale || extra ? NaN : dt;
}

/**
 * Re-run of an ungated pass (every `use` 0 or 2: no gate rejections, hence no re-acquisition) over a
 * history that holds the previous pass's filtered states, after the measurement use changed at the
 * epochs `changed` (ascending). The filter is a recursion: epochs before the first change, and the
 * epochs after a change once the new state equals the old one (|Δ| ≤ tol in every element; tol = 0:
 * bit for bit) up to the next change, would come out the same, so they are not recomputed.
 */
export interface FilterResume {
  changed: ArrayLike<number>;
  tol: number;
  /** Receives [first, last] epoch pairs (ascending, disjoint) of the epochs recomputed. */
  windows: number[];
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

/** The prior at the first epoch: position at the first fix (or 0), diffuse kinematics, stationary GM error. */
export function writePrior(models: AxisModel[], data: SegmentData, opt: FilterOptions, h: FilterHistory): void {
  for (let a = 0; a < models.length; a++) {
    const m = models[a]!;
    const n = m.n;
    const x = h.x[a]!;
    const P = h.P[a]!;
    x.fill(0, 0, n);
    P.fill(0, 0, covStride(n));
    const z0 = data.z[a]![0]!;
    x[0] = Number.isFinite(z0) ? z0 : 0;
    for (let i = 0; i < m.nMotion; i++) P[covIndex(n, i, i)] = opt.priorVar[i]!;
    if (m.iBias >= 0) P[covIndex(n, m.iBias, m.iBias)] = m.params.gm!.sigmaM ** 2;
  }
}

/**
 * Re-acquisition after the run of rejections runStart..k: records the extra process noise of the
 * step ending at runStart (per axis, from the largest miss over the run) and the epoch.
 */
function recordReacquisition(models: AxisModel[], data: SegmentData, h: FilterHistory, k: number, runStart: number): void {
  const nAx = models.length;
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
}

/**
 * Run the forward filter over a segment. The first epoch must carry a fix (use ≠ 0).
 * With `resume`, only the epochs affected by a change of use are recomputed (see FilterResume).
 */
export function forwardFilter(models: AxisModel[], data: SegmentData, opt: FilterOptions, history?: FilterHistory, resume?: FilterResume): FilterHistory {
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
  // the common case (every axis n = 3, north sharing east's covariances, no scales, no likelihood)
  // in its own loop; the same operations in the same order, so the same bits (see forwardShared3)
  if (share && !likelihood && !opt.qScale && !opt.rScale && (nAx === 2 || (nAx === 3 && models[2]!.n === 3)))
    return forwardShared3(models, data, opt, h, w, thresholds, k, resume);
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
    if (k === 0) writePrior(models, data, opt, h);
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
    if (runCount >= opt.reacquireAfter && runStart > 0 && !rewound.has(runStart) && runLasted(data.tSec, runStart, k, opt.reacquireAfterSec)) {
      // ---- re-acquire: rewind to the run start with inflated covariance ----
      rewound.add(runStart);
      recordReacquisition(models, data, h, k, runStart);
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

/** sameState for one 3-state axis a: every element of x (at xo) and P (at po) within tol of the saved sx, sP (NaN: not). */
function sameAxis3(x: Float64Array, P: Float64Array, xo: number, po: number, sx: Float64Array, sP: Float64Array, a: number, tol: number): boolean {
  const sa = a * 3, pa = a * 6;
  return Math.abs(x[xo]! - sx[sa]!) <= tol && Math.abs(x[xo + 1]! - sx[sa + 1]!) <= tol && Math.abs(x[xo + 2]! - sx[sa + 2]!) <= tol &&
    Math.abs(P[po]! - sP[pa]!) <= tol && Math.abs(P[po + 1]! - sP[pa + 1]!) <= tol && Math.abs(P[po + 2]! - sP[pa + 2]!) <= tol &&
    Math.abs(P[po + 3]! - sP[pa + 3]!) <= tol && Math.abs(P[po + 4]! - sP[pa + 4]!) <= tol && Math.abs(P[po + 5]! - sP[pa + 5]!) <= tol;
}

/** Save one 3-state axis a (x at xo, P at po) into sx, sP. */
function saveAxis3(x: Float64Array, P: Float64Array, xo: number, po: number, sx: Float64Array, sP: Float64Array, a: number): void {
  const sa = a * 3, pa = a * 6;
  sx[sa] = x[xo]!; sx[sa + 1] = x[xo + 1]!; sx[sa + 2] = x[xo + 2]!;
  sP[pa] = P[po]!; sP[pa + 1] = P[po + 1]!; sP[pa + 2] = P[po + 2]!;
  sP[pa + 3] = P[po + 3]!; sP[pa + 4] = P[po + 4]!; sP[pa + 5] = P[po + 5]!;
}

/**
 * forwardFilter's loop for its common case: every axis n = 3, north (1) sharing east's (0)
 * covariances (horizontalShare), no q or r scale, no likelihood; 2 axes, or 3 with the vertical.
 * The general loop's operations in its order, written for this case: the step matrices are looked
 * up only when Δt changes or at a step with re-acquisition noise (ensureStep would return at once
 * otherwise), east's innovation (P hᵀ, S) serves north too (the same P and r, so the same numbers),
 * the per-epoch buffers of the general loop are locals, and a re-run (resume) saves and compares
 * the 3-state axes written out. Bit for bit the general loop's result
 * (test/estimation/forward-filter-shared.test.ts compares it with the previous form, kept in
 * test/helpers/reference-track-filter.ts). Sources as forwardFilter's (Bar-Shalom et al. 2001 §5.4;
 * Kalman 1960; Joseph form: Grewal & Andrews 2015 §6).
 */
function forwardShared3(models: AxisModel[], data: SegmentData, opt: FilterOptions, h: FilterHistory, w: Work, thresholds: number[], kStart: number, resume?: FilterResume): FilterHistory {
  const N = data.N;
  const up = models.length === 3;
  const tSec = data.tSec, use = data.use;
  const zE = data.z[0]!, zN = data.z[1]!, zU = up ? data.z[2]! : zE;
  const rE = data.r[0]!, rU = up ? data.r[2]! : rE;
  const xE = h.x[0]!, xN = h.x[1]!, xU = up ? h.x[2]! : xE;
  const PE = h.P[0]!, PN = h.P[1]!, PU = up ? h.P[2]! : PE;
  // north's covariances are east's array (allocateHistory's shareHorizontal)
  const oneP = PN === PE;
  const hH = models[0]!.h, hV = up ? models[2]!.h : hH;
  const e0 = hH[0]!, e1 = hH[1]!, e2 = hH[2]!;
  const v0 = hV[0]!, v1 = hV[1]!, v2 = hV[2]!;
  const nisA = h.nis, dofA = h.dof, thrA = h.threshold, accepted = h.accepted, logLik = h.logLik;
  const rewound = new Set<number>();
  let lastDt = NaN;
  let runStart = -1;
  let runCount = 0;
  let k = kStart;
  // resume: the old state of the epoch being recomputed (x: 3 per axis, P: 6 per axis)
  const sx = new Float64Array(9);
  const sP = new Float64Array(18);
  const tol = resume ? resume.tol : 0;
  let ci = 0;
  let winStart = resume ? k : -1;
  while (k < N) {
    if (resume) {
      if (k > winStart) {
        // sameState at k − 1, written out for the 3-state axes
        const xo = (k - 1) * 3, po = (k - 1) * 6;
        const same = sameAxis3(xE, PE, xo, po, sx, sP, 0, tol) && sameAxis3(xN, PN, xo, po, sx, sP, 1, tol) && (!up || sameAxis3(xU, PU, xo, po, sx, sP, 2, tol));
        if (same) {
          // same state, same inputs up to the next change: skip to it
          resume.windows.push(winStart, k - 1);
          if (ci >= resume.changed.length) {
            winStart = -1;
            break;
          }
          k = resume.changed[ci]!;
          winStart = k;
        }
      }
      while (ci < resume.changed.length && resume.changed[ci]! <= k) ci++;
      if (use[k] === 1) throw new Error('forwardFilter: resume is for ungated passes (use 0 or 2)');
      const xo = k * 3, po = k * 6;
      saveAxis3(xE, PE, xo, po, sx, sP, 0);
      saveAxis3(xN, PN, xo, po, sx, sP, 1);
      if (up) saveAxis3(xU, PU, xo, po, sx, sP, 2);
    }
    const xk = k * 3, pk = k * 6;
    // ---- prediction (or prior at the first epoch) ----
    if (k === 0) writePrior(models, data, opt, h);
    else {
      // Δt of this step; F, Q already in place unless it changed or the step has re-acquisition noise
      const dt = tSec[k]! - tSec[k - 1]!;
      if (dt !== lastDt || (h.extraQ.size > 0 && h.extraQ.has(k))) lastDt = ensureStep(models, data, h, k, null, w.F, w.Q, w.cache, lastDt);
      // east: x⁻ = F x, P⁻ = F P Fᵀ + Q
      predict3p(w.F[0]!, w.Q[0]!, xE, xk - 3, PE, pk - 6, xE, xk, PE, pk);
      // north: its state (x⁻ = F x), east's covariance (nothing to copy where it is east's array, see allocateHistory)
      predictState3(w.F[1]!, xN, xk - 3, xN, xk);
      if (!oneP) copy6(PE, PN, pk);
      // up: x⁻ = F x, P⁻ = F P Fᵀ + Q
      if (up) predict3p(w.F[2]!, w.Q[2]!, xU, xk - 3, PU, pk - 6, xU, xk, PU, pk);
    }
    accepted[k] = 0;
    logLik[k] = 0;
    nisA[k] = NaN;
    dofA[k] = 0;
    thrA[k] = NaN;
    const u = use[k]!;
    if (u === 0) {
      k++;
      continue;
    }
    // ---- innovations and the joint gate ----
    let nis = 0;
    let dof = 0;
    // horizontal: east and north are measured together (horizontalShare); r · rScale = r (no scale)
    const ze = zE[k]!;
    const hasH = Number.isFinite(ze);
    let nuE = 0, nuN = 0, SH = NaN, wH0 = 0, wH1 = 0, wH2 = 0;
    if (hasH) {
      const r = rE[k]!;
      const p00 = PE[pk]!, p01 = PE[pk + 1]!, p02 = PE[pk + 2]!, p11 = PE[pk + 3]!, p12 = PE[pk + 4]!, p22 = PE[pk + 5]!;
      // P hᵀ
      const w0 = p00 * e0 + p01 * e1 + p02 * e2;
      const w1 = p01 * e0 + p11 * e1 + p12 * e2;
      const w2 = p02 * e0 + p12 * e1 + p22 * e2;
      wH0 = w0; wH1 = w1; wH2 = w2;
      // S = h P hᵀ + r (east's; north's is the same numbers)
      SH = r + e0 * w0 + e1 * w1 + e2 * w2;
      // ν = z − h x⁻
      nuE = ze - (e0 * xE[xk]! + e1 * xE[xk + 1]! + e2 * xE[xk + 2]!);
      nuN = zN[k]! - (e0 * xN[xk]! + e1 * xN[xk + 1]! + e2 * xN[xk + 2]!);
      // NIS = Σ ν²/S over independent axes
      nis += (nuE * nuE) / SH;
      dof++;
      nis += (nuN * nuN) / SH;
      dof++;
    }
    const zu = up ? zU[k]! : NaN;
    const hasU = up && Number.isFinite(zu);
    let nuU = 0, SU = NaN, rVk = 0, wV0 = 0, wV1 = 0, wV2 = 0;
    if (hasU) {
      rVk = rU[k]!;
      const p00 = PU[pk]!, p01 = PU[pk + 1]!, p02 = PU[pk + 2]!, p11 = PU[pk + 3]!, p12 = PU[pk + 4]!, p22 = PU[pk + 5]!;
      // P hᵀ
      const w0 = p00 * v0 + p01 * v1 + p02 * v2;
      const w1 = p01 * v0 + p11 * v1 + p12 * v2;
      const w2 = p02 * v0 + p12 * v1 + p22 * v2;
      wV0 = w0; wV1 = w1; wV2 = w2;
      // S = h P hᵀ + r
      SU = rVk + v0 * w0 + v1 * w1 + v2 * w2;
      // ν = z − h x⁻
      nuU = zu - (v0 * xU[xk]! + v1 * xU[xk + 1]! + v2 * xU[xk + 2]!);
      nis += (nuU * nuU) / SU;
      dof++;
    }
    if (dof === 0) {
      k++;
      continue;
    }
    const thr = thresholds[dof]!;
    nisA[k] = nis;
    dofA[k] = dof;
    thrA[k] = thr;
    if (u === 2 || nis <= thr) {
      // an axis whose S is not finite is not updated (as in the general loop)
      if (Number.isFinite(SH)) {
        {
          // updateJoseph3p written out: K = P hᵀ S⁻¹, x ← x + K ν, P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
          const w0 = wH0, w1 = wH1, w2 = wH2;
          // K = P hᵀ S⁻¹
          const k0 = w0 / SH, k1 = w1 / SH, k2 = w2 / SH;
          // x ← x + K ν
          xE[xk] += k0 * nuE;
          xE[xk + 1] += k1 * nuE;
          xE[xk + 2] += k2 * nuE;
          // h P hᵀ recomputed from w (= S − r up to rounding), as updateJoseph3p
          const c = e0 * w0 + e1 * w1 + e2 * w2 + rE[k]!;
          // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
          const n00 = PE[pk]! - 2 * k0 * w0 + c * k0 * k0;
          const n01 = PE[pk + 1]! - k0 * w1 - w0 * k1 + c * k0 * k1;
          const n02 = PE[pk + 2]! - k0 * w2 - w0 * k2 + c * k0 * k2;
          const n11 = PE[pk + 3]! - 2 * k1 * w1 + c * k1 * k1;
          const n12 = PE[pk + 4]! - k1 * w2 - w1 * k2 + c * k1 * k2;
          const n22 = PE[pk + 5]! - 2 * k2 * w2 + c * k2 * k2;
          PE[pk] = n00; PE[pk + 1] = n01; PE[pk + 2] = n02;
          PE[pk + 3] = n11; PE[pk + 4] = n12; PE[pk + 5] = n22;
        }
        // K = P hᵀ S⁻¹, x ← x + K ν (north, with east's P hᵀ and S); P: east's updated one
        xN[xk] += (wH0 / SH) * nuN;
        xN[xk + 1] += (wH1 / SH) * nuN;
        xN[xk + 2] += (wH2 / SH) * nuN;
        if (!oneP) copy6(PE, PN, pk);
      }
      if (Number.isFinite(SU))
        {
          // updateJoseph3p written out: K = P hᵀ S⁻¹, x ← x + K ν, P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
          const w0 = wV0, w1 = wV1, w2 = wV2;
          // K = P hᵀ S⁻¹
          const k0 = w0 / SU, k1 = w1 / SU, k2 = w2 / SU;
          // x ← x + K ν
          xU[xk] += k0 * nuU;
          xU[xk + 1] += k1 * nuU;
          xU[xk + 2] += k2 * nuU;
          // h P hᵀ recomputed from w (= S − r up to rounding), as updateJoseph3p
          const c = v0 * w0 + v1 * w1 + v2 * w2 + rVk;
          // P ← P − K wᵀ − w Kᵀ + (h P hᵀ + r) K Kᵀ
          const n00 = PU[pk]! - 2 * k0 * w0 + c * k0 * k0;
          const n01 = PU[pk + 1]! - k0 * w1 - w0 * k1 + c * k0 * k1;
          const n02 = PU[pk + 2]! - k0 * w2 - w0 * k2 + c * k0 * k2;
          const n11 = PU[pk + 3]! - 2 * k1 * w1 + c * k1 * k1;
          const n12 = PU[pk + 4]! - k1 * w2 - w1 * k2 + c * k1 * k2;
          const n22 = PU[pk + 5]! - 2 * k2 * w2 + c * k2 * k2;
          PU[pk] = n00; PU[pk + 1] = n01; PU[pk + 2] = n02;
          PU[pk + 3] = n11; PU[pk + 4] = n12; PU[pk + 5] = n22;
        }
      accepted[k] = 1;
      runStart = -1;
      runCount = 0;
      k++;
      continue;
    }
    if (runCount === 0) runStart = k;
    runCount++;
    if (runCount >= opt.reacquireAfter && runStart > 0 && !rewound.has(runStart) && runLasted(data.tSec, runStart, k, opt.reacquireAfterSec)) {
      // ---- re-acquire: rewind to the run start with inflated covariance ----
      rewound.add(runStart);
      recordReacquisition(models, data, h, k, runStart);
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

/** Whether the run of rejections runStart..k (runStart > 0) has lasted minSec, from the epoch before it to epoch k (minSec absent or 0: always). */
function runLasted(tSec: Float64Array, runStart: number, k: number, minSec: number | undefined): boolean {
  return !minSec || tSec[k]! - tSec[runStart - 1]! >= minSec;
}

/** Sum of the per-epoch log-likelihood contributions. */
export function totalLogLik(h: FilterHistory): number {
  let s = 0;
  for (let k = 0; k < h.N; k++) s += h.logLik[k]!;
  return s;
}
