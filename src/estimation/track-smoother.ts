/**
 * Backward Rauch–Tung–Striebel pass over a segment's forward history, in place (the filtered
 * estimate of epoch k is replaced by the smoothed one). Uses the same step matrices as the forward
 * pass, including the extra noise recorded at re-acquisitions.
 * Source: Rauch, Tung, Striebel (1965); Särkkä (2013) Theorem 8.2.
 */
import { checkHistory, checkSegment } from './segment.js';
import type { AxisModel } from '../models/axis-model.js';
import { NumericalError } from '../errors.js';
import { makeScratch } from './kalman.js';
import { makeRtsScratch, rtsStep } from './rts.js';
import { rtsState3, rtsState3From, rtsStep3p, rtsStep3pFrom } from './kalman3.js';
import { copy6, covStride, ensureStep, makeStepCache, type FilterHistory, type SegmentData } from './track-filter.js';

/**
 * Whether the smoother may ever give the north axis (1) the east axis's (0) gains and covariances:
 * the same n = 3 model object and process-noise scale (so the same F and Q at every step). It then
 * does so at each epoch k whose covariances of the two axes are the same numbers, filtered at k and
 * smoothed at k + 1 (sameCov6; those are the only covariances the RTS step k reads): equal inputs
 * give equal outputs, so the result is the one of two separate computations. Checking the epochs
 * the pass computes, instead of every epoch of the histories before each pass, is what lets a
 * windowed re-run cost its windows (the whole-history check was ~0.6 s of a 1M-fix session).
 */
function smootherCanShare(models: AxisModel[], qScale: Float64Array[] | null | undefined): boolean {
  if (models.length < 2 || models[0] !== models[1] || models[0]!.n !== 3) return false;
  return !(qScale && qScale[0] !== qScale[1]);
}

/** Whether the packed covariances (6 doubles at offset o) of a and b are the same numbers (Object.is on each). */
export function sameCov6(a: Float64Array, b: Float64Array, o: number): boolean {
  return Object.is(a[o], b[o]) && Object.is(a[o + 1], b[o + 1]) && Object.is(a[o + 2], b[o + 2]) &&
    Object.is(a[o + 3], b[o + 3]) && Object.is(a[o + 4], b[o + 4]) && Object.is(a[o + 5], b[o + 5]);
}

/**
 * The RTS step of every axis at epoch k of h (in place, from k + 1), F and Q of the step k → k + 1
 * in place. With `share`, north takes east's gain (gT) and smoothed covariance (see smootherCanShare).
 */
function rtsEpoch(models: AxisModel[], F: Float64Array[], Q: Float64Array[], h: FilterHistory, k: number, share: boolean, gT: Float64Array, rs: ReturnType<typeof makeRtsScratch>[]): void {
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    if (share && a === 1) {
      rtsState3(F[1]!, gT, h.x[1]!, k * 3, (k + 1) * 3);
      copy6(h.P[0]!, h.P[1]!, k * 6);
      continue;
    }
    const ok = n === 3
      ? rtsStep3p(F[a]!, Q[a]!, h.x[a]!, k * 3, (k + 1) * 3, h.P[a]!, k * 6, (k + 1) * 6, share && a === 0 ? gT : undefined)
      : rtsStep(n, F[a]!, Q[a]!, h.x[a]!, k * n, (k + 1) * n, h.P[a]!, k * n * n, (k + 1) * n * n, rs[a]!);
    if (!ok) throw new NumericalError(`smoother: predicted covariance not positive definite at epoch ${k + 1}`);
  }
}

