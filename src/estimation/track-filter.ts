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
import { checkHistory, checkSegment, covIndex, covStride, type FilterHistory, type SegmentData } from './segment.js';
import { innovation, makeScratch, predict, updateJoseph, type KalmanScratch } from './kalman.js';
import { innovation3p, predict3p, predictState3, updateJoseph3p, updateState3 } from './kalman3.js';

export { covIndex, covStride, type FilterHistory, type SegmentData };


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


const LOG_2PI = Math.log(2 * Math.PI);



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
      if (extra) for (let i = 0; i < m.n; i++) Q[a]![i * m.n + i] = Q[a]![i * m.n + i]! + extra[a]![i]!;
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
    for (let i = 0; i < m.n; i++) oQ[i * m.n + i] = oQ[i * m.n + i]! + e[i]!;
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
  const h = history ?? allocateHistory(data.N, models);
  if (resume && !history) throw new Error('forwardFilter: resume needs the previous history');
  checkSegment('forwardFilter', models, data);
  checkHistory('forwardFilter', models, h, data.N);
  const thresholds = [0, 0, 0, 0].map((_, d) => (d === 0 ? Infinity : chiSquareQuantile(opt.gateProbability, d)));
  // north takes east's covariances (predict and update its state only)
  const share = horizontalShare(models, data, opt.rScale, opt.qScale);
  const nAx = models.length;
  // the common case (every axis n = 3, north sharing east's covariances, no scales, no likelihood)
  // has its own epoch steps: the same kernels on the same numbers, so the same bits
  const steps: EpochSteps =
    share && opt.likelihood !== true && !opt.qScale && !opt.rScale && (nAx === 2 || (nAx === 3 && models[2]!.n === 3))
      ? new Shared3Steps(models, data, h)
      : new GeneralSteps(models, data, opt, h, share);
  return forwardPass(steps, models, data, opt, h, thresholds, resume);
}

/**
 * The prediction, innovation and update of one epoch over all axes, and the save/compare of an
 * epoch's state for a re-run; forwardPass holds the gate, re-acquisition and re-run logic.
 */
interface EpochSteps {
  /** x⁻ = F x, P⁻ = F P Fᵀ + Q from epoch k − 1 to k, every axis. */
  predict(k: number): void;
  /** Innovations of epoch k: returns the degrees of freedom (axes measured) and leaves NIS and Σ(log 2π + log S) in nis, ll. */
  measure(k: number): number;
  /** Kalman update of epoch k with the innovations of measure(k). */
  update(k: number): void;
  /** Keep epoch k's state for sameAsSaved. */
  save(k: number): void;
  /** Whether epoch k's state equals the one saved, within tol. */
  sameAsSaved(k: number, tol: number): boolean;
  nis: number;
  ll: number;
}

/** Any axes (n = 3 packed kernels, else the generic ones), q and r scales, the likelihood. */
class GeneralSteps implements EpochSteps {
  nis = 0;
  ll = 0;
  private readonly w: Work;
  private readonly rScale: number[];
  private readonly likelihood: boolean;
  private readonly sx: Float64Array[];
  private readonly sP: Float64Array[];
  /** Δt of the step whose F, Q are in w.F, w.Q (NaN: none, or not reusable; see ensureStep). */
  private lastDt = NaN;

  constructor(
    private readonly models: AxisModel[],
    private readonly data: SegmentData,
    private readonly opt: FilterOptions,
    private readonly h: FilterHistory,
    private readonly share: boolean,
  ) {
    this.w = makeWork(models);
    this.rScale = opt.rScale ?? models.map(() => 1);
    this.likelihood = opt.likelihood === true;
    this.sx = models.map((m) => new Float64Array(m.n));
    this.sP = models.map((m) => new Float64Array(covStride(m.n)));
  }

