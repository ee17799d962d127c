/**
 * The generic kernels (predict, innovation, updateJoseph, rtsStep) on the scalar local level model:
 * x_{t+1} = x_t + η (variance q), y_t = x_t + ε (variance r).
 * Source: Durbin & Koopman, "Time Series Analysis by State Space Methods" (2nd ed. 2012), ch. 2
 * (the Nile example: r = 15099, q = 1469.1, x1 ~ N(0, 1e8) as a near-diffuse prior); the same numbers
 * are worked in the GAUSS state-space library documentation ("sskalmansmooth"). Check values from
 * test/reference/reference-values.md; the GAUSS page itself was not at hand while writing this, but
 * every value below was reproduced independently by a plain scalar recursion (numpy) and agrees to
 * all printed digits, and the variances also follow from the closed forms quoted beside them.
 */
import { describe, expect, it } from 'vitest';
import { innovation, makeScratch, predict, updateJoseph } from '../../src/estimation/kalman.js';
import { makeRtsScratch, rtsStep } from '../../src/estimation/rts.js';

/**
 * Annual flow of the Nile at Aswan, 1871–1970 (10⁸ m³), 100 values. Typed "from memory"; it agrees
 * value for value with R's datasets::Nile as reproduced in public repositories (e.g. an R
 * `structure(c(1120, 1160, …), .Tsp = c(1871, 1970, 1))` listing), and its sum, 91935, is the check
 * that reference-values.md asks for.
 */
const NILE = [
  1120, 1160, 963, 1210, 1160, 1160, 813, 1230, 1370, 1140, 995, 935, 1110, 994, 1020, 960, 1180, 799, 958, 1140,
  1100, 1210, 1150, 1250, 1260, 1220, 1030, 1100, 774, 840, 874, 694, 940, 833, 701, 916, 692, 1020, 1050, 969,
  831, 726, 456, 824, 702, 1120, 1100, 832, 764, 821, 768, 845, 864, 862, 698, 845, 744, 796, 1040, 759,
  781, 865, 845, 944, 984, 897, 822, 1010, 771, 676, 649, 846, 812, 742, 801, 1040, 860, 874, 848, 890,
  744, 749, 838, 1050, 918, 986, 797, 923, 975, 815, 1020, 906, 901, 1170, 912, 746, 919, 718, 714, 740,
];

interface Run {
  xPred: Float64Array;
  PPred: Float64Array;
  xFilt: Float64Array;
  PFilt: Float64Array;
  xSmooth: Float64Array;
  PSmooth: Float64Array;
  /** every rtsStep reported a positive-definite prediction */
  ok?: boolean;
}

/** Filter with the library kernels (n = 1) and smooth with rtsStep. */
function runLocalLevel(y: number[], q: number, r: number, x1: number, P1: number): Run {
  const N = y.length;
  const n = 1;
  const F = Float64Array.of(1);
  const Q = Float64Array.of(q);
  const h = Float64Array.of(1);
  const s = makeScratch(n);
  const out = new Float64Array(1);
  const x = new Float64Array(N);
  const P = new Float64Array(N);
  const xPred = new Float64Array(N);
  const PPred = new Float64Array(N);
  for (let t = 0; t < N; t++) {
    if (t === 0) {
      x[0] = x1;
      P[0] = P1;
    } else predict(n, F, Q, x, t - 1, P, t - 1, x, t, P, t, s);
    xPred[t] = x[t]!;
    PPred[t] = P[t]!;
    const nu = innovation(n, h, y[t]!, r, x, t, P, t, s, out);
    updateJoseph(n, h, nu, out[0]!, r, x, t, P, t, s);
  }
  const xFilt = x.slice();
  const PFilt = P.slice();
  const rs = makeRtsScratch(n, makeScratch(n));
  let ok = true;
  for (let t = N - 2; t >= 0; t--) ok = rtsStep(n, F, Q, x, t, t + 1, P, t, t + 1, rs) && ok;
  return { xPred, PPred, xFilt, PFilt, xSmooth: x, PSmooth: P, ok };
}

/** Plain scalar recursion (Durbin & Koopman §2.2, §2.4), written out independently of the kernels. */
function scalarReference(y: number[], q: number, r: number, x1: number, P1: number): Run {
  const N = y.length;
  const xPred = new Float64Array(N), PPred = new Float64Array(N), xFilt = new Float64Array(N), PFilt = new Float64Array(N);
  let a = x1, p = P1;
  for (let t = 0; t < N; t++) {
    xPred[t] = a;
    PPred[t] = p;
    const k = p / (p + r);
    xFilt[t] = a + k * (y[t]! - a);
    PFilt[t] = p * (1 - k);
    a = xFilt[t]!;
    p = PFilt[t]! + q;
  }
  const xSmooth = xFilt.slice(), PSmooth = PFilt.slice();
  for (let t = N - 2; t >= 0; t--) {
    const g = PFilt[t]! / PPred[t + 1]!;
    xSmooth[t] = xFilt[t]! + g * (xSmooth[t + 1]! - xFilt[t]!);
    PSmooth[t] = PFilt[t]! + g * g * (PSmooth[t + 1]! - PPred[t + 1]!);
  }
  return { xPred, PPred, xFilt, PFilt, xSmooth, PSmooth };
}

