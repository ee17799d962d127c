/**
 * How noise lengthens a polyline of raw fixes (session/survey/raw-length.ts): the Rice mean E|ν + δ|
 * (Rice 1945) with its Bessel functions from Abramowitz & Stegun 9.8.1–9.8.4, checked against its
 * closed-form limits and against simulated straight walks with white and correlated noise.
 */
import { describe, expect, it } from 'vitest';
import { besselI0e, besselI1e, expectedStepLength, stepErrorVariance } from '../../../src/session/survey/raw-length.js';
import { Rng } from '../../../src/simulate/rng.js';

describe('Bessel functions (Abramowitz & Stegun 1964, Table 9.8: e^{-x} I0(x), e^{-x} I1(x))', () => {
  // table values, from memory of A&S Table 9.8 / the series Σ (x/2)^{2k}/(k!)²; tol 3e-7
  it.each([
    [0, 1, 0],
    [1, 0.4657596, 0.2079104],
    [2, 0.3085083, 0.2152693],
    [5, 0.1835408, 0.1639722],
  ])('x = %d: I0e = %f, I1e = %f (tol 3e-7)', (x, i0, i1) => {
    expect(Math.abs(besselI0e(x) - i0)).toBeLessThan(3e-7);
    expect(Math.abs(besselI1e(x) - i1)).toBeLessThan(3e-7);
  });
});

describe('expected step length (Rice mean)', () => {
  it('is the Rayleigh mean s√(π/2) for a zero step (tol 1e-7)', () => {
    expect(Math.abs(expectedStepLength(0, 4) - 2 * Math.sqrt(Math.PI / 2))).toBeLessThan(1e-7);
  });
  it('tends to ν + s²/(2ν) for ν ≫ s (tol 1e-4 relative to the correction)', () => {
    const nu = 50, s2 = 1;
    expect(Math.abs(expectedStepLength(nu, s2) - nu - s2 / (2 * nu)) / (s2 / (2 * nu))).toBeLessThan(1e-2);
  });
  it('matches simulated raw polylines of straight walks within 3 standard errors (pooled over 400 walks)', () => {
    // 1 Hz fixes on a straight line at 1.3 m/s, white noise 2 m per axis, Gauss–Markov 1.5 m, τ = 60 s
    const rng = new Rng(99);
    const v = 1.3, sw = 2, sb = 1.5, tau = 60, n = 300, dt = 1;
    const phi = Math.exp(-dt / tau);
    const s2 = stepErrorVariance(sw * sw, sw * sw, dt, sb, tau);
    const expected = (n - 1) * expectedStepLength(v * dt, s2);
    const L: number[] = [];
    for (let w = 0; w < 400; w++) {
      let be = rng.normal() * sb, bn = rng.normal() * sb;
      let pe = NaN, pn = NaN, len = 0;
      for (let k = 0; k < n; k++) {
        if (k > 0) {
          be = phi * be + Math.sqrt(1 - phi * phi) * sb * rng.normal();
          bn = phi * bn + Math.sqrt(1 - phi * phi) * sb * rng.normal();
        }
        const e = v * dt * k + be + sw * rng.normal(), nn = bn + sw * rng.normal();
        if (k > 0) len += Math.hypot(e - pe, nn - pn);
        pe = e;
        pn = nn;
      }
      L.push(len);
    }
    const mean = L.reduce((a, b) => a + b, 0) / L.length;
    const sd = Math.sqrt(L.reduce((a, b) => a + (b - mean) ** 2, 0) / (L.length - 1));
    console.log(`straight walk 300 fixes: true ${((n - 1) * v).toFixed(1)} m, raw polyline ${mean.toFixed(1)} ± ${(sd / Math.sqrt(L.length)).toFixed(1)} m, expected ${expected.toFixed(1)} m`);
    expect(Math.abs(mean - expected)).toBeLessThan(3 * sd / Math.sqrt(L.length));
    // the excess is large: more than twice the true length at 1.3 m per step and 2 m noise
    expect(mean).toBeGreaterThan(2 * (n - 1) * v);
  });
});
