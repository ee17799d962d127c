/**
 * The packed n = 3 kernels (kalman3.ts, upper-triangle covariances as stored in the filter
 * histories) against the full-matrix n = 3 kernels, bit for bit: on symmetric input (every history
 * covariance is symmetric bit for bit) they must give identical states and covariances.
 */
import { describe, expect, it } from 'vitest';
import { innovation3p, predict3p, rtsState3, rtsState3From, rtsStep3p, rtsStep3pFrom, updateJoseph3p } from '../../src/estimation/kalman3.js';
import { innovation3, predict3, rtsStep3, updateJoseph3 } from '../helpers/kalman3-full.js';
import { covIndex } from '../../src/estimation/track-filter.js';
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

const pack = (P: Float64Array, off = 0) => Float64Array.from([0, 1, 2, 4, 5, 8], (i) => P[off + i]!);

function expectSameBits(packed: Float64Array, full: Float64Array): void {
  for (let i = 0; i < 3; i++)
    for (let j = 0; j < 3; j++) {
      expect(Object.is(full[i * 3 + j], full[j * 3 + i])).toBe(true);
      expect(Object.is(packed[covIndex(3, i, j)], full[i * 3 + j])).toBe(true);
    }
}

describe('packed n = 3 kernels equal the full n = 3 kernels bit for bit', () => {
  for (const dense of [false, true])
    for (const h of [Float64Array.from([1, 0, 1]), Float64Array.from([1, 0, 0])])
      it(`${dense ? 'dense' : 'CV + GM'} F, h = [${Array.from(h).join(', ')}]`, () => {
        const rng = new Rng(dense ? 41 : 23);
        for (let trial = 0; trial < 300; trial++) {
          const dt = rng.uniform(0.05, 5);
          const F = dense ? Float64Array.from({ length: 9 }, (_, i) => (i % 4 === 0 ? 1 : 0) + 0.3 * rng.normal()) : Float64Array.from([1, dt, 0, 0, 1, 0, 0, 0, Math.exp(-dt / 45)]);
          const Q = spd(rng, 0.01);
          const P0 = spd(rng, rng.uniform(0.1, 100));
          const x0 = Float64Array.from({ length: 3 }, () => 10 * rng.normal());
          // two-epoch histories, as in forwardFilter: epoch 0 filtered, epoch 1 predicted then updated
          const xf = new Float64Array(6), Pf = new Float64Array(18), xp = new Float64Array(6), Pp = new Float64Array(12);
          xf.set(x0); xp.set(x0); Pf.set(P0); Pp.set(pack(P0));
          predict3(F, Q, xf, 0, Pf, 0, xf, 3, Pf, 9);
          predict3p(F, Q, xp, 0, Pp, 0, xp, 3, Pp, 6);
          expect(Array.from(xp)).toEqual(Array.from(xf));
          expectSameBits(Pp.subarray(6), Pf.subarray(9));
          const z = xf[3]! + rng.normal() * 3;
          const r = rng.uniform(0.5, 10);
          const wf = new Float64Array(3), wp = new Float64Array(3), of = new Float64Array(1), op = new Float64Array(1);
          const nuf = innovation3(h, z, r, xf, 3, Pf, 9, wf, of);
          const nup = innovation3p(h, z, r, xp, 3, Pp, 6, wp, op);
          expect(Object.is(nup, nuf)).toBe(true);
          expect(Object.is(op[0], of[0])).toBe(true);
          expect(Array.from(wp)).toEqual(Array.from(wf));
          updateJoseph3(h, nuf, of[0]!, r, wf, xf, 3, Pf, 9);
          updateJoseph3p(h, nup, op[0]!, r, wp, xp, 3, Pp, 6);
          expect(Array.from(xp)).toEqual(Array.from(xf));
          expectSameBits(Pp.subarray(6), Pf.subarray(9));
          // RTS step back to epoch 0 (epoch 1 taken as smoothed)
          const okf = rtsStep3(F, Q, xf, 0, 3, Pf, 0, 9);
          const okp = rtsStep3p(F, Q, xp, 0, 3, Pp, 0, 6);
          expect(okp).toBe(okf);
          expect(Array.from(xp)).toEqual(Array.from(xf));
          expectSameBits(Pp.subarray(0, 6), Pf.subarray(0, 9));
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
      const oka = rtsStep3pFrom(F, Q, fx, fP, xa, 0, 3, Pa, 0, 6, ga);
      const okb = rtsStep3p(F, Q, xb, 0, 3, Pb, 0, 6, gb);
      expect(oka).toBe(okb);
      for (let i = 0; i < 6; i++) expect(Object.is(xa[i], xb[i])).toBe(true);
      for (let i = 0; i < 12; i++) expect(Object.is(Pa[i], Pb[i])).toBe(true);
      for (let i = 0; i < 9; i++) expect(Object.is(ga[i], gb[i])).toBe(true);
      if (!oka) continue;
      const ya = xs.slice(), yb = xs.slice();
      for (let i = 0; i < 3; i++) yb[i] = fx[i]!;
      rtsState3From(F, ga, fx, ya, 0, 3);
      rtsState3(F, gb, yb, 0, 3);
      for (let i = 0; i < 6; i++) expect(Object.is(ya[i], yb[i])).toBe(true);
    }
  });
});
