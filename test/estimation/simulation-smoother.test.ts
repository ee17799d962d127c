/**
 * The simulation smoother kernels (backwardGain, backwardDraw, gaussianDraw, choleskyPsd) on the
 * scalar local level model of the Nile series, x_{t+1} = x_t + η (q = 1469.1), y_t = x_t + ε
 * (r = 15099), x₁ ~ N(0, 1e8): Durbin & Koopman, "Time Series Analysis by State Space Methods"
 * (2nd ed. 2012), ch. 2 (the model and the data; test/estimation/local-level.test.ts checks the
 * filter and smoother against the published values). Here: draws by forward filtering, backward
 * sampling (Carter & Kohn 1994; Frühwirth-Schnatter 1994) must have the smoother's moments — per
 * epoch mean and variance (Durbin & Koopman §2.4) and the lag-one covariance G_t P^s_{t+1}
 * (Rauch, Tung & Striebel 1965; Särkkä 2013 §8.2) — within 3 Monte-Carlo standard errors.
 */
import { describe, expect, it } from 'vitest';
import { backwardDraw, backwardGain, choleskyPsd, gaussianDraw, makeBackwardScratch } from '../../src/estimation/simulation-smoother.js';
import { Rng } from '../../src/simulate/rng.js';

// Annual flow of the Nile at Aswan, 1871–1970 (10⁸ m³), the series of local-level.test.ts (sum 91935)
const NILE = [
  1120, 1160, 963, 1210, 1160, 1160, 813, 1230, 1370, 1140, 995, 935, 1110, 994, 1020, 960, 1180, 799, 958, 1140,
  1100, 1210, 1150, 1250, 1260, 1220, 1030, 1100, 774, 840, 874, 694, 940, 833, 701, 916, 692, 1020, 1050, 969,
  831, 726, 456, 824, 702, 1120, 1100, 832, 764, 821, 768, 845, 864, 862, 698, 845, 744, 796, 1040, 759,
  781, 865, 845, 944, 984, 897, 822, 1010, 771, 676, 649, 846, 812, 742, 801, 1040, 860, 874, 848, 890,
  744, 749, 838, 1050, 918, 986, 797, 923, 975, 815, 1020, 906, 901, 1170, 912, 746, 919, 718, 714, 740,
];

const q = 1469.1, r = 15099;
const N = NILE.length;

/** Scalar filter and smoother (Durbin & Koopman §2.2, §2.4), written out: the reference moments. */
function reference() {
  const PPred = new Float64Array(N), xf = new Float64Array(N), Pf = new Float64Array(N);
  let a = 0, p = 1e8;
  for (let t = 0; t < N; t++) {
    PPred[t] = p;
    const k = p / (p + r);
    xf[t] = a + k * (NILE[t]! - a);
    Pf[t] = p * (1 - k);
    a = xf[t]!;
    p = Pf[t]! + q;
  }
  const xs = xf.slice(), Ps = Pf.slice(), lag1 = new Float64Array(N);
  for (let t = N - 2; t >= 0; t--) {
    const g = Pf[t]! / PPred[t + 1]!;
    xs[t] = xf[t]! + g * (xs[t + 1]! - xf[t]!);
    Ps[t] = Pf[t]! + g * g * (Ps[t + 1]! - PPred[t + 1]!);
    // Cov(x_t, x_{t+1} | y) = G_t P^s_{t+1}
    lag1[t] = g * Ps[t + 1]!;
  }
  return { xf, Pf, xs, Ps, lag1 };
}

