/**
 * The decision step of the two-sided review, shared by the fixes-only loop (./review.ts) and the
 * IMU-aided loop (./imu-session.ts): given every offered fix's review statistic against the
 * smoothed track, re-admit the rejected fixes that are clearly consistent (hysteresis: a stricter
 * threshold than rejection) and reject, per pass, only the worst failing kept fix within a guard
 * time (masking/swamping guard: a burst pulls the track toward itself and makes its good neighbours
 * fail too). Sources as in src/estimation/review.ts (de Jong & Penzer 1998; Teunissen 2006).
 */
import { chiSquareQuantile } from '../estimation/chi-square.js';

/** Rejection and re-admission thresholds by degrees of freedom (index 0: no measured axis, Infinity). */
export interface ReviewThresholds {
  reject: number[];
  readmit: number[];
}

export function reviewThresholds(probability: number): ReviewThresholds {
  const reject = [Infinity, 1, 2, 3].map((d) => (d === 0 ? Infinity : chiSquareQuantile(probability, d)));
  // hysteresis: a rejected fix comes back only when clearly consistent (four times the false-alarm rate)
  const readmitP = Math.max(0.5, 1 - 4 * (1 - probability));
  const readmit = [Infinity, 1, 2, 3].map((d) => (d === 0 ? Infinity : chiSquareQuantile(readmitP, d)));
  return { reject, readmit };
}

/**
 * One decision pass, in place on `kept` (1 kept / 0 rejected per epoch). Only epochs with
 * offered[k] === 1 (gated fixes) are judged; T, dof and threshold hold their statistics
 * (threshold[k] = th.reject[dof[k]]). Returns whether any decision changed.
 */
export function applyReviewDecisions(
  N: number,
  offered: Uint8Array,
  kept: Uint8Array,
  T: Float64Array,
  dof: Uint8Array,
  threshold: Float64Array,
  tSec: Float64Array,
  th: ReviewThresholds,
  guardSec: number,
): boolean {
  let changed = false;
  // re-admit every rejected fix that now passes clearly
  for (let k = 0; k < N; k++)
    if (offered[k] === 1 && !kept[k] && dof[k]! > 0 && T[k]! <= th.readmit[dof[k]!]!) {
      kept[k] = 1;
      changed = true;
    }
  // reject failing kept fixes that are the worst within ±guard of each other (local maxima of T/threshold)
  const cand: number[] = [];
  for (let k = 0; k < N; k++) if (offered[k] === 1 && kept[k] && dof[k]! > 0 && T[k]! > th.reject[dof[k]!]!) cand.push(k);
  cand.sort((p, q) => T[q]! / threshold[q]! - T[p]! / threshold[p]!);
  const taken: number[] = [];
  for (const k of cand) {
    const tk = tSec[k]!;
    if (taken.some((j) => Math.abs(tSec[j]! - tk) <= guardSec)) continue;
    taken.push(k);
    kept[k] = 0;
    changed = true;
  }
  return changed;
}
