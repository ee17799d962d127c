/**
 * The excursion test (src/session/classify/excursion.ts, run by withExcursions after the review):
 * seeded 20 Hz walks along a known path with white fix noise, processed by the review with the
 * constant-velocity model:
 * - a ramp (the offset grows to 20 m over 5 s, holds 1 s, fades over 3 s) on a straight leg is followed by
 *   the review alone, and left out by the excursion test;
 * - a 90° turn, a stop of 20 s and a change of lane of 3.5 m (real motion that the model's process
 *   noise allows) leave nothing to the excursion test, nor does a vehicle's U-turn under a large
 *   process noise, with the agreement judged under that noise or under a quiet motion's.
 * A run that comes back within seconds by more than the model's process noise allows (a sidestep
 * of 3 m and back at a walker's q) is, to the fixes alone, a multipath ramp: it is left out.
 * Criteria are the product's own (common practice: a burst is an outlier, a manoeuvre is not).
 */
import { describe, expect, it } from 'vitest';
import { makeAxisModel } from '../../../src/models/axis-model.js';
import { reviewSegment } from '../../../src/session/classify/review.js';
import { withExcursions } from '../../../src/session/classify/local-noise-scale.js';
import { HELD_OUT, makeWork, predictMeasured, predictMeasuredGeneric } from '../../../src/session/classify/excursion.js';
import { allocateHistory } from '../../../src/estimation/track-filter.js';
import type { FilterOptions, SegmentData } from '../../../src/estimation/track-filter.js';
import type { ReviewOptions } from '../../../src/session/prepare/axis-params.js';
import { Rng } from '../../../src/simulate/rng.js';

const RATE_HZ = 20;
const SIGMA_M = 0.5;
const opt: FilterOptions = { gateProbability: 0.9995, reacquireAfter: 6, reacquireAfterSec: 5.5, priorVar: [1e6, 100, 10] };
const ro: ReviewOptions = { probability: 0.9995, maxPasses: 10, guardSec: 5 };
// a walker's model: little process noise, a slow correlated error (at 20 Hz the fixes' rate still lets the track follow a ramp)
const models = [0, 1].map(() => makeAxisModel({ motion: 'cv', q: 0.05, gm: { sigmaM: 2, tauSec: 100 } }));

/** A segment of `durSec` at RATE_HZ along path(t) → [e, n] (m), plus offset(t), with seeded white noise. */
function segment(durSec: number, path: (t: number) => [number, number], offset: (t: number) => [number, number], seed: number): { data: SegmentData; off: Float64Array } {
  const rng = new Rng(seed);
  const N = Math.round(durSec * RATE_HZ);
  const tSec = new Float64Array(N), ze = new Float64Array(N), zn = new Float64Array(N), off = new Float64Array(N);
  for (let k = 0; k < N; k++) {
    const t = k / RATE_HZ;
    const [e, n] = path(t), [oe, on] = offset(t);
    tSec[k] = t;
    ze[k] = e + oe + SIGMA_M * rng.normal();
    zn[k] = n + on + SIGMA_M * rng.normal();
    off[k] = Math.hypot(oe, on);
  }
  const r = () => new Float64Array(N).fill(SIGMA_M ** 2);
  return { data: { N, tSec, z: [ze, zn], r: [r(), r()], use: new Uint8Array(N).fill(1) }, off };
}

const none = (): [number, number] => [0, 0];
const straight = (t: number): [number, number] => [1.4 * t, 0];

function run(data: SegmentData, excursions: boolean, extra: Partial<ReviewOptions> = {}) {
  const offered = data.use.slice();
  const rev = reviewSegment(models, data, offered, opt, { ...ro, ...extra, excursions });
  const out = withExcursions(models, data, offered, opt, { ...ro, ...extra, excursions }, rev);
  const byExcursion = [...out.why.values()].filter((d) => d.test === 'excursion').length;
  return { out, offered, byExcursion };
}

