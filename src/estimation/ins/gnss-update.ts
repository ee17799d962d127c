/**
 * The GNSS position update of the IMU-aided filter, in two steps around the store of the prediction:
 * insGnssGate forms the innovation of the fix's axes and its joint chi-square gate (as in
 * src/estimation/track-filter.ts), with re-acquisition by covariance inflation after a run of
 * rejections (a stream cannot be rewound); insGnssApply then applies the accepted axes as scalar
 * Joseph updates (./scalar-update.ts; R is diagonal, so the axes update one after another exactly).
 *   z = p + C_nb l^b + b_GNSS + w,  ν = z − (p̂ + Ĉ l + b̂),  S = H P Hᵀ + R,  NIS = νᵀ S⁻¹ ν
 * Sources: Groves (2013) §14.3 (lever arm, ./measurements.ts); gate: Bar-Shalom, Li, Kirubarajan
 * (2001) §5.4 (NIS ~ χ²(m) under the model), as in src/estimation/track-filter.ts.
 */
import { chiSquareQuantile } from '../chi-square.js';
import { cholesky } from '../cholesky.js';
import { NAV_GM, NAV_P } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { E_P, E_V, NE } from './error-model.js';
import type { InsEpochs } from './inputs.js';
import { gnssRow } from './measurements.js';
import { checkInsRecords, type InsScratch, type InsState } from './state.js';
import type { InsStats } from './stats.js';

/** Gate thresholds by the number of axes m (index 0 unused): the χ²_m quantile at the gate probability. */
export function gnssGateThresholds(gateProbability: number): number[] {
  return [Infinity, 1, 2, 3].map((d, i) => (i === 0 ? Infinity : chiSquareQuantile(gateProbability, d)));
}

/** What the gate reports besides pass/fail: NIS of the fix (after any re-acquisition) and its threshold. */
export interface GnssGateResult {
  nis: number;
  threshold: number;
}

/**
 * Innovation and gate of the fix at epoch k, against the state predicted to the epoch. Needs w.v3 =
 * Ĉ_nb l^b (the lever arm in the nav frame). Leaves the rows in w (m, axes, nu, Hm) for insGnssApply;
 * counts rejections and re-acquisitions in `stats`; returns whether the fix is to be applied.
 */
export function insGnssGate(s: InsState, w: InsScratch, ep: InsEpochs, k: number, thresholds: number[], reacquireAfter: number, stats: InsStats, out: GnssGateResult): boolean {
  checkInsRecords('insGnssGate', s, w);
  checkSize('insGnssGate', 'thresholds', thresholds, 4, 'χ² quantiles for 0..3 axes');
  const x = s.nav, P = s.P, leverNav = w.v3, h = w.kf.h;
  let m = 0;
  for (let a = 0; a < 3; a++) {
    const z = ep.z[a]![k]!;
    if (!Number.isFinite(z)) continue;
    w.axes[m] = a;
    // ν = z − (p̂ + Ĉ l + b̂)
    w.nu[m] = z - (x[NAV_P + a]! + leverNav[a]! + x[NAV_GM + a]!);
    gnssRow(a, leverNav, h);
    w.Hm.set(h, m * NE);
    m++;
  }
  w.m = m;
  let nis = gnssNis(w, ep, k);
  const thr = thresholds[m]!;
  let pass = ep.use[k] === 2 || nis <= thr;
  if (!pass) {
    stats.gnssRejected++;
    if (s.runCount === 0) s.runStartT = ep.tSec[k]!;
    s.runCount++;
    if (s.runCount >= reacquireAfter) {
      // re-acquire: the run of misses says the solution drifted; inflate position and velocity by the miss
      const span = Math.max(ep.tSec[k]! - s.runStartT, 1);
      for (let j = 0; j < m; j++) {
        const a = w.axes[j]!;
        const miss2 = w.nu[j]! ** 2;
        const ip = (E_P + a) * NE + E_P + a, iv = (E_V + a) * NE + E_V + a;
        P[ip] = P[ip]! + miss2;
        P[iv] = P[iv]! + (4 * miss2) / (span * span);
      }
      stats.reacquisitions++;
      pass = true;
      nis = gnssNis(w, ep, k);
    }
  }
  if (pass) s.runCount = 0;
  out.nis = nis;
  out.threshold = thr;
  return pass;
}

/**
 * The accepted fix of epoch k as scalar updates of the error-state estimate (w.kf.dx, accumulated since
 * the epoch's reset) with the rows insGnssGate left in w; without heights in the log, a weak height hold.
 */
export function insGnssApply(s: InsState, w: InsScratch, ep: InsEpochs, k: number, hasHeight: boolean): void {
  checkInsRecords('insGnssApply', s, w);
  const kf = w.kf, h = kf.h;
  for (let j = 0; j < w.m; j++) {
    for (let i = 0; i < NE; i++) h[i] = w.Hm[j * NE + i]!;
    kf.scalarUpdate(w.nu[j]!, ep.r[w.axes[j]!]![k]!);
  }
  if (!hasHeight) {
    // weak height hold (no heights in the log): up ≈ 0 within 30 m
    h.fill(0);
    h[E_P + 2] = 1;
    kf.scalarUpdate(-s.nav[NAV_P + 2]!, 900);
  }
}

/** NIS of the GNSS innovation: νᵀ S⁻¹ ν with S = H P Hᵀ + R, by Cholesky (S is at most 3×3). */
function gnssNis(w: InsScratch, ep: InsEpochs, k: number): number {
  const m = w.m, axes = w.axes;
  const P = w.kf.P;
  const H = w.Hm;
  const S = w.S3;
  for (let i = 0; i < m; i++)
    for (let j = i; j < m; j++) {
      let acc = i === j ? ep.r[axes[i]!]![k]! : 0;
      for (let p = 0; p < NE; p++) {
        const hp = H[i * NE + p]!;
        if (hp === 0) continue;
        for (let q = 0; q < NE; q++) acc += hp * P[p * NE + q]! * H[j * NE + q]!;
      }
      S[i * m + j] = acc;
      S[j * m + i] = acc;
    }
  if (!cholesky(m, S, 0, w.L3)) return Infinity;
  // NIS = |L⁻¹ ν|²
  let nis = 0;
  const y = [0, 0, 0];
  for (let i = 0; i < m; i++) {
    let s = w.nu[i]!;
    for (let j = 0; j < i; j++) s -= w.L3[i * m + j]! * y[j]!;
    y[i] = s / w.L3[i * m + i]!;
    nis += y[i]! * y[i]!;
  }
  return nis;
}