export function smoothInPlace(models: AxisModel[], data: SegmentData, h: FilterHistory, qScale?: Float64Array[] | null): void {
  checkSegment('smoothInPlace', models, data);
  checkHistory('smoothInPlace', models, h, data.N);
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const rs = models.map((m) => makeRtsScratch(m.n, makeScratch(m.n)));
  const cache = makeStepCache(models.length, models.map((m) => m.n));
  // Δt whose F, Q are in place (see ensureStep)
  let lastDt = NaN;
  const canShare = smootherCanShare(models, qScale);
  const gT = new Float64Array(9);
  const P0 = h.P[0]!, P1 = h.P[1] ?? P0;
  // whether the two horizontal covariances at k + 1 (smoothed) are the same numbers
  let nextSame = canShare && h.N > 0 && sameCov6(P0, P1, (h.N - 1) * 6);
  for (let k = h.N - 2; k >= 0; k--) {
    lastDt = ensureStep(models, data, h, k + 1, qScale, F, Q, cache, lastDt);
    const share = nextSame && sameCov6(P0, P1, k * 6);
    rtsEpoch(models, F, Q, h, k, share, gT, rs);
    // shared: north's covariance at k is a copy of east's
    nextSame = share || (canShare && sameCov6(P0, P1, k * 6));
  }
}

/**
 * Smoothed states of the filtered history `f` into `s` (out of place: `f` keeps the filtered values,
 * for a later re-run with resmoothWindows). Same arithmetic as smoothInPlace on a copy.
 */
export function smoothInto(models: AxisModel[], data: SegmentData, f: FilterHistory, s: FilterHistory, qScale?: Float64Array[] | null): void {
  checkSegment('smoothInto', models, data);
  checkHistory('smoothInto', models, f, data.N);
  checkHistory('smoothInto', models, s, data.N);
  const nAx = models.length;
  if (smootherCanShare(models, qScale) && (nAx === 2 || (nAx === 3 && models[2]!.n === 3)) && f.N > 0) return smoothIntoShared3(models, data, f, s, qScale);
  for (let a = 0; a < models.length; a++) {
    s.x[a]!.set(f.x[a]!);
    s.P[a]!.set(f.P[a]!);
  }
  s.extraQ = f.extraQ;
  smoothInPlace(models, data, s, qScale);
}

/**
 * After forwardFilter re-ran the filter over `windows` ([first, last] pairs, ascending; the filtered
 * states elsewhere are unchanged), update the smoothed states `s` of the previous pass. RTS:
 * xˢₖ depends on the filtered epoch k and on xˢₖ₊₁ only, so the backward pass recomputes an epoch
 * when it lies in a window or when the smoothed epoch after it changed, and skips the rest (an epoch
 * counts as unchanged when every element of x and P is within tol of the old value; tol = 0: bit for
 * bit, and then the result is the one of a full pass). `changedOut` receives [first, last] pairs
 * (descending) of the epochs recomputed. Returns the number of epochs recomputed.
 */