  predict(k: number): void {
    const { models, h, w } = this;
    this.lastDt = ensureStep(models, this.data, h, k, this.opt.qScale, w.F, w.Q, w.cache, this.lastDt);
    for (let a = 0; a < models.length; a++) {
      const n = models[a]!.n;
      if (this.share && a === 1) {
        predictState3(w.F[1]!, h.x[1]!, (k - 1) * 3, h.x[1]!, k * 3);
        copy6(h.P[0]!, h.P[1]!, k * 6);
      } else if (n === 3) predict3p(w.F[a]!, w.Q[a]!, h.x[a]!, (k - 1) * 3, h.P[a]!, (k - 1) * 6, h.x[a]!, k * 3, h.P[a]!, k * 6);
      else predict(n, w.F[a]!, w.Q[a]!, h.x[a]!, (k - 1) * n, h.P[a]!, (k - 1) * n * n, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!);
    }
  }

  measure(k: number): number {
    const { models, h, w, data } = this;
    let nis = 0;
    let dof = 0;
    let ll = 0;
    for (let a = 0; a < models.length; a++) {
      const z = data.z[a]![k]!;
      if (!Number.isFinite(z)) {
        w.S[a] = NaN;
        continue;
      }
      const m = models[a]!;
      const n = m.n;
      const r = data.r[a]![k]! * this.rScale[a]!;
      // ν = z − h x⁻, S = h P hᵀ + r (P hᵀ left in the axis's scratch for the update)
      const nu = n === 3 ? innovation3p(m.h, z, r, h.x[a]!, k * 3, h.P[a]!, k * 6, w.s[a]!.w, w.out1) : innovation(n, m.h, z, r, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!, w.out1);
      const S = w.out1[0]!;
      w.nu[a] = nu;
      w.S[a] = S;
      // NIS = Σ ν²/S over independent axes
      nis += (nu * nu) / S;
      if (this.likelihood) ll += LOG_2PI + Math.log(S);
      dof++;
    }
    this.nis = nis;
    this.ll = ll;
    return dof;
  }

  update(k: number): void {
    const { models, h, w, data } = this;
    for (let a = 0; a < models.length; a++) {
      // an axis whose S is not finite is not updated
      if (!Number.isFinite(w.S[a]!)) continue;
      const m = models[a]!;
      const n = m.n;
      const r = data.r[a]![k]! * this.rScale[a]!;
      if (this.share && a === 1) {
        // north: x ← x + K ν with east's gain; P: east's updated one
        updateState3(w.nu[1]!, w.S[1]!, w.s[1]!.w, h.x[1]!, k * 3);
        copy6(h.P[0]!, h.P[1]!, k * 6);
      } else if (n === 3) updateJoseph3p(m.h, w.nu[a]!, w.S[a]!, r, w.s[a]!.w, h.x[a]!, k * 3, h.P[a]!, k * 6);
      else updateJoseph(n, m.h, w.nu[a]!, w.S[a]!, r, h.x[a]!, k * n, h.P[a]!, k * n * n, w.s[a]!);
    }
  }

  save(k: number): void {
    const { models, h } = this;
    for (let a = 0; a < models.length; a++) {
      const n = models[a]!.n;
      for (let i = 0; i < n; i++) this.sx[a]![i] = h.x[a]![k * n + i]!;
      const ps = covStride(n);
      for (let i = 0; i < ps; i++) this.sP[a]![i] = h.P[a]![k * ps + i]!;
    }
  }

  sameAsSaved(k: number, tol: number): boolean {
    return sameState(this.models, this.h, k, this.sx, this.sP, tol);
  }
}

/**
 * The common case: every axis n = 3, north (1) sharing east's (0) covariances (horizontalShare), no
 * q or r scale, no likelihood; 2 axes, or 3 with the vertical. The step matrices are looked up only
 * when Δt changes or at a step with re-acquisition noise (ensureStep would return at once otherwise),
 * and east's innovation (P hᵀ, S) serves north too (the same P and r, so the same numbers): the
 * general steps' result bit for bit (test/estimation/forward-filter.test.ts).
 */
