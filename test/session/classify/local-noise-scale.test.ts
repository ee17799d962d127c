/**
 * The local noise scale (src/session/classify/local-noise-scale.ts) on seeded review statistics with a known
 * variance scale: T = s² χ²(3) per fix, s² = 1 for the first 600 s and 4 for the next 600 s at 1 Hz,
 * with a burst of 10 rejected fixes at T = 1e4. The estimate must follow the known scale away from
 * the change, stay bounded, ignore the burst, and be 1 everywhere with the window 0.
 * E[log(χ²(m)/m)] = ψ(m/2) + log(2/m): ψ(1/2) = −γ − 2 log 2, ψ(1) = −γ, ψ(3/2) = 2 − γ − 2 log 2
 * (Abramowitz & Stegun, "Handbook of Mathematical Functions", 1964, 6.3.2–6.3.4); also checked
 * against a seeded Monte Carlo mean.
 */
import { describe, expect, it } from 'vitest';
import { localNoiseScale, localScaleOptions, MEAN_LOG_CHI2_PER_DOF } from '../../../src/session/classify/local-noise-scale.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}
function normal(r: () => number): number {
  return Math.sqrt(-2 * Math.log(r())) * Math.cos(2 * Math.PI * r());
}
function chi2(r: () => number, m: number): number {
  let s = 0;
  for (let i = 0; i < m; i++) s += normal(r) ** 2;
  return s;
}

describe('E[log(χ²(m)/m)]', () => {
  it.each([
    // [m, value (Abramowitz & Stegun 6.3.2–6.3.4), tolerance]
    [1, -1.2703628454614782, 1e-12],
    [2, -0.5772156649015329, 1e-12],
    [3, -0.36897513412958794, 1e-12],
  ])('m = %i: %f', (m, v, tol) => {
    expect(Math.abs(MEAN_LOG_CHI2_PER_DOF[m]! - v)).toBeLessThanOrEqual(tol);
    // seeded Monte Carlo mean of 200,000 draws: sd of log χ²(m) ≤ 2.3, so 5 sd ≈ 0.026
    const r = rng(17 + m);
    let s = 0;
    const n = 200_000;
    for (let i = 0; i < n; i++) s += Math.log(chi2(r, m) / m);
    expect(Math.abs(s / n - v)).toBeLessThanOrEqual(0.026);
  });
});

describe('localNoiseScale', () => {
  const N = 1200;
  const tSec = Float64Array.from({ length: N }, (_, k) => 1e9 + k);
  const T = new Float64Array(N);
  const dof = new Uint8Array(N).fill(3);
  const r = rng(5);
  for (let k = 0; k < N; k++) T[k] = (k < 600 ? 1 : 4) * chi2(r, 3);
  // a burst of 10 rejected fixes far beyond the gate
  for (let k = 300; k < 310; k++) T[k] = 1e4;
  // an epoch without a fix
  T[900] = NaN;
  dof[900] = 0;
  const o = localScaleOptions(60, 0.9995);

  it('follows a known variance scale of 1 and 4 (shrunk by its prior weight) away from the change, a burst capped', () => {
    const s = localNoiseScale(tSec, T, dof, o);
    // sd of log(χ²(3)/3): √ψ′(3/2) = √(π²/2 − 4) ≈ 0.967 (Abramowitz & Stegun 6.4.4)
    const sdLog = Math.sqrt((Math.PI * Math.PI) / 2 - 4);
    for (let k = 0; k < N; k++) {
      if (Math.abs(k - 600) <= 30) continue;
      let n = 0;
      for (let j = Math.max(0, k - 30); j <= Math.min(N - 1, k + 30); j++) if (dof[j]) n++;
      const truthLog = Math.log(k < 600 ? 1 : 4);
      // E[log ŝ²] = n/(n + n₀) · log s²; 4 sd of the window's mean
      const expected = (n / (n + o.priorFixes)) * truthLog;
      let tol = (4 * sdLog * Math.sqrt(n)) / (n + o.priorFixes);
      // a burst of 10 capped terms in the window adds at most 10 · (log cap + 0.37)/(n + n₀)
      if (Math.abs(k - 305) <= 35) tol += (10 * (Math.log(o.capPerDof) + 0.37)) / (n + o.priorFixes);
      expect(Math.abs(Math.log(s[k]!) - expected)).toBeLessThanOrEqual(tol);
    }
  });

  it('stays within [1/maxScale, maxScale], and is 1 with the window 0', () => {
    const big = T.map((t) => t * 100);
    const s = localNoiseScale(tSec, big, dof, o);
    for (const v of s) expect(v).toBeLessThanOrEqual(o.maxScale);
    const small = T.map((t) => t / 100);
    for (const v of localNoiseScale(tSec, small, dof, o)) expect(v).toBeGreaterThanOrEqual(1 / o.maxScale);
    for (const v of localNoiseScale(tSec, T, dof, { ...o, windowSec: 0 })) expect(v).toBe(1);
  });
});