export function resmoothWindows(
  models: AxisModel[],
  data: SegmentData,
  f: FilterHistory,
  s: FilterHistory,
  windows: number[],
  qScale: Float64Array[] | null | undefined,
  tol: number,
  changedOut: number[],
): number {
  checkSegment('resmoothWindows', models, data);
  checkHistory('resmoothWindows', models, f, data.N);
  checkHistory('resmoothWindows', models, s, data.N);
  const N = f.N;
  const nAx = models.length;
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const rs = models.map((m) => makeRtsScratch(m.n, makeScratch(m.n)));
  const cache = makeStepCache(nAx, models.map((m) => m.n));
  const sx = models.map((m) => new Float64Array(m.n));
  const sP = models.map((m) => new Float64Array(covStride(m.n)));
  s.extraQ = f.extraQ;
  // as in smoothInPlace: F, Q of the last step stay in place for the next one with the same Δt
  let lastDt = NaN;
  const canShare = smootherCanShare(models, qScale);
  const sP0 = s.P[0]!, sP1 = s.P[1] ?? sP0;
  // the RTS step at k + 1 was computed just before this epoch's, with north sharing east's covariance
  let sharedNext = false;
  const gT = new Float64Array(9);
  if (canShare && (nAx === 2 || (nAx === 3 && models[2]!.n === 3))) return resmoothShared3(models, data, f, s, windows, qScale, tol, changedOut, F, Q, cache, gT);
  let wi = windows.length / 2 - 1;
  let dirty = false;
  let count = 0;
  let runTop = -1;
  let k = N - 1;
  while (k >= 0) {
    while (wi >= 0 && windows[2 * wi]! > k) wi--;
    const inWin = wi >= 0 && k <= windows[2 * wi + 1]!;
    if (!dirty && !inWin) {
      if (runTop >= 0) changedOut.push(runTop, k + 1);
      runTop = -1;
      if (wi < 0) break;
      // clean: jump to the last epoch of the next window below
      k = windows[2 * wi + 1]!;
      sharedNext = false;
      continue;
    }
    if (runTop < 0) runTop = k;
    // keep the smoothed state of k, put the filtered one back for the RTS step
    saveAndRestoreFiltered(models, f, s, k, sx, sP);
    if (k < N - 1) {
      lastDt = ensureStep(models, data, s, k + 1, qScale, F, Q, cache, lastDt);
      // filtered covariances at k (just restored) and smoothed ones at k + 1 equal (see smootherCanShare)
      const share: boolean = canShare && (sharedNext || sameCov6(sP0, sP1, (k + 1) * 6)) && sameCov6(sP0, sP1, k * 6);
      rtsEpoch(models, F, Q, s, k, share, gT, rs);
      sharedNext = share;
    } else sharedNext = false;
    const same = sameAsSaved(models, s, k, sx, sP, tol);
    dirty = !same;
    count++;
    k--;
  }
  if (runTop >= 0) changedOut.push(runTop, Math.max(k + 1, 0));
  return count;
}

/** Save epoch k's smoothed state of every axis into sx, sP and put the filtered one (from f) in its place. */
function saveAndRestoreFiltered(models: AxisModel[], f: FilterHistory, s: FilterHistory, k: number, sx: Float64Array[], sP: Float64Array[]): void {
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    const x = s.x[a]!, P = s.P[a]!, fx = f.x[a]!, fP = f.P[a]!, ox = sx[a]!, oP = sP[a]!;
    if (n === 3) {
      // the loops below written out for n = 3 (3 states, 6 packed covariance elements)
      const xk = k * 3, Pk = k * 6;
      ox[0] = x[xk]!; ox[1] = x[xk + 1]!; ox[2] = x[xk + 2]!;
      x[xk] = fx[xk]!; x[xk + 1] = fx[xk + 1]!; x[xk + 2] = fx[xk + 2]!;
      oP[0] = P[Pk]!; oP[1] = P[Pk + 1]!; oP[2] = P[Pk + 2]!; oP[3] = P[Pk + 3]!; oP[4] = P[Pk + 4]!; oP[5] = P[Pk + 5]!;
      P[Pk] = fP[Pk]!; P[Pk + 1] = fP[Pk + 1]!; P[Pk + 2] = fP[Pk + 2]!; P[Pk + 3] = fP[Pk + 3]!; P[Pk + 4] = fP[Pk + 4]!; P[Pk + 5] = fP[Pk + 5]!;
      continue;
    }
    const nn = covStride(n);
    const xk = k * n, Pk = k * nn;
    for (let i = 0; i < n; i++) {
      ox[i] = x[xk + i]!;
      x[xk + i] = fx[xk + i]!;
    }
    for (let i = 0; i < nn; i++) {
      oP[i] = P[Pk + i]!;
      P[Pk + i] = fP[Pk + i]!;
    }
  }
}

