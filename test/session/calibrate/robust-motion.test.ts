/**
 * The robust process-noise estimate (src/session/calibrate/robust-motion.ts) on simulated constant-velocity
 * motion with known white-acceleration density q: the second difference of position at lag L has
 * variance (2/3) q L³ plus 6σ² of white fix noise (derivation in the file header; the CV model's
 * discretization is Bar-Shalom, Li, Kirubarajan, "Estimation with Applications to Tracking and
 * Navigation", 2001, §6.2.2). Tolerances are the sampling spread of a median over ~3,600
 * differences, measured over seeds (about ±15 % at one sd), with margin.
 */
import { describe, expect, test } from 'vitest';
import { robustProcessNoise } from '../../../src/session/calibrate/robust-motion.js';
import type { PreparedSession } from '../../../src/session/prepare/prepare.js';
import { Rng } from '../../../src/simulate/rng.js';

interface Track {
  q: number;
  whiteM: number;
  /** First-order Gauss–Markov error (sigma m, tau s), or none. */
  gm?: [number, number];
  /** Bursts: this share of the time in runs of 5 fixes displaced by 30 m. */
  burstShare?: number;
  seed: number;
}

/** A 1 Hz hour of CV motion in the plane with fix errors, as the fields the estimator reads. */
function session(tr: Track): PreparedSession {
  const N = 3600;
  const rng = new Rng(tr.seed);
  const e = new Float64Array(N), n = new Float64Array(N), tSec = new Float64Array(N);
  const pos = [0, 0], vel = [1, 0.5], gm = [0, 0];
  const phi = tr.gm ? Math.exp(-1 / tr.gm[1]) : 0;
  let burstLeft = 0;
  for (let k = 0; k < N; k++) {
    tSec[k] = k;
    for (let a = 0; a < 2; a++) {
      // exact discretization of white acceleration over 1 s: [p, v] with covariance q [[1/3, 1/2], [1/2, 1]]
      const w1 = rng.normal(), w2 = rng.normal();
      const dv = Math.sqrt(tr.q) * w1;
      const dp = Math.sqrt(tr.q) * (0.5 * w1 + Math.sqrt(1 / 12) * w2);
      pos[a] += vel[a]! + dp;
      vel[a] += dv;
      if (tr.gm) gm[a] = phi * gm[a]! + tr.gm[0] * Math.sqrt(1 - phi * phi) * rng.normal();
    }
    if (burstLeft === 0 && tr.burstShare && rng.next() < tr.burstShare / 5) burstLeft = 5;
    const off = burstLeft > 0 ? 30 : 0;
    if (burstLeft > 0) burstLeft--;
    e[k] = pos[0]! + gm[0]! + tr.whiteM * rng.normal() + off;
    n[k] = pos[1]! + gm[1]! + tr.whiteM * rng.normal();
  }
  return { series: { tSec }, intervalSec: 1, segments: [[0, N - 1]], offered: new Uint8Array(N).fill(1), e, n } as unknown as PreparedSession;
}

describe('robustProcessNoise: q of the constant-velocity model from second differences', () => {
  // [case, track, expected q, relative tolerance]
  const table: Array<[string, Track, number, number]> = [
    ['walking q, 1 m white noise', { q: 0.03, whiteM: 1, seed: 1 }, 0.03, 0.35],
    ['vehicle q, 1 m white noise', { q: 0.5, whiteM: 1, seed: 2 }, 0.5, 0.35],
    ['walking q with a 1.5 m, 60 s Gauss–Markov error', { q: 0.03, whiteM: 1, gm: [1.5, 60], seed: 3 }, 0.03, 0.5],
    ['walking q with 5 % of the time in 30 m bursts', { q: 0.03, whiteM: 1, burstShare: 0.05, seed: 4 }, 0.03, 0.5],
  ];
  test.each(table)('%s', (_name, tr, want, rel) => {
    const q = robustProcessNoise(session(tr));
    expect(Math.abs(q / want - 1)).toBeLessThan(rel);
  });

  test('bursts that inflate a mean-square estimate a hundredfold hardly move it', () => {
    const clean = robustProcessNoise(session({ q: 0.03, whiteM: 1, seed: 5 }));
    const bursty = robustProcessNoise(session({ q: 0.03, whiteM: 1, burstShare: 0.05, seed: 5 }));
    expect(bursty / clean).toBeGreaterThan(0.7);
    expect(bursty / clean).toBeLessThan(1.4);
  });

  test('a still receiver: (near) zero', () => {
    expect(robustProcessNoise(session({ q: 0, whiteM: 1, seed: 6 }))).toBeLessThan(1e-3);
  });
});
