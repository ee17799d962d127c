/**
 * The step functions of the IMU-aided filter on hand-built states (TypeScript kernels): the GNSS
 * gate and update (src/estimation/ins/gnss-update.ts), the zero-velocity / zero-angular-rate update
 * and its χ² test (zero-velocity-update.ts), the non-holonomic update (non-holonomic-update.ts), the
 * covariance step (propagate.ts) and the snapshot round trip (snapshot.ts). With uncorrelated
 * diagonal P each check is a scalar Kalman update, K = P h / (hᵀ P h + r) (Kalman 1960; Grewal &
 * Andrews 2015 §5.2 — from memory); χ² quantiles from a standard table (Abramowitz & Stegun 1964,
 * Table 26.8: χ²₂(0.99) = 9.210, χ²₃(0.99) = 11.345; χ²₃(0.9999) = 21.108 from memory).
 */
import { describe, expect, it } from 'vitest';
import { chiSquareQuantile } from '../../src/estimation/chi-square.js';
import { E_A, E_BG, E_GM, E_P, E_V, NE, type ErrorModelParams } from '../../src/estimation/ins/error-model.js';
import { gnssGateThresholds, insGnssApply, insGnssGate } from '../../src/estimation/ins/gnss-update.js';
import type { InsEpochs } from '../../src/estimation/ins/inputs.js';
import { makeInsKernels } from '../../src/estimation/ins/kernels.js';
import { insNonHolonomicUpdate } from '../../src/estimation/ins/non-holonomic-update.js';
import { insPropagate } from '../../src/estimation/ins/propagate.js';
import { restoreSnapshot, takeSnapshot } from '../../src/estimation/ins/snapshot.js';
import { makeInsScratch, makeInsState, type InsScratch, type InsState } from '../../src/estimation/ins/state.js';
import { sizeDetector } from '../../src/estimation/ins/stationary-detector.js';
import { newInsStats } from '../../src/estimation/ins/stats.js';
import { insZeroVelocityUpdate, zuptConsistent, zuptVariance, ZUPT_GATE_NIS, type ZeroUpdateParams } from '../../src/estimation/ins/zero-velocity-update.js';
import { NAV_BG, NAV_GM, NAV_P, NAV_Q, NAV_V } from '../../src/models/ins/mechanization.js';

const err: ErrorModelParams = {
  accelNoiseDensity: 1e-3, gyroNoiseDensity: 1e-4, accelBiasWalk: 1e-5, gyroBiasWalk: 1e-6,
  gmSigmaHM: 0.5, gmSigmaVM: 1, gmTauSec: 60, earthRateEnu: new Float64Array(3),
};

/** A level state (C_nb = I) with a diagonal P: position σp², velocity σv², GNSS error σb², gyro bias σg². */
function diagState(sp2: number, sv2: number, sb2: number, sg2 = 1e-6): { s: InsState; w: InsScratch } {
  const kf = makeInsKernels(err, 'js').filter;
  const s = makeInsState(kf), w = makeInsScratch(kf);
  s.nav[NAV_Q] = 1;
  for (let i = 0; i < 3; i++) {
    s.P[(E_P + i) * NE + E_P + i] = sp2;
    s.P[(E_V + i) * NE + E_V + i] = sv2;
    s.P[(E_GM + i) * NE + E_GM + i] = sb2;
    s.P[(E_BG + i) * NE + E_BG + i] = sg2;
  }
  w.C.set([1, 0, 0, 0, 1, 0, 0, 0, 1]);
  w.v3.fill(0);
  return { s, w };
}

/** Three epochs, 1 s apart, of 3-axis fixes with variance r on every axis. */
function epochs(z: number[][], r: number): InsEpochs {
  const N = z.length;
  const axis = (a: number) => Float64Array.from(z, (e) => e[a]!);
  const rr = () => new Float64Array(N).fill(r);
  return { N, tSec: Float64Array.from(z, (_, k) => k), z: [axis(0), axis(1), axis(2)], r: [rr(), rr(), rr()], use: new Uint8Array(N).fill(1), segStart: new Uint8Array(N) };
}

