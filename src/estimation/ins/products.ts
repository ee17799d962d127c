/**
 * The per-epoch products of the IMU smoother from a (smoothed) nominal state and its error covariance:
 * antenna position and its covariance, the GNSS measurement prediction for the two-sided review,
 * velocity, attitude (Euler angles, sigmas through a numerical Jacobian) and the biases with sigmas.
 * Antenna error = δp + A φ with A = −[u×], u = Ĉ_nb l^b (Groves 2013 §14.3, lever arm — from memory).
 */
import { dcmToEuler, quatRotateNav, quatToDcm } from '../../models/ins/attitude.js';
import { NAV_BA, NAV_BG, NAV_GM, NAV_LEN, NAV_P, NAV_Q, NAV_V } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { E_A, E_BA, E_BG, E_GM, E_P, NE, NE_SHAPE } from './error-model.js';

/** Per-epoch products of the smoother (NaN / 0 where an epoch is not covered by the IMU). */
export interface InsProducts {
  covered: Uint8Array;
  /** Antenna position (m, local frame) and velocity (m/s). */
  pos: [Float64Array, Float64Array, Float64Array];
  vel: [Float64Array, Float64Array, Float64Array];
  /** Antenna position covariance: ee, en, eu, nn, nu, uu (6 per epoch). */
  covPos: Float64Array;
  /**
   * Smoothed GNSS measurement prediction ẑˢ = p̂ˢ + Ĉˢ l + b̂ˢ (antenna position plus the smoothed
   * Gauss–Markov fix error, m) and the covariance H Pˢ Hᵀ of its error (ee, en, eu, nn, nu, uu), for
   * the two-sided review (./review.ts).
   */
  zPred: [Float64Array, Float64Array, Float64Array];
  zCov: Float64Array;
  /** Roll, pitch, yaw (rad) and their 1-sigma (rad). */
  att: [Float64Array, Float64Array, Float64Array];
  attSd: [Float64Array, Float64Array, Float64Array];
  accelBias: [Float64Array, Float64Array, Float64Array];
  accelBiasSd: [Float64Array, Float64Array, Float64Array];
  gyroBias: [Float64Array, Float64Array, Float64Array];
  gyroBiasSd: [Float64Array, Float64Array, Float64Array];
  /** Forward NIS of the GNSS fix, its threshold, and 1 where it was used. */
  nis: Float64Array;
  threshold: Float64Array;
  accepted: Uint8Array;
  /** 1 where a zero-velocity update was applied. */
  stationary: Uint8Array;
}

export function newInsProducts(N: number): InsProducts {
  const mk = () => new Float64Array(N).fill(NaN);
  const m3 = (): [Float64Array, Float64Array, Float64Array] => [mk(), mk(), mk()];
  return {
    covered: new Uint8Array(N), pos: m3(), vel: m3(), covPos: new Float64Array(N * 6).fill(NaN), zPred: m3(), zCov: new Float64Array(N * 6).fill(NaN), att: m3(), attSd: m3(),
    accelBias: m3(), accelBiasSd: m3(), gyroBias: m3(), gyroBiasSd: m3(),
    nis: mk(), threshold: mk(), accepted: new Uint8Array(N), stationary: new Uint8Array(N),
  };
}

/** The forward products of epochs 0..n−1 (coverage, gate, updates) copied from `a` into `b` (a resumed pass). */
export function copyForwardProducts(a: InsProducts, b: InsProducts, n: number): void {
  b.covered.set(a.covered.subarray(0, n));
  b.nis.set(a.nis.subarray(0, n));
  b.threshold.set(a.threshold.subarray(0, n));
  b.accepted.set(a.accepted.subarray(0, n));
  b.stationary.set(a.stationary.subarray(0, n));
}

export interface ExtractScratch {
  C: Float64Array;
  C2: Float64Array;
  q: Float64Array;
  e0: Float64Array;
  e1: Float64Array;
  J: Float64Array;
  A: Float64Array;
}

export function makeExtractScratch(): ExtractScratch {
  return { C: new Float64Array(9), C2: new Float64Array(9), q: new Float64Array(4), e0: new Float64Array(3), e1: new Float64Array(3), J: new Float64Array(9), A: new Float64Array(9) };
}

