/**
 * The error-state RTS step (src/estimation/ins/rts.ts) satisfies the RTS equations (Rauch, Tung &
 * Striebel 1965; Särkkä 2013 Th. 8.2 — from memory) to rounding, on a Φ with the error model's
 * structure and covariances of mixed scales.
 */
import { describe, expect, it } from 'vitest';
import { NE } from '../../src/estimation/ins/error-model.js';
import { insRtsStep, makeInsRtsScratch } from '../../src/estimation/ins/rts.js';
import { Rng } from '../../src/simulate/rng.js';
import { phiOf, spd } from './matrices.js';

const n = NE;

function case_(seed: number) {
  const rng = new Rng(seed);
  const scale = Float64Array.from({ length: n }, (_, i) => [1, 0.3, 0.01, 0.02, 0.001, 1][Math.floor(i / 3)]!);
  const Pf = spd(rng, scale);
  const Phi = phiOf(rng);
  // P⁻ = Φ Pf Φᵀ + Q, Pˢ a little below P⁻
  const Pm = new Float64Array(n * n);
  const Q = spd(rng, scale.map((s) => 0.1 * s));
  for (let i = 0; i < n; i++)
    for (let j = 0; j < n; j++) {
      let s = Q[i * n + j]!;
      for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) s += Phi[i * n + a]! * Pf[a * n + b]! * Phi[j * n + b]!;
      Pm[i * n + j] = s;
    }
  const Ps = Pm.map((v) => 0.7 * v);
  const dNext = Float64Array.from({ length: n }, (_, i) => rng.normal() * scale[i]!);
  return { Pf, Pm, Phi, Ps, dNext };
}

describe('error-state RTS step', () => {
  it('G = Pf Φᵀ (P⁻)⁻¹ satisfies G P⁻ = Pf Φᵀ, and Pˢ = Pf + G (Pˢ₊ − P⁻) Gᵀ (1e-9 relative)', () => {
    const c = case_(4242);
    const s = makeInsRtsScratch();
    const dx = new Float64Array(n), out = new Float64Array(n * n);
    insRtsStep(c.Pf, c.Pm, c.Phi, c.Ps, c.dNext, dx, out, s);
    const G = new Float64Array(n * n);
    for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) G[i * n + j] = s.Gt[j * n + i]!;
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        let lhs = 0, rhs = 0;
        for (let k = 0; k < n; k++) {
          lhs += G[i * n + k]! * c.Pm[k * n + j]!;
          rhs += c.Pf[i * n + k]! * c.Phi[j * n + k]!;
        }
        expect(Math.abs(lhs - rhs)).toBeLessThanOrEqual(1e-9 * (Math.abs(rhs) + Math.sqrt(c.Pf[i * n + i]! * c.Pm[j * n + j]!)));
      }
    for (let i = 0; i < n; i++) {
      let d = 0;
      for (let j = 0; j < n; j++) d += G[i * n + j]! * c.dNext[j]!;
      expect(Math.abs(dx[i]! - d)).toBeLessThanOrEqual(1e-9 * (Math.abs(d) + 1e-12));
    }
    for (let i = 0; i < n; i++)
      for (let j = 0; j < n; j++) {
        let v = c.Pf[i * n + j]!;
        for (let a = 0; a < n; a++) for (let b = 0; b < n; b++) v += G[i * n + a]! * (c.Ps[a * n + b]! - c.Pm[a * n + b]!) * G[j * n + b]!;
        expect(Math.abs(out[i * n + j]! - v)).toBeLessThanOrEqual(1e-9 * Math.sqrt(c.Pf[i * n + i]! * c.Pf[j * n + j]!));
      }
  });
});
