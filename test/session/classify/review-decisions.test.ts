import { describe, expect, it } from 'vitest';
import { applyReviewDecisions, reviewThresholds } from '../../../src/session/classify/review-decisions.js';
import { Rng } from '../../../src/simulate/rng.js';

/** The original decision pass (each candidate tested against every fix taken so far), as reference. */
function reference(N: number, offered: Uint8Array, kept: Uint8Array, T: Float64Array, dof: Uint8Array, threshold: Float64Array, tSec: Float64Array, th: ReturnType<typeof reviewThresholds>, guardSec: number): boolean {
  let changed = false;
  for (let k = 0; k < N; k++)
    if (offered[k] === 1 && !kept[k] && dof[k]! > 0 && T[k]! <= th.readmit[dof[k]!]!) {
      kept[k] = 1;
      changed = true;
    }
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

describe('applyReviewDecisions (guard window scan)', () => {
  it('takes the same decisions as testing every taken fix, on seeded random passes', () => {
    const th = reviewThresholds(0.999);
    for (let seed = 1; seed <= 60; seed++) {
      const rng = new Rng(seed);
      const N = 200 + Math.floor(rng.next() * 2000);
      const tSec = new Float64Array(N);
      let t = 1000;
      for (let k = 0; k < N; k++) {
        // irregular steps, with gaps and ties at the guard distance
        t += rng.next() < 0.02 ? 10 * rng.next() : rng.next() < 0.5 ? 0.1 : 0.5 * rng.next();
        tSec[k] = t;
      }
      const offered = new Uint8Array(N);
      const kept = new Uint8Array(N);
      const T = new Float64Array(N).fill(NaN);
      const dof = new Uint8Array(N);
      const threshold = new Float64Array(N).fill(NaN);
      for (let k = 0; k < N; k++) {
        const u = rng.next();
        offered[k] = u < 0.05 ? 0 : u < 0.1 ? 2 : 1;
        kept[k] = rng.next() < 0.8 ? 1 : 0;
        dof[k] = rng.next() < 0.05 ? 0 : 1 + Math.floor(rng.next() * 3);
        // heavy tail so that many kept fixes fail, some with equal ratios (sort ties)
        T[k] = rng.next() < 0.1 ? 20 : 40 * rng.next() ** 3;
        threshold[k] = th.reject[dof[k]!]!;
      }
      const guardSec = [0.5, 1, 5][seed % 3]!;
      const keptA = kept.slice();
      const keptB = kept.slice();
      const a = applyReviewDecisions(N, offered, keptA, T, dof, threshold, tSec, th, guardSec);
      const b = reference(N, offered, keptB, T, dof, threshold, tSec, th, guardSec);
      expect(a).toBe(b);
      expect(Array.from(keptA)).toEqual(Array.from(keptB));
    }
  });
});
