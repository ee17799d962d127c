/**
 * A robust estimate of the horizontal process noise of the constant-velocity model from the fixes
 * alone, insensitive to bursts and heavy tails: the variance of second differences of position at
 * lags L from 1 s to 32 s, each from the median of the squared differences (a scale estimate whose
 * breakdown point is 50 %; Rousseeuw & Croux, "Alternatives to the median absolute deviation",
 * JASA 88:1273–1283, 1993), fitted by v(L) = a + b·L + c·L³:
 *
 *   p(t+L) − 2p(t) + p(t−L) = ∫ (L − |s − t|) a(s) ds  ⇒  var = (2/3) q L³  (white acceleration, density q)
 *   white fix noise σ²: var(e₁ − 2e₂ + e₃) = 6σ²        (the constant a)
 *   first-order Gauss–Markov error, L ≪ τ: ≈ 4σ_b² L / τ  (the linear term b)
 *
 * so q ≈ 3c/2. A burst or a heavy-tailed manoeuvre moves the mean of D² but hardly its median: the
 * likelihood calibration (calibrate.ts) follows the mean, this follows the bulk of the log. Used by
 * the classification start (session/calibrate/classification-start.ts) to tell a process noise inflated by bursts from the
 * motion of the log.
 */
import type { PreparedSession } from '../prepare/prepare.js';
import { selectKth } from '../../estimation/select.js';

/** Lags (s) of the second differences. */
export const ROBUST_LAGS_SEC = [1, 2, 4, 8, 16, 32];

/** Median of χ²(1): the median of D² is this times var(D) for Gaussian D. */
const MEDIAN_CHI2_1 = 0.454936423119572;

/** Fewest second differences a lag needs to count. */
const MIN_PAIRS = 30;

/**
 * Robust variance of the horizontal second differences per lag (NaN where too few), over the
 * offered fixes of each segment at equal spacing (within 10 % of the lag on both sides).
 */
export function secondDifferenceVariances(ps: PreparedSession, lagsSec: readonly number[] = ROBUST_LAGS_SEC): Float64Array {
  const out = new Float64Array(lagsSec.length).fill(NaN);
  const scratch = { buf: new Float64Array(1024) };
  for (let li = 0; li < lagsSec.length; li++) {
    const m = squaredSecondDifferences(ps, lagsSec[li]!, scratch);
    if (m >= MIN_PAIRS) out[li] = selectKth(scratch.buf.subarray(0, m), m >> 1) / MEDIAN_CHI2_1;
  }
  return out;
}

/**
 * The squared east and north second differences at lag L (s) into scratch.buf (grown as needed),
 * over every step-th centre of each segment (at most ~20,000 differences a lag: the median needs no
 * more); returns their count. A module-level function, not a closure made per call, so that the
 * engine compiles its loop once for all sessions of a thread.
 */
function squaredSecondDifferences(ps: PreparedSession, L: number, scratch: { buf: Float64Array }): number {
  const t = ps.series.tSec;
  const dt = ps.intervalSec > 0 ? ps.intervalSec : 1;
  const stride = Math.max(1, Math.round(L / dt));
  const lag = stride * dt;
  let m = 0;
  let buf = scratch.buf;
  for (const [a, b] of ps.segments) {
    const total = b - a + 1;
    const step = Math.max(1, Math.floor(total / 20000));
    for (let i = a + stride; i + stride <= b; i += step) {
      const i0 = i - stride, i2 = i + stride;
      if (!ps.offered[i0] || !ps.offered[i] || !ps.offered[i2]) continue;
      const d1 = t[i]! - t[i0]!, d2 = t[i2]! - t[i]!;
      if (Math.abs(d1 - lag) > 0.1 * lag || Math.abs(d2 - lag) > 0.1 * lag) continue;
      const de = ps.e[i2]! - 2 * ps.e[i]! + ps.e[i0]!;
      const dn = ps.n[i2]! - 2 * ps.n[i]! + ps.n[i0]!;
      if (!Number.isFinite(de) || !Number.isFinite(dn)) continue;
      if (m + 2 > buf.length) {
        const g = new Float64Array(buf.length * 2);
        g.set(buf);
        buf = scratch.buf = g;
      }
      buf[m++] = de * de;
      buf[m++] = dn * dn;
    }
  }
  return m;
}

