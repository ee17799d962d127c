/**
 * The decision step of the two-sided review, shared by the fixes-only loop (./review.ts) and the
 * IMU-aided loop (./imu-session.ts): given every offered fix's review statistic against the
 * smoothed track, re-admit the rejected fixes that are clearly consistent (hysteresis: a stricter
 * threshold than rejection) and reject, per pass, only the worst failing kept fix within a guard
 * time (masking/swamping guard: a burst pulls the track toward itself and makes its good neighbours
 * fail too). Sources as in src/estimation/review.ts (de Jong & Penzer 1998; Teunissen 2006).
 */
import { chiSquareQuantile } from '../../estimation/chi-square.js';
import type { DecisionLog } from '../result/decision-log.js';

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
 * (threshold[k] = th.reject[dof[k]]). Returns whether any decision changed. With `log`, every
 * rejection is recorded there as the review's (its T and threshold) and every re-admission removed.
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
  log?: DecisionLog,
): boolean {
  let changed = false;
  // re-admit every rejected fix that now passes clearly
  for (let k = 0; k < N; k++)
    if (offered[k] === 1 && !kept[k] && dof[k]! > 0 && T[k]! <= th.readmit[dof[k]!]!) {
      kept[k] = 1;
      changed = true;
      log?.delete(k);
    }
  // reject failing kept fixes that are the worst within ±guard of each other (local maxima of T/threshold)
  const cand: number[] = [];
  for (let k = 0; k < N; k++) if (offered[k] === 1 && kept[k] && dof[k]! > 0 && T[k]! > th.reject[dof[k]!]!) cand.push(k);
  cand.sort((p, q) => T[q]! / threshold[q]! - T[p]! / threshold[p]!);
  if (cand.length === 0) return changed;
  // a taken fix blocks every candidate within ±guard of it; tSec is ascending, so the epochs within
  // the guard of k are a contiguous run around k and the check costs the guard window, not the
  // number of fixes taken so far (same decisions, in the same order, as testing against every taken fix)
  const taken = new Uint8Array(N);
  for (const k of cand) {
    const tk = tSec[k]!;
    let blocked = false;
    for (let j = k; j >= 0 && tk - tSec[j]! <= guardSec; j--)
      if (taken[j]) {
        blocked = true;
        break;
      }
    if (!blocked)
      for (let j = k + 1; j < N && tSec[j]! - tk <= guardSec; j++)
        if (taken[j]) {
          blocked = true;
          break;
        }
    if (blocked) continue;
    taken[k] = 1;
    kept[k] = 0;
    changed = true;
    log?.set(k, { test: 'review', statistic: T[k]!, threshold: threshold[k]!, dof: dof[k]! });
  }
  return changed;
}
