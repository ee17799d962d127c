/**
 * The forward filter's explicit state and scratch records: everything the step functions
 * (./propagate.ts, ./gnss-update.ts, ./zero-velocity-update.ts, ./non-holonomic-update.ts) read and
 * write, so each step is a function of (state, scratch, options) and a snapshot (./snapshot.ts) holds
 * exactly the state. P and Φ_acc are slots of the covariance kernels (./kernels.ts: WebAssembly
 * memory where the module loads), written in place.
 */
import { makeMechScratch, NAV_LEN, type MechScratch } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { NE, NE_SHAPE } from './error-model.js';
import type { InsFilterKernel } from './kernels.js';
import { newStationaryDetector, type StationaryDetector } from './stationary-detector.js';

/** What the forward filter carries from one IMU sample to the next. */
export interface InsState {
  /** Nominal navigation state (../../models/ins/mechanization.ts layout) and its time (UTC Unix s). */
  readonly nav: Float64Array;
  tNav: number;
  /** Error covariance P and the transition Φ_acc accumulated since the last epoch (18×18, kernel slots). */
  readonly P: Float64Array;
  readonly PhiAcc: Float64Array;
  /** Φ_acc is the identity (reset at an epoch, nothing propagated since). */
  phiAccIdentity: boolean;
  /** Since the last covariance step: Σ C_nb Δt (3×3), Σ f^n Δt, Σ Δt. */
  readonly sumC: Float64Array;
  readonly sumF: Float64Array;
  sumDt: number;
  /** Since the last epoch: Σ ω̃ Δt (gyro, body) and Σ Δt, for the zero-angular-rate update. */
  readonly zaruSum: Float64Array;
  zaruDt: number;
  /** The previous IMU sample: time, specific force, angular rate. */
  prevT: number;
  readonly prevF: Float64Array;
  readonly prevW: Float64Array;
  /** The current run of rejected fixes: length and time of its first. */
  runCount: number;
  runStartT: number;
  readonly det: StationaryDetector;
}

/** Working arrays of the steps (no allocation per sample or epoch); nothing here outlives a step. */
export interface InsScratch {
  /** The covariance kernels: F (in), h and dx (the scalar updates' row and error-state estimate). */
  readonly kf: InsFilterKernel;
  readonly ms: MechScratch;
  /** Mean rates of a mechanization step and its Δt: fx, fy, fz, wx, wy, wz, Δt. */
  readonly rate: Float64Array;
  /** C_nb at the epoch (3×3), a 3-vector (lever arm in the nav frame, or mean f^n). */
  readonly C: Float64Array;
  readonly v3: Float64Array;
  /** GNSS innovation: rows used (m ≤ 3), their axes, ν, stacked rows H (m×18), S and its Cholesky factor. */
  m: number;
  readonly axes: Int32Array;
  readonly nu: Float64Array;
  readonly Hm: Float64Array;
  readonly S3: Float64Array;
  readonly L3: Float64Array;
}

export function makeInsState(kf: InsFilterKernel): InsState {
  return {
    nav: new Float64Array(NAV_LEN), tNav: NaN, P: kf.P, PhiAcc: kf.PhiAcc, phiAccIdentity: true,
    sumC: new Float64Array(9), sumF: new Float64Array(3), sumDt: 0, zaruSum: new Float64Array(3), zaruDt: 0,
    prevT: NaN, prevF: new Float64Array(3), prevW: new Float64Array(3), runCount: 0, runStartT: NaN, det: newStationaryDetector(),
  };
}

export function makeInsScratch(kf: InsFilterKernel): InsScratch {
  return {
    kf, ms: makeMechScratch(), rate: new Float64Array(7), C: new Float64Array(9), v3: new Float64Array(3),
    m: 0, axes: new Int32Array(3), nu: new Float64Array(3), Hm: new Float64Array(3 * NE), S3: new Float64Array(9), L3: new Float64Array(9),
  };
}

/** Φ_acc ← I (at an epoch: the transition to the next one starts here). */
export function resetPhiAcc(s: InsState): void {
  s.PhiAcc.fill(0);
  for (let i = 0; i < NE; i++) s.PhiAcc[i * NE + i] = 1;
  s.phiAccIdentity = true;
}

/** The records' array sizes (once per step call): a record of another layout is a bug, named by the step. */
export function checkInsRecords(fn: string, s: InsState, w: InsScratch): void {
  checkSize(fn, 'nav', s.nav, NAV_LEN, 'navigation state');
  checkSize(fn, 'P', s.P, NE * NE, NE_SHAPE);
  checkSize(fn, 'PhiAcc', s.PhiAcc, NE * NE, NE_SHAPE);
  checkSize(fn, 'h', w.kf.h, NE, 'error state');
  checkSize(fn, 'dx', w.kf.dx, NE, 'error state');
}