class Shared3Steps implements EpochSteps {
  nis = 0;
  ll = 0;
  private readonly up: boolean;
  private readonly zE: Float64Array;
  private readonly zN: Float64Array;
  private readonly zU: Float64Array;
  private readonly rE: Float64Array;
  private readonly rU: Float64Array;
  private readonly xE: Float64Array;
  private readonly xN: Float64Array;
  private readonly xU: Float64Array;
  private readonly PE: Float64Array;
  private readonly PN: Float64Array;
  private readonly PU: Float64Array;
  /** North's covariances are east's array (allocateHistory's shareHorizontal): nothing to copy. */
  private readonly oneP: boolean;
  private readonly hH: Float64Array;
  private readonly hV: Float64Array;
  private readonly w: Work;
  /** P hᵀ of east (north's too) and up, from innovation3p for updateJoseph3p; S in out1. */
  private readonly wH = new Float64Array(3);
  private readonly wV = new Float64Array(3);
  private readonly out1 = new Float64Array(1);
  private nuE = 0;
  private nuN = 0;
  private SH = NaN;
  private nuU = 0;
  private SU = NaN;
  private lastDt = NaN;
  /** The saved state of one epoch (x: 3 per axis, P: 6 per axis). */
  private readonly sx = new Float64Array(9);
  private readonly sP = new Float64Array(18);

  constructor(
    private readonly models: AxisModel[],
    private readonly data: SegmentData,
    private readonly h: FilterHistory,
  ) {
    const up = models.length === 3;
    this.up = up;
    this.zE = data.z[0]!; this.zN = data.z[1]!; this.zU = up ? data.z[2]! : this.zE;
    this.rE = data.r[0]!; this.rU = up ? data.r[2]! : this.rE;
    this.xE = h.x[0]!; this.xN = h.x[1]!; this.xU = up ? h.x[2]! : this.xE;
    this.PE = h.P[0]!; this.PN = h.P[1]!; this.PU = up ? h.P[2]! : this.PE;
    this.oneP = this.PN === this.PE;
    this.hH = models[0]!.h;
    this.hV = up ? models[2]!.h : this.hH;
    this.w = makeWork(models);
  }

  predict(k: number): void {
    const { w, h } = this;
    const xk = k * 3, pk = k * 6;
    // Δt of this step; F, Q already in place unless it changed or the step has re-acquisition noise
    const dt = this.data.tSec[k]! - this.data.tSec[k - 1]!;
    if (dt !== this.lastDt || (h.extraQ.size > 0 && h.extraQ.has(k))) this.lastDt = ensureStep(this.models, this.data, h, k, null, w.F, w.Q, w.cache, this.lastDt);
    // east: x⁻ = F x, P⁻ = F P Fᵀ + Q
    predict3p(w.F[0]!, w.Q[0]!, this.xE, xk - 3, this.PE, pk - 6, this.xE, xk, this.PE, pk);
    // north: its state (x⁻ = F x), east's covariance
    predictState3(w.F[1]!, this.xN, xk - 3, this.xN, xk);
    if (!this.oneP) copy6(this.PE, this.PN, pk);
    // up: x⁻ = F x, P⁻ = F P Fᵀ + Q
    if (this.up) predict3p(w.F[2]!, w.Q[2]!, this.xU, xk - 3, this.PU, pk - 6, this.xU, xk, this.PU, pk);
  }

  measure(k: number): number {
    const xk = k * 3, pk = k * 6;
    let nis = 0;
    let dof = 0;
    const ze = this.zE[k]!;
    this.SH = NaN;
    this.SU = NaN;
    if (Number.isFinite(ze)) {
      // ν = z − h x⁻, S = h P hᵀ + r (east's; north's S and P hᵀ are the same numbers)
      const nuE = innovation3p(this.hH, ze, this.rE[k]!, this.xE, xk, this.PE, pk, this.wH, this.out1);
      const SH = this.out1[0]!;
      const hH = this.hH, xN = this.xN;
      const nuN = this.zN[k]! - (hH[0]! * xN[xk]! + hH[1]! * xN[xk + 1]! + hH[2]! * xN[xk + 2]!);
      // NIS = Σ ν²/S over independent axes
      nis += (nuE * nuE) / SH;
      dof++;
      nis += (nuN * nuN) / SH;
      dof++;
      this.nuE = nuE;
      this.nuN = nuN;
      this.SH = SH;
    }
    const zu = this.up ? this.zU[k]! : NaN;
    if (this.up && Number.isFinite(zu)) {
      const nuU = innovation3p(this.hV, zu, this.rU[k]!, this.xU, xk, this.PU, pk, this.wV, this.out1);
      const SU = this.out1[0]!;
      nis += (nuU * nuU) / SU;
      dof++;
      this.nuU = nuU;
      this.SU = SU;
    }
    this.nis = nis;
    return dof;
  }