describe('Nile series (the data itself)', () => {
  it('has 100 values summing to 91935 (reference-values.md check)', () => {
    expect(NILE.length).toBe(100);
    expect(NILE.reduce((s, v) => s + v, 0)).toBe(91935);
  });
});

describe('Nile local level model, q = 1469.1, r = 15099, x1 ~ N(0, 1e8) (Durbin & Koopman ch. 2)', () => {
  const q = 1469.1;
  const r = 15099;
  const run = runLocalLevel(NILE, q, r, 0, 1e8);

  // filtered state a_{t|t}, first five; D&K ch. 2 / GAUSS sskalmansmooth, via reference-values.md; tol 1e-5
  it.each([
    [0, 1119.830917], [1, 1140.845842], [2, 1072.750253], [3, 1117.275521], [4, 1129.948494],
  ])('filtered[%d] = %f (D&K ch. 2 / GAUSS sskalmansmooth; tol 1e-5)', (t, v) => {
    expect(Math.abs(run.xFilt[t]! - v)).toBeLessThan(1e-5);
  });

  // smoothed state, first five; D&K ch. 2 / GAUSS sskalmansmooth, via reference-values.md; tol 1e-4
  it.each([
    [0, 1111.623497], [1, 1110.824812], [2, 1105.241488], [3, 1113.497953], [4, 1112.364977],
  ])('smoothed[%d] = %f (D&K ch. 2 / GAUSS sskalmansmooth; tol 1e-4)', (t, v) => {
    expect(Math.abs(run.xSmooth[t]! - v)).toBeLessThan(1e-4);
  });

  it('steady predicted variance P̄ = 5501.2579 = r(ρ + √(ρ² + 4ρ))/2 (D&K ch. 2; tol 1e-3)', () => {
    const rho = q / r;
    const closed = (r * (rho + Math.sqrt(rho * rho + 4 * rho))) / 2;
    expect(Math.abs(closed - 5501.2579)).toBeLessThan(1e-3);
    for (const t of [40, 50, 99]) expect(Math.abs(run.PPred[t]! - 5501.2579)).toBeLessThan(1e-3);
  });
  it('steady filtered variance P = 4032.1579 = P̄ r/(P̄ + r) (D&K ch. 2; tol 1e-3)', () => {
    for (const t of [40, 50, 99]) expect(Math.abs(run.PFilt[t]! - 4032.1579)).toBeLessThan(1e-3);
  });
  it('smoothed variance mid-series 2326.7569 = q r/√(q² + 4 q r) (derived; tol 1e-2)', () => {
    expect(Math.abs((q * r) / Math.sqrt(q * q + 4 * q * r) - 2326.7569)).toBeLessThan(1e-2);
    for (const t of [30, 50, 70]) expect(Math.abs(run.PSmooth[t]! - 2326.7569)).toBeLessThan(1e-2);
    // and at the ends the smoothed variance is larger (less data on one side)
    expect(run.PSmooth[99]).toBeCloseTo(run.PFilt[99]!, 9);
    expect(run.PSmooth[0]!).toBeGreaterThan(2326.7569 + 100);
  });

  it('every smoother step succeeded', () => expect(run.ok).toBe(true));
  it('all 100 filtered and smoothed values equal the plain scalar recursion (derived; tol 1e-9 relative)', () => {
    const ref = scalarReference(NILE, q, r, 0, 1e8);
    for (let t = 0; t < 100; t++) {
      expect(Math.abs(run.xFilt[t]! - ref.xFilt[t]!)).toBeLessThan(1e-9 * ref.xFilt[t]!);
      expect(Math.abs(run.xSmooth[t]! - ref.xSmooth[t]!)).toBeLessThan(1e-9 * ref.xSmooth[t]!);
      expect(Math.abs(run.PFilt[t]! - ref.PFilt[t]!)).toBeLessThan(1e-9 * ref.PFilt[t]!);
      expect(Math.abs(run.PSmooth[t]! - ref.PSmooth[t]!)).toBeLessThan(1e-9 * ref.PSmooth[t]!);
    }
  });
});

describe('local level with q = r = 1: golden-ratio variances (reference-values.md, derived)', () => {
  // P̄ = (1 + √5)/2 = 1.618034, P = 0.618034, smoothed 1/√5 = 0.447214 (derived; tol 1e-6)
  const y = Array.from({ length: 200 }, (_, t) => Math.sin(t / 7) * 3);
  const run = runLocalLevel(y, 1, 1, 0, 1e6);
  it.each([
    ['predicted', 1.618034],
    ['filtered', 0.618034],
    ['smoothed', 0.447214],
  ])('%s variance → %f (derived; tol 1e-6)', (kind, v) => {
    const arr = kind === 'predicted' ? run.PPred : kind === 'filtered' ? run.PFilt : run.PSmooth;
    expect(Math.abs(arr[100]! - v)).toBeLessThan(1e-6);
  });
});