/** Whether epoch k's smoothed state of every axis equals the saved one within tol. */
function sameAsSaved(models: AxisModel[], s: FilterHistory, k: number, sx: Float64Array[], sP: Float64Array[], tol: number): boolean {
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    const nn = covStride(n);
    const x = s.x[a]!, P = s.P[a]!, ox = sx[a]!, oP = sP[a]!;
    const xk = k * n, Pk = k * nn;
    if (n === 3) {
      const same =
        Math.abs(x[xk]! - ox[0]!) <= tol && Math.abs(x[xk + 1]! - ox[1]!) <= tol && Math.abs(x[xk + 2]! - ox[2]!) <= tol &&
        Math.abs(P[Pk]! - oP[0]!) <= tol && Math.abs(P[Pk + 1]! - oP[1]!) <= tol && Math.abs(P[Pk + 2]! - oP[2]!) <= tol &&
        Math.abs(P[Pk + 3]! - oP[3]!) <= tol && Math.abs(P[Pk + 4]! - oP[4]!) <= tol && Math.abs(P[Pk + 5]! - oP[5]!) <= tol;
      if (!same) return false;
      continue;
    }
    for (let i = 0; i < n; i++) if (!(Math.abs(x[xk + i]! - ox[i]!) <= tol)) return false;
    for (let i = 0; i < nn; i++) if (!(Math.abs(P[Pk + i]! - oP[i]!) <= tol)) return false;
  }
  return true;
}

/**
 * resmoothWindows for its common case: every axis n = 3 and east/north able to share (see
 * smootherCanShare), 2 axes or 3. The same epochs in the same order and the same decisions; per
 * epoch, instead of copying the filtered epoch into `s` and smoothing it in place, the RTS step
 * reads it from `f` (rtsStep3pFrom, rtsState3From: the same operations), and the old smoothed
 * values are kept in locals for the comparison. Bit for bit the general loop's result
 * (test/estimation/smoother-share.test.ts and one-horizontal-cov.test.ts).
 */
function resmoothShared3(
  models: AxisModel[],
  data: SegmentData,
  f: FilterHistory,
  s: FilterHistory,
  windows: number[],
  qScale: Float64Array[] | null | undefined,
  tol: number,
  changedOut: number[],
  F: Float64Array[],
  Q: Float64Array[],
  cache: ReturnType<typeof makeStepCache>,
  gT: Float64Array,
): number {
  const N = f.N;
  const up = models.length === 3;
  const fxE = f.x[0]!, fxN = f.x[1]!, fxU = up ? f.x[2]! : fxE;
  const fPE = f.P[0]!, fPN = f.P[1]!, fPU = up ? f.P[2]! : fPE;
  const xE = s.x[0]!, xN = s.x[1]!, xU = up ? s.x[2]! : xE;
  const PE = s.P[0]!, PN = s.P[1]!, PU = up ? s.P[2]! : PE;
  // old smoothed values of the epoch being recomputed: x (3 per axis) and P (6 per axis)
  const o = new Float64Array(27);
  const tSec = data.tSec;
  // north's covariances are east's arrays, filtered and smoothed (see allocateHistory)
  const oneP = PN === PE && fPN === fPE;
  let lastDt = NaN;
  let sharedNext = false;
  let wi = windows.length / 2 - 1;
  let dirty = false;
  let count = 0;
  let runTop = -1;
  let k = N - 1;
  while (k >= 0) {
    while (wi >= 0 && windows[2 * wi]! > k) wi--;
    const inWin = wi >= 0 && k <= windows[2 * wi + 1]!;
    if (!dirty && !inWin) {
      if (runTop >= 0) changedOut.push(runTop, k + 1);
      runTop = -1;
      if (wi < 0) break;
      // clean: jump to the last epoch of the next window below
      k = windows[2 * wi + 1]!;
      sharedNext = false;
      continue;
    }
    if (runTop < 0) runTop = k;
    const xk = k * 3, Pk = k * 6;
    save3(xE, PE, xk, Pk, o, 0);
    save3(xN, PN, xk, Pk, o, 1);
    if (up) save3(xU, PU, xk, Pk, o, 2);
    if (k < N - 1) {
      // F, Q of the step k → k + 1 already in place unless Δt changed or the step has re-acquisition
      // noise (ensureStep would return at once otherwise)
      const dt = tSec[k + 1]! - tSec[k]!;
      if (dt !== lastDt || (s.extraQ.size > 0 && s.extraQ.has(k + 1))) lastDt = ensureStep(models, data, s, k + 1, qScale, F, Q, cache, lastDt);
      // filtered covariances at k and smoothed ones at k + 1 equal (see smootherCanShare); one
      // array for both (allocateHistory's shareHorizontal): the same numbers at every epoch
      const share: boolean = oneP || ((sharedNext || sameCov6(PE, PN, Pk + 6)) && sameCov6(fPE, fPN, Pk));
      const xk1 = xk + 3, Pk1 = Pk + 6;
      if (!rtsStep3pFrom(F[0]!, Q[0]!, fxE, fPE, xE, xk, xk1, PE, Pk, Pk1, share ? gT : undefined)) throw notPd(k);
      if (share) {
        rtsState3From(F[1]!, gT, fxN, xN, xk, xk1);
        if (!oneP) copy6(PE, PN, Pk);
      } else if (!rtsStep3pFrom(F[1]!, Q[1]!, fxN, fPN, xN, xk, xk1, PN, Pk, Pk1)) throw notPd(k);
      if (up && !rtsStep3pFrom(F[2]!, Q[2]!, fxU, fPU, xU, xk, xk1, PU, Pk, Pk1)) throw notPd(k);
      sharedNext = share;
    } else {
      // the last epoch: smoothed = filtered
      copy3(fxE, fPE, xE, PE, xk, Pk);
      copy3(fxN, fPN, xN, PN, xk, Pk);
      if (up) copy3(fxU, fPU, xU, PU, xk, Pk);
      sharedNext = false;
    }
    dirty = !(near3(xE, PE, xk, Pk, o, 0, tol) && near3(xN, PN, xk, Pk, o, 1, tol) && (!up || near3(xU, PU, xk, Pk, o, 2, tol)));
    count++;
    k--;
  }
  if (runTop >= 0) changedOut.push(runTop, Math.max(k + 1, 0));
  return count;
}

