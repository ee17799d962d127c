/**
 * The packed n = 3 kernels of kalman3.ts (upper-triangle covariances, as stored in the filter
 * histories) against the generic kernels of kalman.ts and rts.ts, which are checked against
 * textbook forms in kalman.test.ts and local-level.test.ts: seeded random symmetric
 * positive-definite covariances, random F (the CV + Gauss–Markov structure and dense), both
 * measurement rows in use (h = [1, 0, 1] and [1, 0, 0]); the test packs the generic kernels'
 * full matrices and unpacks the packed results. Only rounding may differ (the expanded Joseph form
 * and the unrolled sums reorder operations): tolerance 1e-12 relative to the largest element of
 * the compared quantity. Then the contracts within kalman3.ts, bit for bit (same code, two call
 * forms): the state-only kernels for an axis sharing another's covariance, and the out-of-place
 * RTS step against copy-then-in-place.
 * Sources: Bar-Shalom, Li, Kirubarajan (2001), "Estimation with Applications to Tracking and
 * Navigation" §5.2 (prediction, update; Joseph form §5.2.3); Rauch, Tung, Striebel (1965), AIAA J.
 * 3(8):1445–1450 (smoother step).
 */
import { describe, expect, it } from 'vitest';
import { innovation, makeScratch, predict, updateJoseph } from '../../src/estimation/kalman.js';
import { makeRtsScratch, rtsStep } from '../../src/estimation/rts.js';
import {
  innovation3p, predict3p, predictState3, rtsState3, rtsState3From, rtsStep3p, rtsStep3pFrom, updateJoseph3p, updateState3,
} from '../../src/estimation/kalman3.js';
import { covIndex } from '../../src/estimation/track-filter.js';
import { Rng } from '../../src/simulate/rng.js';

/** Tolerance of the packed kernels against the generic ones, relative (rounding only). */
const REL_TOL = 1e-12;

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

/** Full row-major 3×3 → packed upper triangle [p00, p01, p02, p11, p12, p22]. */
const pack = (P: Float64Array): Float64Array => Float64Array.from([0, 1, 2, 4, 5, 8], (i) => P[i]!);
/** Packed upper triangle (at off) → full row-major 3×3. */
function unpack(Pp: Float64Array, off = 0): Float64Array {
  const P = new Float64Array(9);
  for (let i = 0; i < 3; i++) for (let j = 0; j < 3; j++) P[i * 3 + j] = Pp[off + covIndex(3, i, j)]!;
  return P;
}

/** |a − b| ≤ REL_TOL · max|b| elementwise. */
function expectClose(a: ArrayLike<number>, b: ArrayLike<number>): void {
  expect(a.length).toBe(b.length);
  let scale = 1e-300;
  for (let i = 0; i < b.length; i++) scale = Math.max(scale, Math.abs(b[i]!));
  for (let i = 0; i < b.length; i++) expect(Math.abs(a[i]! - b[i]!) / scale).toBeLessThanOrEqual(REL_TOL);
}

describe('packed n = 3 kernels equal the generic kernels to rounding', () => {
  for (const dense of [false, true])
    for (const h of [Float64Array.from([1, 0, 1]), Float64Array.from([1, 0, 0])])
      it(`${dense ? 'dense' : 'CV + GM'} F, h = [${Array.from(h).join(', ')}]: prediction, innovation, Joseph update, RTS step`, () => {
        const rng = new Rng(dense ? 31 : 17);
        const s = makeScratch(3);
        const rs = makeRtsScratch(3, makeScratch(3));
        for (let trial = 0; trial < 300; trial++) {
          const F = randomF(rng, dense);
          const Q = spd(rng, 0.01);
          const P = spd(rng, rng.uniform(0.1, 100));
          const x = Float64Array.from({ length: 3 }, () => 10 * rng.normal());
          // prediction: generic on full matrices, packed on the packed upper triangle (tolerance 1e-12 relative)
          const xa = new Float64Array(3), Pa = new Float64Array(9);
          predict(3, F, Q, x, 0, P, 0, xa, 0, Pa, 0, s);
          const xb = new Float64Array(3), Pb = new Float64Array(6);
          predict3p(F, Q, x, 0, pack(P), 0, xb, 0, Pb, 0);
          expectClose(xb, xa);
          expectClose(unpack(Pb), Pa);
          // innovation ν, S and P hᵀ (tolerance 1e-12 relative; ν relative to the larger of z, h x)
          const z = xa[0]! + rng.normal() * 3;
          const r = rng.uniform(0.5, 10);
          const outA = new Float64Array(1), outB = new Float64Array(1), w = new Float64Array(3);
          const nuA = innovation(3, h, z, r, xa, 0, Pa, 0, s, outA);
          const nuB = innovation3p(h, z, r, xb, 0, Pb, 0, w, outB);
          expect(Math.abs(nuB - nuA)).toBeLessThanOrEqual(REL_TOL * Math.max(Math.abs(z), Math.abs(z - nuA)));
          expectClose(outB, outA);
          expectClose(w, s.w);
          // Joseph update (tolerance 1e-12 relative)
          updateJoseph(3, h, nuA, outA[0]!, r, xa, 0, Pa, 0, s);
          updateJoseph3p(h, nuB, outB[0]!, r, w, xb, 0, Pb, 0);
          expectClose(xb, xa);
          expectClose(unpack(Pb), Pa);
          // RTS step: epoch 0 filtered (x, P), epoch 1 taken as smoothed (the updated one); tolerance 1e-12 relative
          const XA = new Float64Array(6), PA = new Float64Array(18);
          XA.set(x, 0); XA.set(xa, 3); PA.set(P, 0); PA.set(Pa, 9);
          const XB = XA.slice(), PB = new Float64Array(12);
          PB.set(pack(P), 0); PB.set(Pb, 6);
          const okA = rtsStep(3, F, Q, XA, 0, 3, PA, 0, 9, rs);
          const okB = rtsStep3p(F, Q, XB, 0, 3, PB, 0, 6);
          expect(okB).toBe(okA);
          expect(okA).toBe(true);
          expectClose(XB.subarray(0, 3), XA.subarray(0, 3));
          expectClose(unpack(PB, 0), PA.subarray(0, 9));
        }
      });

  it('rtsStep3p refuses a predicted covariance that is not positive definite', () => {
    const F = Float64Array.from([1, 1, 0, 0, 1, 0, 0, 0, 1]);
    const Q = new Float64Array(9);
    const X = new Float64Array(6), P = new Float64Array(12);
    P[0] = 1; P[3] = 1; // p22 = 0: singular
    expect(rtsStep3p(F, Q, X, 0, 3, P, 0, 6)).toBe(false);
  });
});