  update(k: number): void {
    const xk = k * 3, pk = k * 6;
    // an axis whose S is not finite is not updated
    if (Number.isFinite(this.SH)) {
      // east: x ← x + K ν, P ← (I − K h) P (I − K h)ᵀ + K r Kᵀ (Joseph form)
      updateJoseph3p(this.hH, this.nuE, this.SH, this.rE[k]!, this.wH, this.xE, xk, this.PE, pk);
      // north: x ← x + K ν with east's P hᵀ and S; P: east's updated one
      updateState3(this.nuN, this.SH, this.wH, this.xN, xk);
      if (!this.oneP) copy6(this.PE, this.PN, pk);
    }
    // up: Joseph form as east
    if (Number.isFinite(this.SU)) updateJoseph3p(this.hV, this.nuU, this.SU, this.rU[k]!, this.wV, this.xU, xk, this.PU, pk);
  }

  save(k: number): void {
    const xo = k * 3, po = k * 6;
    saveAxis3(this.xE, this.PE, xo, po, this.sx, this.sP, 0);
    saveAxis3(this.xN, this.PN, xo, po, this.sx, this.sP, 1);
    if (this.up) saveAxis3(this.xU, this.PU, xo, po, this.sx, this.sP, 2);
  }

  sameAsSaved(k: number, tol: number): boolean {
    const xo = k * 3, po = k * 6;
    return sameAxis3(this.xE, this.PE, xo, po, this.sx, this.sP, 0, tol) && sameAxis3(this.xN, this.PN, xo, po, this.sx, this.sP, 1, tol) && (!this.up || sameAxis3(this.xU, this.PU, xo, po, this.sx, this.sP, 2, tol));
  }
}

/**
 * The forward loop over epochs, for either kind of epoch steps: predict, the joint chi-square gate
 * on the NIS of each fix (Bar-Shalom, Li, Kirubarajan 2001 §5.4), update (Kalman 1960; Joseph form:
 * Grewal & Andrews 2015 §6), re-acquisition after a lasting run of rejections, and with `resume`
 * the skip over epochs whose state is unchanged.
 */
function forwardPass(steps: EpochSteps, models: AxisModel[], data: SegmentData, opt: FilterOptions, h: FilterHistory, thresholds: number[], resume?: FilterResume): FilterHistory {
  const N = data.N;
  const likelihood = opt.likelihood === true;
  const nisA = h.nis, dofA = h.dof, thrA = h.threshold, accepted = h.accepted, logLik = h.logLik;
  const rewound = new Set<number>();
  let runStart = -1;
  let runCount = 0;
  let k = 0;
  // resume: the next change not yet reached, the window's first epoch
  let ci = 0;
  let winStart = -1;
  if (resume) {
    if (resume.changed.length === 0) return h;
    k = resume.changed[0]!;
    winStart = k;
  }
  while (k < N) {
    if (resume) {
      if (k > winStart && steps.sameAsSaved(k - 1, resume.tol)) {
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
      steps.save(k);
    }
    // ---- prediction (or prior at the first epoch) ----
    if (k === 0) writePrior(models, data, opt, h);
    else steps.predict(k);
    accepted[k] = 0;
    logLik[k] = 0;
    nisA[k] = NaN;
    dofA[k] = 0;
    thrA[k] = NaN;
    const use = data.use[k]!;
    if (use === 0) {
      k++;
      continue;
    }
    // ---- innovations and the joint gate ----
    const dof = steps.measure(k);
    if (dof === 0) {
      k++;
      continue;
    }
    const nis = steps.nis;
    const thr = thresholds[dof]!;
    nisA[k] = nis;
    dofA[k] = dof;
    thrA[k] = thr;
    if (use === 2 || nis <= thr) {
      steps.update(k);
      accepted[k] = 1;
      if (likelihood) logLik[k] = -0.5 * (steps.ll + nis);
      runStart = -1;
      runCount = 0;
      k++;
      continue;
    }
    // rejected: capped likelihood contribution keeps outliers from dominating calibration
    if (likelihood) logLik[k] = -0.5 * (steps.ll + thr);
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