describe('a ramp on a straight leg', () => {
  // offset north grows 0 → 20 m over 5 s from t = 60 s, holds 1 s, then fades over 3 s
  const ramp = (t: number): [number, number] => [0, t < 60 || t >= 69 ? 0 : t < 65 ? 4 * (t - 60) : t < 66 ? 20 : 20 * (1 - (t - 66) / 3)];
  const { data, off } = segment(120, straight, ramp, 5);
  const far = [...off.keys()].filter((k) => off[k]! >= 10);
  const clean = [...off.keys()].filter((k) => off[k] === 0);
  it('the review alone follows most of it', () => {
    const { out } = run(data, false);
    const keptFar = far.filter((k) => out.kept[k]).length;
    console.log(`review alone: ${keptFar} of ${far.length} fixes ≥ 10 m off kept`);
    expect(keptFar / far.length).toBeGreaterThan(0.5);
  });
  it('the excursion test leaves most of it out (≥ 80% of the fixes ≥ 10 m off; measured 86 of 101), holding them, and at most one clean fix', () => {
    const { out, offered, byExcursion } = run(data, true);
    const outFar = far.filter((k) => !out.kept[k]).length;
    const outClean = clean.filter((k) => !out.kept[k]).length;
    console.log(`with the excursion test: ${outFar} of ${far.length} fixes ≥ 10 m off left out (${byExcursion} by the excursion test), ${outClean} of ${clean.length} clean fixes`);
    expect(outFar / far.length).toBeGreaterThanOrEqual(0.8);
    expect(byExcursion).toBeGreaterThan(0);
    expect(outClean).toBeLessThanOrEqual(1);
    for (const [k, d] of out.why) if (d.test === 'excursion') expect(offered[k]).toBe(HELD_OUT);
  });
});

describe('a ramp judged with the agreement under a quiet motion', () => {
  const ramp = (t: number): [number, number] => [0, t < 60 || t >= 69 ? 0 : t < 65 ? 4 * (t - 60) : t < 66 ? 20 : 20 * (1 - (t - 66) / 3)];
  const { data, off } = segment(120, straight, ramp, 5);
  const far = [...off.keys()].filter((k) => off[k]! >= 10);
  const clean = [...off.keys()].filter((k) => off[k] === 0);
  it('the departure judged against the combined bridge leaves out every fix ≥ 10 m off (measured 101 of 101) and at most one clean fix', () => {
    const { out } = run(data, true, { excursionQHorizontal: 0.01 });
    const outFar = far.filter((k) => !out.kept[k]).length;
    const outClean = clean.filter((k) => !out.kept[k]).length;
    console.log(`quiet motion q 0.01: ${outFar} of ${far.length} fixes ≥ 10 m off left out, ${outClean} of ${clean.length} clean fixes`);
    expect(outFar).toBe(far.length);
    expect(outClean).toBeLessThanOrEqual(1);
  });
});

describe('real motion is left to the track', () => {
  const cases: Array<[string, (t: number) => [number, number]]> = [
    // 90° left turn at 60 s over 3 s (radius 2.7 m at 1.4 m/s)
    ['a 90° turn', (t) => {
      const r = (1.4 * 3) / (Math.PI / 2);
      if (t < 60) return [1.4 * t, 0];
      if (t < 63) { const a = ((t - 60) / 3) * (Math.PI / 2); return [84 + r * Math.sin(a), r * (1 - Math.cos(a))]; }
      return [84 + r, r + 1.4 * (t - 63)];
    }],
    // decelerate over 3 s, stand 20 s, accelerate over 3 s
    ['a stop of 20 s', (t) => {
      const v = 1.4;
      if (t < 50) return [v * t, 0];
      if (t < 53) return [v * 50 + v * (t - 50) - (v / 6) * (t - 50) ** 2, 0];
      const p0 = v * 50 + 1.5 * v;
      if (t < 73) return [p0, 0];
      if (t < 76) return [p0 + (v / 6) * (t - 73) ** 2, 0];
      return [p0 + 1.5 * v + v * (t - 76), 0];
    }],
    // a 3.5 m change of lane over 6 s (it does not come back)
    ['a change of lane of 3.5 m', (t) => [1.4 * t, t < 60 ? 0 : t > 66 ? 3.5 : 3.5 * Math.sin(((t - 60) / 12) * Math.PI) ** 2]],
  ];
  it.each(cases)('%s: no fix left out by the excursion test', (_name, path) => {
    const { data } = segment(120, path, none, 7);
    expect(run(data, true).byExcursion).toBe(0);
    // and with the agreement under a quiet motion (the departure then against the combined bridge)
    expect(run(data, true, { excursionQHorizontal: 0.01 }).byExcursion).toBe(0);
  });
});

