/**
 * Strapdown mechanization against closed-form motions, and the gravity model against published
 * values (NIMA TR8350.2: γe = 9.7803253359, γp = 9.8321849378 m/s²; tolerance 1e-9 m/s²).
 */
import { describe, expect, it } from 'vitest';
import { gravityAtHeightMps2, normalGravityMps2, earthRateEnu } from '../../src/models/ins/gravity.js';
import { makeMechParams, makeMechScratch, mechanize, NAV_LEN, NAV_P, NAV_Q, NAV_V, gravityAt } from '../../src/models/ins/mechanization.js';
import { dcmToEuler, quatFromEuler, quatToDcm } from '../../src/models/ins/attitude.js';

const D = Math.PI / 180;

describe('normal gravity (WGS84, NIMA TR8350.2)', () => {
  it.each([
    [0, 9.7803253359, 'equator, γe (TR8350.2 Table 3.4)'],
    [90, 9.8321849378, 'pole, γp (TR8350.2 Table 3.4)'],
  ])('lat %d° → %f m/s² (%s)', (lat, g) => {
    expect(Math.abs(normalGravityMps2(lat) - g)).toBeLessThan(1e-9);
  });
  it('free-air term: −3.086e-6 m/s² per metre (common practice)', () => {
    expect(gravityAtHeightMps2(45, 1000) - normalGravityMps2(45)).toBeCloseTo(-3.086e-3, 12);
  });
  it('Earth rate 7.292115e-5 rad/s split into north and up at the latitude', () => {
    const w = earthRateEnu(60, new Float64Array(3));
    expect(w[0]).toBe(0);
    expect(Math.hypot(w[1]!, w[2]!)).toBeCloseTo(7.292115e-5, 15);
    expect(w[2]! / w[1]!).toBeCloseTo(Math.tan(60 * D), 10);
  });
});

function run(x: Float64Array, steps: number, dt: number, f: (k: number) => number[], w: (k: number) => number[], mp: ReturnType<typeof makeMechParams>): void {
  const s = makeMechScratch();
  for (let k = 0; k < steps; k++) {
    const a = f(k), g = w(k);
    mechanize(x, a[0]!, a[1]!, a[2]!, g[0]!, g[1]!, g[2]!, dt, mp, s);
  }
}

describe('mechanization vs closed-form motions', () => {
  it('static sensor with Earth rotation: position, velocity and attitude stay put (10 min at 100 Hz)', () => {
    const lat = 52.5;
    const we = earthRateEnu(lat, new Float64Array(3));
    const mp = makeMechParams(lat, 40, true, we);
    const x = new Float64Array(NAV_LEN);
    quatFromEuler(5 * D, -3 * D, 40 * D, x, NAV_Q);
    const C = new Float64Array(9);
    quatToDcm(x, NAV_Q, C);
    const g = gravityAt(mp, 0);
    // f^b = C_bn [0, 0, γ], ω^b = C_bn ω_ie
    const fb = [C[6]! * g, C[7]! * g, C[8]! * g];
    const wb = [0, 1, 2].map((i) => C[i]! * we[0]! + C[3 + i]! * we[1]! + C[6 + i]! * we[2]!);
    run(x, 60000, 0.01, () => fb, () => wb, mp);
    expect(Math.hypot(x[NAV_P]!, x[NAV_P + 1]!, x[NAV_P + 2]!)).toBeLessThan(1e-6);
    expect(Math.hypot(x[NAV_V]!, x[NAV_V + 1]!, x[NAV_V + 2]!)).toBeLessThan(1e-8);
    const e = [0, 0, 0];
    quatToDcm(x, NAV_Q, C);
    dcmToEuler(C, e);
    expect(Math.abs(e[0]! - 5 * D) + Math.abs(e[1]! + 3 * D) + Math.abs(e[2]! - 40 * D)).toBeLessThan(1e-9);
  });

  it('constant-rate turn: a circle of radius V/ω (60 s at 100 Hz, within 1 cm)', () => {
    const mp = makeMechParams(45, 0, false, new Float64Array(3));
    const V = 10, om = 0.2, y0 = 0.3, T = 60;
    const x = new Float64Array(NAV_LEN);
    quatFromEuler(0, 0, y0, x, NAV_Q);
    x[NAV_V] = V * Math.cos(y0);
    x[NAV_V + 1] = V * Math.sin(y0);
    const g = gravityAt(mp, 0);
    // centripetal specific force to the left (body y), yaw rate about body z
    run(x, T * 100, 0.01, () => [0, V * om, g], () => [0, 0, om], mp);
    const R = V / om;
    const ye = y0 + om * T;
    expect(x[NAV_P]!).toBeCloseTo(R * (Math.sin(ye) - Math.sin(y0)), 2);
    expect(x[NAV_P + 1]!).toBeCloseTo(R * (Math.cos(y0) - Math.cos(ye)), 2);
    expect(Math.abs(x[NAV_P + 2]!)).toBeLessThan(1e-6);
    expect(x[NAV_V]!).toBeCloseTo(V * Math.cos(ye), 4);
    expect(x[NAV_V + 1]!).toBeCloseTo(V * Math.sin(ye), 4);
    const C = new Float64Array(9);
    const e = [0, 0, 0];
    quatToDcm(x, NAV_Q, C);
    dcmToEuler(C, e);
    const dy = Math.atan2(Math.sin(e[2]! - ye), Math.cos(e[2]! - ye));
    expect(Math.abs(dy)).toBeLessThan(1e-10);
  });

  it('constant acceleration along a heading: p = ½ a t² (30 s, within 1 mm)', () => {
    const mp = makeMechParams(10, 0, false, new Float64Array(3));
    const a = 1.5, yaw = 30 * D, T = 30;
    const x = new Float64Array(NAV_LEN);
    quatFromEuler(0, 0, yaw, x, NAV_Q);
    const g = gravityAt(mp, 0);
    run(x, T * 100, 0.01, () => [a, 0, g], () => [0, 0, 0], mp);
    const d = 0.5 * a * T * T;
    expect(x[NAV_P]!).toBeCloseTo(d * Math.cos(yaw), 3);
    expect(x[NAV_P + 1]!).toBeCloseTo(d * Math.sin(yaw), 3);
    expect(x[NAV_V]!).toBeCloseTo(a * T * Math.cos(yaw), 6);
  });
});