function notPd(k: number): NumericalError {
  return new NumericalError(`smoother: predicted covariance not positive definite at epoch ${k + 1}`);
}

/** Save epoch k of one 3-state axis (x at xk, P at Pk) into o at axis a (x at 9a, P at 9a + 3). */
function save3(x: Float64Array, P: Float64Array, xk: number, Pk: number, o: Float64Array, a: number): void {
  const b = a * 9;
  o[b] = x[xk]!; o[b + 1] = x[xk + 1]!; o[b + 2] = x[xk + 2]!;
  o[b + 3] = P[Pk]!; o[b + 4] = P[Pk + 1]!; o[b + 5] = P[Pk + 2]!;
  o[b + 6] = P[Pk + 3]!; o[b + 7] = P[Pk + 4]!; o[b + 8] = P[Pk + 5]!;
}

/** Copy epoch k of one 3-state axis from (fx, fP) to (x, P). */
function copy3(fx: Float64Array, fP: Float64Array, x: Float64Array, P: Float64Array, xk: number, Pk: number): void {
  x[xk] = fx[xk]!; x[xk + 1] = fx[xk + 1]!; x[xk + 2] = fx[xk + 2]!;
  P[Pk] = fP[Pk]!; P[Pk + 1] = fP[Pk + 1]!; P[Pk + 2] = fP[Pk + 2]!;
  P[Pk + 3] = fP[Pk + 3]!; P[Pk + 4] = fP[Pk + 4]!; P[Pk + 5] = fP[Pk + 5]!;
}