describe('a vehicle under a large process noise', () => {
  // a U-turn: 10 m/s east, a half circle of radius 8 m (2.5 s), 10 m/s west; q of a vehicle that turns
  const R = 8, V = 10, T0 = 60, TT = (Math.PI * R) / V;
  const uTurn = (t: number): [number, number] => {
    if (t < T0) return [V * t, 0];
    if (t < T0 + TT) { const a = ((t - T0) / TT) * Math.PI; return [V * T0 + R * Math.sin(a), R * (1 - Math.cos(a))]; }
    return [V * T0 - V * (t - T0 - TT), 2 * R];
  };
  const vehicle = [0, 1].map(() => makeAxisModel({ motion: 'cv', q: 3, gm: { sigmaM: 2, tauSec: 100 } }));
  const runVehicle = (data: SegmentData, r: ReviewOptions) => {
    const offered = data.use.slice();
    const rev = reviewSegment(vehicle, data, offered, opt, r);
    const out = withExcursions(vehicle, data, offered, opt, r, rev);
    return [...out.why.values()].filter((d) => d.test === 'excursion').length;
  };
  const { data } = segment(120, uTurn, none, 11);
  it.each([['the calibrated process noise', {}], ['the quiet motion (q 0.05)', { excursionQHorizontal: 0.05 }]] as Array<[string, Partial<ReviewOptions>]>)('with the agreement judged under %s, no fix of the U-turn is left out', (_name, extra) => {
    expect(runVehicle(data, { ...ro, ...extra })).toBe(0);
  });
});

describe('the closed-form prediction of the measured quantity', () => {
  // constant velocity with and without the correlated-error state, against F P Fᵀ + Q by matrix products
  const cases: Array<[string, ReturnType<typeof makeAxisModel>]> = [
    ['cv + Gauss–Markov', makeAxisModel({ motion: 'cv', q: 0.7, gm: { sigmaM: 1.8, tauSec: 40 } })],
    ['cv alone', makeAxisModel({ motion: 'cv', q: 0.05, gm: null })],
  ];
  it.each(cases)('%s: the same m and v as the matrix products (tol 1e-12 relative)', (_name, model) => {
    const rng = new Rng(21);
    const n = model.n;
    const h = allocateHistory(4, [model]);
    const stride = n === 3 ? 6 : n * n;
    for (let k = 0; k < 4; k++) {
      for (let i = 0; i < n; i++) h.x[0]![k * n + i] = 3 * rng.normal();
      // a symmetric positive definite covariance: A Aᵀ + I
      const A = Array.from({ length: n * n }, () => rng.normal());
      const full = (i: number, j: number) => A.slice(i * n, i * n + n).reduce((s, v, l) => s + v * A[j * n + l]!, 0) + (i === j ? 1 : 0);
      if (n === 3) [[0, 0], [0, 1], [0, 2], [1, 1], [1, 2], [2, 2]].forEach(([i, j], c) => (h.P[0]![k * stride + c] = full(i!, j!)));
      else for (let i = 0; i < n; i++) for (let j = 0; j < n; j++) h.P[0]![k * stride + i * n + j] = full(i, j);
    }
    const w = makeWork(n), a = new Float64Array(2), b = new Float64Array(2);
    for (const dt of [0.05, 1, 7.5, 30])
      for (let k = 0; k < 4; k++) {
        predictMeasured(model, h, 0, k, dt, w, a, 0);
        predictMeasuredGeneric(model, h, 0, k, dt, w, b, 0);
        expect(Math.abs(a[0]! - b[0]!)).toBeLessThanOrEqual(1e-12 * Math.max(1, Math.abs(b[0]!)));
        expect(Math.abs(a[1]! - b[1]!)).toBeLessThanOrEqual(1e-12 * Math.max(1, b[1]!));
      }
  });
});