/** Products of one epoch: antenna position and its covariance, velocity, attitude and biases with sigmas. */
export function extractProducts(k: number, x: Float64Array, P: Float64Array, l: [number, number, number], pr: InsProducts, s: ExtractScratch): void {
  checkSize('extractProducts', 'x', x, NAV_LEN, 'navigation state');
  checkSize('extractProducts', 'P', P, NE * NE, NE_SHAPE);
  if (!(k >= 0 && k < pr.covered.length)) throw new Error(`extractProducts: epoch ${k} outside the products' 0..${pr.covered.length - 1}`);
  const C = s.C;
  quatToDcm(x, NAV_Q, C);
  const u = [0, 0, 0];
  for (let i = 0; i < 3; i++) u[i] = C[i * 3]! * l[0] + C[i * 3 + 1]! * l[1] + C[i * 3 + 2]! * l[2];
  for (let i = 0; i < 3; i++) {
    pr.pos[i]![k] = x[NAV_P + i]! + u[i]!;
    pr.vel[i]![k] = x[NAV_V + i]!;
    pr.accelBias[i]![k] = x[NAV_BA + i]!;
    pr.gyroBias[i]![k] = x[NAV_BG + i]!;
    pr.accelBiasSd[i]![k] = Math.sqrt(P[(E_BA + i) * NE + E_BA + i]!);
    pr.gyroBiasSd[i]![k] = Math.sqrt(P[(E_BG + i) * NE + E_BG + i]!);
  }
  // antenna error = δp + A φ with A = −[u×]; the GNSS measurement error adds b_GNSS (H = [I, 0, A, 0, 0, I])
  const A = s.A;
  A[0] = 0; A[1] = u[2]!; A[2] = -u[1]!;
  A[3] = -u[2]!; A[4] = 0; A[5] = u[0]!;
  A[6] = u[1]!; A[7] = -u[0]!; A[8] = 0;
  antennaCov(P, A, false, pr.covPos, 6 * k);
  antennaCov(P, A, true, pr.zCov, 6 * k);
  for (let i = 0; i < 3; i++) pr.zPred[i]![k] = pr.pos[i]![k]! + x[NAV_GM + i]!;
  eulerWithSigmas(k, x, P, pr, s);
}

/** Euler angles and their sigmas through a numerical Jacobian d(roll, pitch, yaw)/dφ; s.C holds Ĉ_nb. */
function eulerWithSigmas(k: number, x: Float64Array, P: Float64Array, pr: InsProducts, s: ExtractScratch): void {
  dcmToEuler(s.C, s.e0);
  pr.att[0]![k] = s.e0[0]!;
  pr.att[1]![k] = s.e0[1]!;
  pr.att[2]![k] = s.e0[2]!;
  const eps = 1e-6;
  for (let j = 0; j < 3; j++) {
    s.q.set(x.subarray(NAV_Q, NAV_Q + 4));
    quatRotateNav(s.q, 0, j === 0 ? eps : 0, j === 1 ? eps : 0, j === 2 ? eps : 0);
    quatToDcm(s.q, 0, s.C2);
    dcmToEuler(s.C2, s.e1);
    for (let i = 0; i < 3; i++) {
      let d = s.e1[i]! - s.e0[i]!;
      if (d > Math.PI) d -= 2 * Math.PI;
      if (d < -Math.PI) d += 2 * Math.PI;
      s.J[i * 3 + j] = d / eps;
    }
  }
  for (let i = 0; i < 3; i++) {
    let v = 0;
    for (let a = 0; a < 3; a++) for (let b = 0; b < 3; b++) v += s.J[i * 3 + a]! * P[(E_A + a) * NE + E_A + b]! * s.J[i * 3 + b]!;
    pr.attSd[i]![k] = Math.sqrt(Math.max(v, 0));
  }
}

/**
 * Covariance of M δx with M = [I, 0, A, 0, 0, g·I] (rows δp, φ and, with g = 1, b_GNSS), written packed
 * (ee, en, eu, nn, nu, uu) at out[off..off+6):
 *   Σ = Ppp + Ppφ Aᵀ + A Pφp + A Pφφ Aᵀ  (+ Ppb + Pbp + A Pφb + Pbφ Aᵀ + Pbb with the fix error)
 */
function antennaCov(P: Float64Array, A: Float64Array, withGm: boolean, out: Float64Array, off: number): void {
  let m = off;
  for (let i = 0; i < 3; i++)
    for (let j = i; j < 3; j++) {
      let v = P[(E_P + i) * NE + E_P + j]!;
      for (let a = 0; a < 3; a++) {
        v += P[(E_P + i) * NE + E_A + a]! * A[j * 3 + a]! + A[i * 3 + a]! * P[(E_A + a) * NE + E_P + j]!;
        for (let b = 0; b < 3; b++) v += A[i * 3 + a]! * P[(E_A + a) * NE + E_A + b]! * A[j * 3 + b]!;
      }
      if (withGm) {
        v += P[(E_P + i) * NE + E_GM + j]! + P[(E_GM + i) * NE + E_P + j]! + P[(E_GM + i) * NE + E_GM + j]!;
        for (let a = 0; a < 3; a++) v += A[i * 3 + a]! * P[(E_A + a) * NE + E_GM + j]! + P[(E_GM + i) * NE + E_A + a]! * A[j * 3 + a]!;
      }
      out[m++] = v;
    }
}