describe('state-only kernels for an axis sharing another axis\'s covariance give the bits of the full kernels', () => {
  it('predictState3, updateState3, rtsState3 against the state written by predict3p, updateJoseph3p, rtsStep3p', () => {
    const rng = new Rng(53);
    for (let trial = 0; trial < 300; trial++) {
      const F = randomF(rng, trial % 2 === 1);
      const Q = spd(rng, 0.01);
      const P0 = pack(spd(rng, rng.uniform(0.1, 100)));
      const x0 = Float64Array.from({ length: 3 }, () => 10 * rng.normal());
      const h = trial % 3 === 0 ? Float64Array.from([1, 0, 0]) : Float64Array.from([1, 0, 1]);
      // full kernels on a two-epoch history
      const xf = new Float64Array(6), Pf = new Float64Array(12);
      xf.set(x0); Pf.set(P0);
      predict3p(F, Q, xf, 0, Pf, 0, xf, 3, Pf, 6);
      const xs = new Float64Array(6);
      xs.set(x0);
      predictState3(F, xs, 0, xs, 3);
      for (let i = 0; i < 6; i++) expect(Object.is(xs[i], xf[i])).toBe(true);
      const z = xf[3]! + rng.normal() * 3, r = rng.uniform(0.5, 10);
      const w = new Float64Array(3), out = new Float64Array(1);
      const nu = innovation3p(h, z, r, xf, 3, Pf, 6, w, out);
      updateJoseph3p(h, nu, out[0]!, r, w, xf, 3, Pf, 6);
      updateState3(nu, out[0]!, w, xs, 3);
      for (let i = 0; i < 6; i++) expect(Object.is(xs[i], xf[i])).toBe(true);
      const g = new Float64Array(9);
      expect(rtsStep3p(F, Q, xf, 0, 3, Pf, 0, 6, g)).toBe(true);
      rtsState3(F, g, xs, 0, 3);
      for (let i = 0; i < 6; i++) expect(Object.is(xs[i], xf[i])).toBe(true);
    }
  });
});

describe('out-of-place RTS kernels (rtsStep3pFrom, rtsState3From) equal copy-then-in-place bit for bit', () => {
  it('random SPD covariances, states and F, with and without the gain out', () => {
    const rng = new Rng(77);
    for (let trial = 0; trial < 500; trial++) {
      const F = Float64Array.from({ length: 9 }, (_, i) => (i % 4 === 0 ? 1 : 0) + 0.3 * rng.normal());
      const Q = spd(rng, 0.01);
      const fx = Float64Array.from({ length: 6 }, () => rng.normal() * 10);
      const fP = Float64Array.from([...pack(spd(rng, 1)), ...pack(spd(rng, 1))]);
      // smoothed k + 1 in the second slot; filtered k in the first
      const xs = Float64Array.from({ length: 6 }, (_, i) => (i < 3 ? NaN : rng.normal() * 10));
      const Ps = Float64Array.from({ length: 12 }, (_, i) => (i < 6 ? NaN : fP[i]! * 0.5));
      const xa = xs.slice(), Pa = Ps.slice(), ga = new Float64Array(9);
      const xb = xs.slice(), Pb = Ps.slice(), gb = new Float64Array(9);
      for (let i = 0; i < 3; i++) xb[i] = fx[i]!;
      for (let i = 0; i < 6; i++) Pb[i] = fP[i]!;
      const oka = rtsStep3pFrom(F, Q, fx, fP, xa, 0, 3, Pa, 0, 6, trial % 2 === 0 ? ga : undefined);
      const okb = rtsStep3p(F, Q, xb, 0, 3, Pb, 0, 6, gb);
      expect(oka).toBe(okb);
      for (let i = 0; i < 6; i++) expect(Object.is(xa[i], xb[i])).toBe(true);
      for (let i = 0; i < 12; i++) expect(Object.is(Pa[i], Pb[i])).toBe(true);
      if (trial % 2 === 0) for (let i = 0; i < 9; i++) expect(Object.is(ga[i], gb[i])).toBe(true);
      if (!oka) continue;
      const ya = xs.slice(), yb = xs.slice();
      for (let i = 0; i < 3; i++) yb[i] = fx[i]!;
      rtsState3From(F, gb, fx, ya, 0, 3);
      rtsState3(F, gb, yb, 0, 3);
      for (let i = 0; i < 6; i++) expect(Object.is(ya[i], yb[i])).toBe(true);
    }
  });
});
