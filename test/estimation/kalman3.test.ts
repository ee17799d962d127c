/**
 * The unrolled full-matrix n = 3 kernels (test/helpers/kalman3-full.ts, bit-identical to the packed
 * ones the filter uses in kalman3.ts) against the generic ones (kalman.ts, rts.ts), which are
 * tested against textbook forms in kalman.test.ts and local-level.test.ts: seeded random
 * symmetric positive-definite covariances, random F (the CV + Gauss–Markov structure and dense),
 * both measurement rows in use (h = [1, 0, 1] and [1, 0, 0]). Only rounding may differ: the
 * expanded Joseph form and the unrolled sums reorder operations; tolerance 1e-10 relative
 * (differences seen ~1e-15).
 */
import { describe, expect, it } from 'vitest';
import { innovation, makeScratch, predict, updateJoseph } from '../../src/estimation/kalman.js';
import { makeRtsScratch, rtsStep } from '../../src/estimation/rts.js';
import { innovation3, predict3, rtsStep3, updateJoseph3 } from '../helpers/kalman3-full.js';
import { Rng } from '../../src/simulate/rng.js';

function spd(rng: Rng, scale: number): Float64Array {
  const A = new Float64Array(9);
  for (let i = 0; i < 9; i++) A[i] = rng.normal();
  const P = new Float64Array(9);
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) {
      let s = i === j ? 0.1 : 0;
      for (let k = 0; k < 3; k++) s += A[i * 3 + k]! * A[j * 3 + k]!;
      P[i * 3 + j] = s * scale;
    }
  return P;
}

function randomF(rng: Rng, dense: boolean): Float64Array {
  if (dense) return Float64Array.from({ length: 9 }, (_, i) => (i % 4 === 0 ? 1 : 0) + 0.3 * rng.normal());
  const dt = rng.uniform(0.05, 5);
  return Float64Array.from([1, dt, 0, 0, 1, 0, 0, 0, Math.exp(-dt / 45)]);
}

function expectClose(a: Float64Array, b: Float64Array, tol = 1e-10): void {
  const scale = Math.max(...Array.from(b, Math.abs), 1e-300);
  for (let i = 0; i < a.length; i++) expect(Math.abs(a[i]! - b[i]!) / scale).toBeLessThan(tol);
}

describe('n = 3 kernels equal the generic kernels to rounding', () => {
  for (const dense of [false, true])
    for (const h of [Float64Array.from([1, 0, 1]), Float64Array.from([1, 0, 0])])
      it(`${dense ? 'dense' : 'CV + GM'} F, h = [${Array.from(h).join(', ')}]`, () => {
        const rng = new Rng(dense ? 31 : 17);
        for (let trial = 0; trial < 200; trial++) {
          const F = randomF(rng, dense);
          const Q = spd(rng, 0.01);
          const P = spd(rng, rng.uniform(0.1, 100));
          const x = Float64Array.from({ length: 3 }, () => 10 * rng.normal());
          // prediction
          const s = makeScratch(3);
          const xa = new Float64Array(3), Pa = new Float64Array(9), xb = new Float64Array(3), Pb = new Float64Array(9);
          predict(3, F, Q, x, 0, P, 0, xa, 0, Pa, 0, s);
          predict3(F, Q, x, 0, P, 0, xb, 0, Pb, 0);
          expectClose(xb, xa);
          expectClose(Pb, Pa);
          // innovation and Joseph update
          const z = xa[0]! + rng.normal() * 3;
          const r = rng.uniform(0.5, 10);
          const outA = new Float64Array(1), outB = new Float64Array(1), w = new Float64Array(3);
          const nuA = innovation(3, h, z, r, xa, 0, Pa, 0, s, outA);
          const nuB = innovation3(h, z, r, xb, 0, Pb, 0, w, outB);
          expect(Math.abs(nuB - nuA)).toBeLessThan(1e-10 * Math.max(1, Math.abs(nuA)));
          expect(Math.abs(outB[0]! - outA[0]!) / outA[0]!).toBeLessThan(1e-12);
          updateJoseph(3, h, nuA, outA[0]!, r, xa, 0, Pa, 0, s);
          updateJoseph3(h, nuB, outB[0]!, r, w, xb, 0, Pb, 0);
          expectClose(xb, xa);
          expectClose(Pb, Pa);
          // RTS step: epoch 0 filtered (x, P), epoch 1 smoothed (xa, Pa)
          const X1 = new Float64Array(6), P1 = new Float64Array(18);
          X1.set(x, 0); X1.set(xa, 3); P1.set(P, 0); P1.set(Pa, 9);
          const X2 = X1.slice(), P2 = P1.slice();
          const okA = rtsStep(3, F, Q, X1, 0, 3, P1, 0, 9, makeRtsScratch(3, makeScratch(3)));
          const okB = rtsStep3(F, Q, X2, 0, 3, P2, 0, 9);
          expect(okB).toBe(okA);
          expectClose(X2.subarray(0, 3), X1.subarray(0, 3));
          expectClose(P2.subarray(0, 9), P1.subarray(0, 9));
        }
      });
  it('rtsStep3 refuses a predicted covariance that is not positive definite', () => {
    const F = Float64Array.from([1, 1, 0, 0, 1, 0, 0, 0, 1]);
    const Q = new Float64Array(9);
    const X = new Float64Array(6), P = new Float64Array(18);
    P[0] = 1; P[4] = 1; // P[8] = 0: singular
    expect(rtsStep3(F, Q, X, 0, 3, P, 0, 9)).toBe(false);
  });
});
