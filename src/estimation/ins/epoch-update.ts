/**
 * The measurement updates of one grid epoch, after the covariance has been propagated to it: a
 * segment restart where one begins, the GNSS position update (./gnss-update.ts), the store of the
 * prediction and of the transition since the previous epoch (./history.ts), then zero velocity and
 * zero angular rate when the IMU shows the vehicle stationary (./stationary-detector.ts,
 * ./zero-velocity-update.ts) or the non-holonomic constraint (./non-holonomic-update.ts), and the
 * closed-loop reset (./correction.ts). The updates accumulate one error-state estimate δx̂ (the
 * kernel's dx) from zero, each row's innovation taken against the predicted nominal (kernels.ts
 * scalarUpdate takes hᵀδx̂ off), so the order of the rows is that of sequential processing.
 */
import { quatToDcm } from '../../models/ins/attitude.js';
import { NAV_Q } from '../../models/ins/mechanization.js';
import { insInitPositionVelocity } from './alignment.js';
import { applyCorrection } from './correction.js';
import { insGnssApply, insGnssGate, type GnssGateResult } from './gnss-update.js';
import { storeFiltered, storePrediction, type InsHistory } from './history.js';
import { epochHasFix, type InsEpochs, type InsInit, type InsOptions } from './inputs.js';
import { insNonHolonomicUpdate } from './non-holonomic-update.js';
import type { InsProducts } from './products.js';
import { resetPhiAcc, type InsScratch, type InsState } from './state.js';
import { detectorSaysStationary } from './stationary-detector.js';
import type { InsStats } from './stats.js';
import { insZeroVelocityUpdate, zuptConsistent, type ZeroUpdateParams } from './zero-velocity-update.js';

/** What the epoch updates of one pass read and write besides the filter's state and scratch. */
export interface InsPass {
  readonly ep: InsEpochs;
  readonly init: InsInit;
  readonly opt: InsOptions;
  /** Gate thresholds by axis count (./gnss-update.ts gnssGateThresholds) and the zero updates' parameters. */
  readonly thresholds: number[];
  readonly zp: ZeroUpdateParams;
  readonly stats: InsStats;
  readonly products: InsProducts;
  readonly history: InsHistory;
  /** The gate's NIS and threshold of the current epoch. */
  readonly gate: GnssGateResult;
}

export function makeZeroUpdateParams(opt: InsOptions): ZeroUpdateParams {
  return { zuptSigmaMps: opt.zuptSigmaMps, staticWindowSec: opt.staticWindowSec, gyroNoiseDensity: opt.err.gyroNoiseDensity, earthRateEnu: opt.mech.earthRateEnu };
}

/** The updates of epoch k (see the file header), writing the epoch's history entries and forward products. */
export function insEpochUpdate(s: InsState, w: InsScratch, pass: InsPass, k: number): void {
  const { ep, opt, products: pr, history: hist, stats } = pass;
  const x = s.nav;
  if (ep.segStart[k] && !hist.chainStart[k]) {
    // a new segment after a long gap: keep attitude and biases, restart position and velocity from GNSS
    insInitPositionVelocity(s, w, ep, pass.init, opt, k, false);
    hist.chainStart[k] = 1;
  }
  // C_nb at the epoch and the lever arm in the nav frame, u = C_nb l^b (w.C, w.v3: read by the updates below)
  quatToDcm(x, NAV_Q, w.C);
  const C = w.C, l = opt.leverArmBody, leverNav = w.v3;
  for (let i = 0; i < 3; i++) leverNav[i] = C[i * 3]! * l[0] + C[i * 3 + 1]! * l[1] + C[i * 3 + 2]! * l[2];
  // ---- GNSS: innovation, joint gate ----
  let accept = false;
  w.m = 0;
  if (epochHasFix(ep, k)) {
    accept = insGnssGate(s, w, ep, k, pass.thresholds, opt.reacquireAfter, stats, pass.gate);
    pr.nis[k] = pass.gate.nis;
    pr.threshold[k] = pass.gate.threshold;
  }
  // ---- store the prediction (after any inflation) and the accumulated transition ----
  if (!hist.chainStart[k]) storePrediction(hist, k, s.P, s.PhiAcc);
  resetPhiAcc(s);
  const dx = w.kf.dx;
  dx.fill(0);
  if (accept) {
    insGnssApply(s, w, ep, k, opt.hasHeight);
    pr.accepted[k] = 1;
  }
  // ---- stationary: zero velocity and zero angular rate; otherwise the non-holonomic constraint ----
  const stationary = opt.zupt && detectorSaysStationary(s.det, x, C, opt) && zuptConsistent(s, w, pass.zp);
  if (stationary) {
    insZeroVelocityUpdate(s, w, pass.zp);
    pr.stationary[k] = 1;
    stats.zuptEpochs++;
  } else if (opt.nhc) {
    insNonHolonomicUpdate(s, w, opt.nhcSigmaMps);
    stats.nhcEpochs++;
  }
  s.zaruSum.fill(0);
  s.zaruDt = 0;
  // ---- closed-loop reset: fold the correction into the nominal state ----
  applyCorrection(x, dx);
  storeFiltered(hist, k, x, dx, s.P);
  pr.covered[k] = 1;
}