describe('GNSS gate and update', () => {
  it('gate thresholds are the χ² quantiles by axis count', () => {
    const thr = gnssGateThresholds(0.99);
    expect(thr[2]).toBeCloseTo(9.21, 2);
    expect(thr[3]).toBeCloseTo(11.345, 2);
  });

  it('NIS = Σ ν²/(σp² + σb² + r) for a diagonal P and zero lever arm; a fix within the gate passes, one beyond fails', () => {
    const { s, w } = diagState(4, 1, 0.25, 1e-6);
    const ep = epochs([[1, -2, 0.5], [10, 0, 0]], 1);
    const out = { nis: NaN, threshold: NaN };
    const stats = newInsStats();
    const thr = gnssGateThresholds(0.99);
    const S = 4 + 0.25 + 1;
    expect(insGnssGate(s, w, ep, 0, thr, 5, stats, out)).toBe(true);
    expect(out.nis).toBeCloseTo((1 + 4 + 0.25) / S, 12);
    expect(out.threshold).toBe(thr[3]);
    expect(insGnssGate(s, w, ep, 1, thr, 5, stats, out)).toBe(false);
    expect(out.nis).toBeCloseTo(100 / S, 12);
    expect(stats.gnssRejected).toBe(1);
  });

  it('after reacquireAfter misses the fix is taken with P_pp += ν² and P_vv += 4ν²/span² (span ≥ 1 s)', () => {
    const { s, w } = diagState(1, 1, 0, 1e-6);
    const ep = epochs([[20, 0, 0], [20, 0, 0], [20, 0, 0]], 1);
    const out = { nis: NaN, threshold: NaN };
    const stats = newInsStats();
    const thr = gnssGateThresholds(0.99);
    expect(insGnssGate(s, w, ep, 0, thr, 3, stats, out)).toBe(false);
    expect(insGnssGate(s, w, ep, 1, thr, 3, stats, out)).toBe(false);
    expect(insGnssGate(s, w, ep, 2, thr, 3, stats, out)).toBe(true);
    expect(stats.reacquisitions).toBe(1);
    expect(s.runCount).toBe(0);
    // span = t₂ − t₀ = 2 s
    expect(s.P[E_P * NE + E_P]).toBeCloseTo(1 + 400, 9);
    expect(s.P[E_V * NE + E_V]).toBeCloseTo(1 + (4 * 400) / 4, 9);
    expect(s.P[(E_P + 1) * NE + E_P + 1]).toBe(1);
  });

  it('the update moves position by σp²/(σp² + σb² + r)·ν and the fix error by σb²/(…)·ν', () => {
    const { s, w } = diagState(4, 1, 0.25, 1e-6);
    const ep = epochs([[1, -2, 0.5]], 1);
    const out = { nis: NaN, threshold: NaN };
    expect(insGnssGate(s, w, ep, 0, gnssGateThresholds(0.99), 5, newInsStats(), out)).toBe(true);
    w.kf.dx.fill(0);
    insGnssApply(s, w, ep, 0, true);
    const S = 4 + 0.25 + 1;
    const z = [1, -2, 0.5];
    for (let a = 0; a < 3; a++) {
      expect(w.kf.dx[E_P + a]).toBeCloseTo((4 / S) * z[a]!, 12);
      expect(w.kf.dx[E_GM + a]).toBeCloseTo((0.25 / S) * z[a]!, 12);
      // posterior variance σp² − σp⁴/S
      expect(s.P[(E_P + a) * NE + E_P + a]).toBeCloseTo(4 - 16 / S, 12);
    }
  });
});

describe('zero-velocity and zero-angular-rate update', () => {
  const zp: ZeroUpdateParams = { zuptSigmaMps: 0.02, staticWindowSec: 1, gyroNoiseDensity: 1e-3, earthRateEnu: new Float64Array(3) };

  it('ZUPT_GATE_NIS is the χ²₃ quantile at 0.9999', () => {
    expect(chiSquareQuantile(0.9999, 3)).toBeCloseTo(ZUPT_GATE_NIS, 2);
  });

  it('the pseudo-measurement variance is σ² · max(1, T_c/Δt)', () => {
    const { s } = diagState(1, 1, 0);
    s.zaruDt = 0.1;
    expect(zuptVariance(s, zp)).toBeCloseTo(0.02 ** 2 * 10, 15);
    s.zaruDt = 2;
    expect(zuptVariance(s, zp)).toBeCloseTo(0.02 ** 2, 15);
  });

  it('the χ² test passes a velocity within the gate and refuses one beyond it', () => {
    const { s, w } = diagState(1, 0.01, 0);
    s.zaruDt = 1;
    const S = 0.01 + 0.02 ** 2;
    const vPass = Math.sqrt(0.9 * ZUPT_GATE_NIS * S), vFail = Math.sqrt(1.1 * ZUPT_GATE_NIS * S);
    s.nav[NAV_V] = vPass;
    expect(zuptConsistent(s, w, zp)).toBe(true);
    s.nav[NAV_V] = vFail;
    expect(zuptConsistent(s, w, zp)).toBe(false);
  });

  it('the update pulls velocity by −q/(q + r)·v and the gyro bias toward the gyro mean', () => {
    const q = 0.01, g2 = 1e-6;
    const { s, w } = diagState(1, q, 0, g2);
    s.zaruDt = 1;
    s.nav.set([0.1, -0.05, 0.02], NAV_V);
    s.nav[NAV_BG] = 1e-3;
    s.zaruSum.set([3e-3, 0, 0]);
    w.kf.dx.fill(0);
    insZeroVelocityUpdate(s, w, zp);
    const r = 0.02 ** 2;
    expect(w.kf.dx[E_V]).toBeCloseTo((-q / (q + r)) * 0.1, 12);
    expect(w.kf.dx[E_V + 1]).toBeCloseTo((-q / (q + r)) * -0.05, 12);
    const rz = 1e-3 ** 2 / 1 + 1e-10;
    expect(w.kf.dx[E_BG]).toBeCloseTo((g2 / (g2 + rz)) * (3e-3 - 1e-3), 12);
  });
});

