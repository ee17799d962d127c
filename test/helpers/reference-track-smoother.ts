/**
 * The smoother of src/estimation/track-smoother.ts in its former form (whole-array
 * east/north sharing check per call), kept verbatim as the reference for the bit-for-bit tests of
 * the current form (test/estimation/smoother-share.test.ts).
 * Source: Rauch, Tung, Striebel (1965); Särkkä (2013) Theorem 8.2.
 */
import type { AxisModel } from '../../src/models/axis-model.js';
import { NumericalError } from '../../src/errors.js';
import { makeScratch } from '../../src/estimation/kalman.js';
import { makeRtsScratch, rtsStep } from '../../src/estimation/rts.js';
import { rtsState3, rtsStep3p } from '../../src/estimation/kalman3.js';
import { copy6, covStride, ensureStep, makeStepCache, type FilterHistory, type SegmentData } from '../../src/estimation/track-filter.js';

function smootherShare(models: AxisModel[], qScale: Float64Array[] | null | undefined, ...hs: FilterHistory[]): boolean {
  if (models.length < 2 || models[0] !== models[1] || models[0]!.n !== 3) return false;
  if (qScale && qScale[0] !== qScale[1]) return false;
  for (const h of hs) {
    const a = h.P[0]!, b = h.P[1]!;
    for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  }
  return true;
}

/**
 * The RTS step of every axis at epoch k of h (in place, from k + 1), F and Q of the step k → k + 1
 * in place. With `share`, north takes east's gain (gT) and smoothed covariance (see smootherShare).
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

export function refSmoothInPlace(models: AxisModel[], data: SegmentData, h: FilterHistory, qScale?: Float64Array[] | null): void {
  const F = models.map((m) => new Float64Array(m.n * m.n));
  const Q = models.map((m) => new Float64Array(m.n * m.n));
  const rs = models.map((m) => makeRtsScratch(m.n, makeScratch(m.n)));
  const cache = makeStepCache(models.length, models.map((m) => m.n));
  // Δt whose F, Q are in place (see ensureStep)
  let lastDt = NaN;
  const share = smootherShare(models, qScale, h);
  const gT = new Float64Array(9);
  for (let k = h.N - 2; k >= 0; k--) {
    lastDt = ensureStep(models, data, h, k + 1, qScale, F, Q, cache, lastDt);
    rtsEpoch(models, F, Q, h, k, share, gT, rs);
  }
}

/**
 * Smoothed states of the filtered history `f` into `s` (out of place: `f` keeps the filtered values,
 * for a later re-run with resmoothWindows). Same arithmetic as smoothInPlace on a copy.
 */
export function refSmoothInto(models: AxisModel[], data: SegmentData, f: FilterHistory, s: FilterHistory, qScale?: Float64Array[] | null): void {
  for (let a = 0; a < models.length; a++) {
    s.x[a]!.set(f.x[a]!);
    s.P[a]!.set(f.P[a]!);
  }
  s.extraQ = f.extraQ;
  refSmoothInPlace(models, data, s, qScale);
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
export function refResmoothWindows(
  models: AxisModel[],
  data: SegmentData,
  f: FilterHistory,
  s: FilterHistory,
  windows: number[],
  qScale: Float64Array[] | null | undefined,
  tol: number,
  changedOut: number[],
): number {
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
  const share = smootherShare(models, qScale, f, s);
  const gT = new Float64Array(9);
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
      continue;
    }
    if (runTop < 0) runTop = k;
    for (let a = 0; a < nAx; a++) {
      const n = models[a]!.n;
      if (n === 3) {
        // the loops below written out for n = 3 (3 states, 6 packed covariance elements)
        const x = s.x[a]!, P = s.P[a]!, fx = f.x[a]!, fP = f.P[a]!, ox = sx[a]!, oP = sP[a]!;
        const xk = k * 3, Pk = k * 6;
        ox[0] = x[xk]!; ox[1] = x[xk + 1]!; ox[2] = x[xk + 2]!;
        x[xk] = fx[xk]!; x[xk + 1] = fx[xk + 1]!; x[xk + 2] = fx[xk + 2]!;
        oP[0] = P[Pk]!; oP[1] = P[Pk + 1]!; oP[2] = P[Pk + 2]!; oP[3] = P[Pk + 3]!; oP[4] = P[Pk + 4]!; oP[5] = P[Pk + 5]!;
        P[Pk] = fP[Pk]!; P[Pk + 1] = fP[Pk + 1]!; P[Pk + 2] = fP[Pk + 2]!; P[Pk + 3] = fP[Pk + 3]!; P[Pk + 4] = fP[Pk + 4]!; P[Pk + 5] = fP[Pk + 5]!;
        continue;
      }
      const nn = covStride(n);
      const x = s.x[a]!, P = s.P[a]!, fx = f.x[a]!, fP = f.P[a]!, ox = sx[a]!, oP = sP[a]!;
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
    if (k < N - 1) {
      lastDt = ensureStep(models, data, s, k + 1, qScale, F, Q, cache, lastDt);
      rtsEpoch(models, F, Q, s, k, share, gT, rs);
    }
    let same = true;
    for (let a = 0; a < nAx && same; a++) {
      const n = models[a]!.n;
      const nn = covStride(n);
      const x = s.x[a]!, P = s.P[a]!, ox = sx[a]!, oP = sP[a]!;
      const xk = k * n, Pk = k * nn;
      if (n === 3) {
        same =
          Math.abs(x[xk]! - ox[0]!) <= tol && Math.abs(x[xk + 1]! - ox[1]!) <= tol && Math.abs(x[xk + 2]! - ox[2]!) <= tol &&
          Math.abs(P[Pk]! - oP[0]!) <= tol && Math.abs(P[Pk + 1]! - oP[1]!) <= tol && Math.abs(P[Pk + 2]! - oP[2]!) <= tol &&
          Math.abs(P[Pk + 3]! - oP[3]!) <= tol && Math.abs(P[Pk + 4]! - oP[4]!) <= tol && Math.abs(P[Pk + 5]! - oP[5]!) <= tol;
        continue;
      }
      for (let i = 0; i < n; i++) if (!(Math.abs(x[xk + i]! - ox[i]!) <= tol)) same = false;
      for (let i = 0; i < nn; i++) if (!(Math.abs(P[Pk + i]! - oP[i]!) <= tol)) same = false;
    }
    dirty = !same;
    count++;
    k--;
  }
  if (runTop >= 0) changedOut.push(runTop, Math.max(k + 1, 0));
  return count;
}