/**
 * q (m²/s³) of the constant-velocity model from the robust second-difference variances: the
 * weighted least-squares fit of v(L) = a + b L + c L³ (weights 1/v², i.e. relative errors), with
 * a, b, c ≥ 0 (a negative coefficient is dropped and the rest refitted); NaN with fewer than three lags.
 */
export function robustProcessNoise(ps: PreparedSession, lagsSec: readonly number[] = ROBUST_LAGS_SEC): number {
  // a pool asks for a log's estimate to pick its lead, then the classification start asks again
  const cached = lagsSec === ROBUST_LAGS_SEC ? robustCache.get(ps) : undefined;
  if (cached !== undefined) return cached;
  const q = robustFit(ps, lagsSec);
  if (lagsSec === ROBUST_LAGS_SEC) robustCache.set(ps, q);
  return q;
}

/** robustProcessNoise at the default lags, by session (a function of its fixes alone). */
const robustCache = new WeakMap<PreparedSession, number>();

function robustFit(ps: PreparedSession, lagsSec: readonly number[]): number {
  const v = secondDifferenceVariances(ps, lagsSec);
  const rows: Array<[number, number]> = [];
  lagsSec.forEach((L, i) => {
    if (Number.isFinite(v[i]!) && v[i]! > 0) rows.push([L, v[i]!]);
  });
  if (rows.length < 3) return NaN;
  // basis functions 1, L, L³; drop those whose coefficient comes out negative
  let active = [0, 1, 2];
  for (let iter = 0; iter < 3; iter++) {
    const coef = fitWeighted(rows, active);
    const neg = active.filter((_, j) => coef[j]! < 0);
    if (neg.length === 0) {
      const j = active.indexOf(2);
      return j >= 0 ? 1.5 * coef[j]! : 0;
    }
    active = active.filter((a) => !neg.includes(a));
    if (!active.includes(2)) return 0;
  }
  return NaN;
}

/** Weighted least squares of v on the active basis functions (0: 1, 1: L, 2: L³), weights 1/v². */
function fitWeighted(rows: Array<[number, number]>, active: number[]): number[] {
  const k = active.length;
  const A = Array.from({ length: k }, () => new Array<number>(k).fill(0));
  const y = new Array<number>(k).fill(0);
  const basis = (f: number, L: number) => (f === 0 ? 1 : f === 1 ? L : L * L * L);
  for (const [L, v] of rows) {
    const w = 1 / (v * v);
    for (let r = 0; r < k; r++) {
      const br = basis(active[r]!, L);
      y[r] = y[r]! + w * br * v;
      const Ar = A[r]!;
      for (let c = 0; c < k; c++) Ar[c] = Ar[c]! + w * br * basis(active[c]!, L);
    }
  }
  // Gaussian elimination with partial pivoting (k ≤ 3)
  for (let c = 0; c < k; c++) {
    let p = c;
    for (let r = c + 1; r < k; r++) if (Math.abs(A[r]![c]!) > Math.abs(A[p]![c]!)) p = r;
    [A[c], A[p]] = [A[p]!, A[c]!];
    [y[c], y[p]] = [y[p]!, y[c]!];
    for (let r = c + 1; r < k; r++) {
      const f = A[r]![c]! / A[c]![c]!;
      const Ar = A[r]!, Ac = A[c]!;
      for (let j = c; j < k; j++) Ar[j] = Ar[j]! - f * Ac[j]!;
      y[r] = y[r]! - f * y[c]!;
    }
  }
  const x = new Array<number>(k).fill(0);
  for (let r = k - 1; r >= 0; r--) {
    let s = y[r]!;
    for (let j = r + 1; j < k; j++) s -= A[r]![j]! * x[j]!;
    x[r] = s / A[r]![r]!;
  }
  return x;
}