describe('simulation smoother on the Nile local level model (Durbin & Koopman ch. 2)', () => {
  const ref = reference();
  const M = 4000;
  const draws = Array.from({ length: M }, () => new Float64Array(N));
  const F = Float64Array.of(1), Q = Float64Array.of(q);
  const G = new Float64Array(1), c = new Float64Array(1), Lc = new Float64Array(1), L = new Float64Array(1);
  const sc = makeBackwardScratch(1);
  const xi = new Float64Array(1);
  const rng = new Rng(20260512);
  choleskyPsd(1, ref.Pf.subarray(N - 1), L);
  for (let m = 0; m < M; m++) {
    xi[0] = rng.normal();
    gaussianDraw(1, ref.xf, N - 1, L, xi, draws[m]!, N - 1);
  }
  for (let t = N - 2; t >= 0; t--) {
    expect(backwardGain(1, F, Q, ref.xf, t, ref.Pf, t, G, c, Lc, sc)).toBe(true);
    for (let m = 0; m < M; m++) {
      xi[0] = rng.normal();
      backwardDraw(1, G, c, Lc, draws[m]!, t + 1, xi, draws[m]!, t);
    }
  }
  const mean = new Float64Array(N), v = new Float64Array(N), cov1 = new Float64Array(N);
  for (let t = 0; t < N; t++) {
    for (let m = 0; m < M; m++) mean[t] += draws[m]![t]! / M;
    for (let m = 0; m < M; m++) v[t] += (draws[m]![t]! - mean[t]!) ** 2 / (M - 1);
  }
  for (let t = 0; t + 1 < N; t++) for (let m = 0; m < M; m++) cov1[t] += ((draws[m]![t]! - mean[t]!) * (draws[m]![t + 1]! - mean[t + 1]!)) / (M - 1);

  it.each([0, 1, 25, 50, 75, 98, 99])('epoch %d: mean within 3 standard errors of the smoothed state', (t) => {
    // SE of a mean of M draws: sqrt(P^s / M)
    expect(Math.abs(mean[t]! - ref.xs[t]!)).toBeLessThan(3 * Math.sqrt(ref.Ps[t]! / M));
  });
  it.each([0, 1, 25, 50, 75, 98, 99])('epoch %d: variance within 3 standard errors of the smoothed variance', (t) => {
    // SE of a Gaussian sample variance: P^s √(2 / (M − 1))
    expect(Math.abs(v[t]! - ref.Ps[t]!)).toBeLessThan(3 * ref.Ps[t]! * Math.sqrt(2 / (M - 1)));
  });
  it.each([0, 25, 50, 98])('epoch %d: lag-one covariance within 3 standard errors of G_t P^s_{t+1}', (t) => {
    // SE of a Gaussian sample covariance: sqrt((σ₁²σ₂² + c²) / (M − 1))
    const se = Math.sqrt((ref.Ps[t]! * ref.Ps[t + 1]! + ref.lag1[t]! ** 2) / (M - 1));
    expect(Math.abs(cov1[t]! - ref.lag1[t]!)).toBeLessThan(3 * se);
  });
  it('pooled over all 100 epochs, the standardized variance errors show no systematic offset', () => {
    let z = 0;
    for (let t = 0; t < N; t++) z += (v[t]! - ref.Ps[t]!) / (ref.Ps[t]! * Math.sqrt(2 / (M - 1)));
    // neighbouring epochs' errors are correlated, so this is a loose check on a systematic offset
    expect(Math.abs(z / N)).toBeLessThan(3);
  });
});

describe('choleskyPsd', () => {
  it('factors a singular covariance (a direction of zero variance) without failing', () => {
    // [[1, 1], [1, 1]]: rank one, L = [[1, 0], [1, 0]]
    const L = new Float64Array(4);
    choleskyPsd(2, Float64Array.of(1, 1, 1, 1), L);
    expect(Array.from(L)).toEqual([1, 0, 1, 0]);
  });
  it('equals the ordinary factor on a positive-definite matrix (tol 1e-15)', () => {
    const L = new Float64Array(4);
    choleskyPsd(2, Float64Array.of(4, 2, 2, 3), L);
    const want = [2, 0, 1, Math.sqrt(2)];
    for (let i = 0; i < 4; i++) expect(Math.abs(L[i]! - want[i]!)).toBeLessThan(1e-15);
  });
});