/** Whether epoch k of one 3-state axis is within tol of the values saved by save3 (NaN: not). */
function near3(x: Float64Array, P: Float64Array, xk: number, Pk: number, o: Float64Array, a: number, tol: number): boolean {
  const b = a * 9;
  return Math.abs(x[xk]! - o[b]!) <= tol && Math.abs(x[xk + 1]! - o[b + 1]!) <= tol && Math.abs(x[xk + 2]! - o[b + 2]!) <= tol &&
    Math.abs(P[Pk]! - o[b + 3]!) <= tol && Math.abs(P[Pk + 1]! - o[b + 4]!) <= tol && Math.abs(P[Pk + 2]! - o[b + 5]!) <= tol &&
    Math.abs(P[Pk + 3]! - o[b + 6]!) <= tol && Math.abs(P[Pk + 4]! - o[b + 7]!) <= tol && Math.abs(P[Pk + 5]! - o[b + 8]!) <= tol;
}

/**
 * smoothInto for n = 3 on every axis with east/north able to share: the RTS step reads each
 * filtered epoch from `f` (rtsStep3pFrom, rtsState3From) instead of copying the whole history into
 * `s` first and smoothing it in place; the same steps, sharing decisions and operations as that
 * copy and smoothInPlace, so the same bits (test/estimation/smoother-share.test.ts).
 */
function smoothIntoShared3(models: AxisModel[], data: SegmentData, f: FilterHistory, s: FilterHistory, qScale: Float64Array[] | null | undefined): void {
  const N = f.N;
  const up = models.length === 3;
  const fxE = f.x[0]!, fxN = f.x[1]!, fxU = up ? f.x[2]! : fxE;
  const fPE = f.P[0]!, fPN = f.P[1]!, fPU = up ? f.P[2]! : fPE;
  const xE = s.x[0]!, xN = s.x[1]!, xU = up ? s.x[2]! : xE;
  const PE = s.P[0]!, PN = s.P[1]!, PU = up ? s.P[2]! : PE;
  s.extraQ = f.extraQ;
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const cache = makeStepCache(models.length, models.map((m) => m.n));
  const gT = new Float64Array(9);
  // the last epoch: smoothed = filtered
  const xl = (N - 1) * 3, Pl = (N - 1) * 6;
  copy3(fxE, fPE, xE, PE, xl, Pl);
  copy3(fxN, fPN, xN, PN, xl, Pl);
  if (up) copy3(fxU, fPU, xU, PU, xl, Pl);
  let lastDt = NaN;
  const tSec = data.tSec;
  // north's covariances are east's arrays, filtered and smoothed (see allocateHistory): the same numbers at every epoch
  const oneP = PN === PE && fPN === fPE;
  // whether the two horizontal covariances at k + 1 (smoothed) are the same numbers
  let nextSame = sameCov6(PE, PN, Pl);
  for (let k = N - 2; k >= 0; k--) {
    // F, Q of the step k → k + 1 already in place unless Δt changed or the step has re-acquisition
    // noise (ensureStep would return at once otherwise)
    const dt = tSec[k + 1]! - tSec[k]!;
    if (dt !== lastDt || (s.extraQ.size > 0 && s.extraQ.has(k + 1))) lastDt = ensureStep(models, data, s, k + 1, qScale, F, Q, cache, lastDt);
    const xk = k * 3, Pk = k * 6, xk1 = xk + 3, Pk1 = Pk + 6;
    const share = oneP || (nextSame && sameCov6(fPE, fPN, Pk));
    if (!rtsStep3pFrom(F[0]!, Q[0]!, fxE, fPE, xE, xk, xk1, PE, Pk, Pk1, share ? gT : undefined)) throw notPd(k);
    if (share) {
      rtsState3From(F[1]!, gT, fxN, xN, xk, xk1);
      if (!oneP) copy6(PE, PN, Pk);
    } else if (!rtsStep3pFrom(F[1]!, Q[1]!, fxN, fPN, xN, xk, xk1, PN, Pk, Pk1)) throw notPd(k);
    if (up && !rtsStep3pFrom(F[2]!, Q[2]!, fxU, fPU, xU, xk, xk1, PU, Pk, Pk1)) throw notPd(k);
    // shared: north's covariance at k is a copy of east's
    nextSame = share || sameCov6(PE, PN, Pk);
  }
}