describe('non-holonomic update', () => {
  it('pulls the body lateral and vertical velocities toward zero, not the forward one', () => {
    const q = 0.04, r = 0.1 ** 2;
    const { s, w } = diagState(1, q, 0);
    s.nav.set([10, 0.5, 0.2], NAV_V);
    w.kf.dx.fill(0);
    insNonHolonomicUpdate(s, w, 0.1);
    expect(w.kf.dx[E_V]).toBe(0);
    expect(w.kf.dx[E_V + 1]).toBeCloseTo((-q / (q + r)) * 0.5, 12);
    expect(w.kf.dx[E_V + 2]).toBeCloseTo((-q / (q + r)) * 0.2, 12);
    // no attitude variance, so no attitude correction
    for (let i = 0; i < 3; i++) expect(w.kf.dx[E_A + i]).toBe(0);
  });
});

describe('covariance step', () => {
  it('nothing without accumulated time; then Φ_acc = Φ and the mean GNSS error decays by e^{−T/τ} (first-order Gauss–Markov, Brown & Hwang 2012 §2.9)', () => {
    const { s, w } = diagState(1, 1, 0.25);
    s.nav[NAV_GM] = 2;
    const before = Float64Array.from(s.P);
    insPropagate(s, w, err);
    expect(Array.from(s.P)).toEqual(Array.from(before));
    expect(s.phiAccIdentity).toBe(true);
    s.sumDt = 0.5;
    s.sumC.set([0.5, 0, 0, 0, 0.5, 0, 0, 0, 0.5]);
    s.sumF.set([0, 0, 0.5 * 9.8]);
    s.PhiAcc.fill(0);
    insPropagate(s, w, err);
    expect(s.nav[NAV_GM]).toBeCloseTo(2 * Math.exp(-0.5 / 60), 14);
    expect(s.phiAccIdentity).toBe(false);
    expect(Array.from(s.PhiAcc)).toEqual(Array.from(w.kf.Phi));
    expect(s.sumDt).toBe(0);
    // δṗ = δv with P_pv = 0: P_pp grows by σv² T² = 0.25 (the noise terms are far smaller)
    expect(s.P[E_P * NE + E_P]).toBeCloseTo(1 + 0.25, 3);
  });
});

describe('snapshot', () => {
  it('restoring a snapshot gives back every array and scalar of the state', () => {
    const { s } = diagState(1, 2, 3);
    sizeDetector(s.det, 0.1, 0.01);
    s.det.ring!.fill(0.5);
    s.det.head = 3;
    s.det.count = 7;
    s.nav.set([1, 2, 3], NAV_P);
    Object.assign(s, { tNav: 12.5, sumDt: 0.02, zaruDt: 0.3, prevT: 12.49, runCount: 2, runStartT: 11, phiAccIdentity: false });
    s.sumC.fill(0.1);
    s.prevF.set([1, 2, 3]);
    const stats = newInsStats();
    stats.zuptEpochs = 4;
    const sn = takeSnapshot(s, 9, 1234, 10, stats);
    expect(sn.stats).not.toBe(stats);
    const kf2 = makeInsKernels(err, 'js').filter;
    const t = makeInsState(kf2);
    restoreSnapshot(t, sn);
    for (const key of ['nav', 'P', 'PhiAcc', 'sumC', 'sumF', 'zaruSum', 'prevF', 'prevW'] as const) expect(Array.from(t[key])).toEqual(Array.from(s[key]));
    expect(Array.from(t.det.ring!)).toEqual(Array.from(s.det.ring!));
    expect([t.det.cap, t.det.head, t.det.count]).toEqual([10, 3, 7]);
    expect([t.tNav, t.sumDt, t.zaruDt, t.prevT, t.runCount, t.runStartT, t.phiAccIdentity]).toEqual([12.5, 0.02, 0.3, 12.49, 2, 11, false]);
  });

  it('a snapshot of another layout is refused', () => {
    const { s } = diagState(1, 1, 1);
    const sn = takeSnapshot(s, 0, 0, 1, newInsStats());
    const bad = { ...sn, arrays: sn.arrays.subarray(0, sn.arrays.length - 1) };
    expect(() => restoreSnapshot(makeInsState(makeInsKernels(err, 'js').filter), bad)).toThrow(/another layout/);
  });
});
