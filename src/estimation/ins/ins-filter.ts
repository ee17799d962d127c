/**
 * The IMU-aided forward filter and its smoother over an epoch grid (fix epochs and bridged epochs).
 * IMU samples arrive one at a time (a stream); the strapdown mechanization runs at the IMU rate, the
 * 18-state error covariance is propagated in steps of at most `propagationStepSec` (Groves 2013
 * §14.2.4), and at each grid epoch the filter applies, in turn, the GNSS position update (joint
 * chi-square gate as in src/estimation/track-filter.ts; re-acquisition by covariance inflation after a
 * run of rejections, since a stream cannot be rewound), zero-velocity and zero-angular-rate updates
 * when the IMU shows the vehicle stationary, or the non-holonomic constraint. Each epoch stores the
 * corrected nominal state, P⁺, P⁻, the transition Φ accumulated since the previous epoch and the
 * applied correction: memory per epoch (about 4 kB), none per IMU sample. The backward pass runs
 * the error-state RTS step (./rts.ts) and turns smoothed states into per-epoch products. The
 * covariance arithmetic runs in ./kernels.ts (WebAssembly, or the TypeScript kernels: the same
 * results). Every SNAPSHOT_EVERY epochs the forward pass keeps its whole state, so that a later pass
 * whose inputs first differ after a snapshot can start there (InsResume).
 * Initial alignment: roll and pitch from the accelerometer mean while static (Groves 2013 §5.6.2,
 * "levelling"), heading from the first motion of the GNSS track (given by the caller).
 * Scalar updates use the Joseph form (./scalar-update.ts): the many small, highly correlated
 * pseudo-measurements would drive the standard form's P − KHP to indefinite under rounding.
 *
 * This file is the driver: the sample stream (idle → aligning → running), the epochs on the way of
 * each sample, snapshots and the smoother's call. The steps are pure functions of an explicit state
 * and scratch record (./state.ts): ./alignment.ts, ./propagate.ts, ./epoch-update.ts (with
 * ./gnss-update.ts, ./zero-velocity-update.ts, ./non-holonomic-update.ts, ./stationary-detector.ts),
 * ./snapshot.ts, ./smooth.ts, ./products.ts.
 */
import { makeInsKernels, type InsFilterKernel, type InsRtsKernel } from './kernels.js';
import { bufferSample, insAlign, newAlignmentBuffer } from './alignment.js';
import { insEpochUpdate, makeZeroUpdateParams, type InsPass } from './epoch-update.js';
import { gnssGateThresholds } from './gnss-update.js';
import { historyForPass, type InsHistory } from './history.js';
import { checkInsEpochs, epochHasFix, type InsEpochs, type InsInit, type InsOptions } from './inputs.js';
import { copyForwardProducts, newInsProducts, type InsProducts } from './products.js';
import { insAdvance, insPropagate } from './propagate.js';
import { insSmoothChains } from './smooth.js';
import { latestSnapshotBefore, restoreSnapshot, SNAPSHOT_EVERY, takeSnapshot, type InsSnapshot } from './snapshot.js';
import { makeInsScratch, makeInsState, type InsScratch, type InsState } from './state.js';
import { pushDetector, sizeDetector } from './stationary-detector.js';
import { copyInsStats, newInsStats, type InsStats, type InsTimings } from './stats.js';

// the types of the driver's interface (src/session/imu/imu-session.ts imports them from here)
export type { InsEpochs, InsInit, InsOptions } from './inputs.js';
export type { InsStats, InsTimings } from './stats.js';
export type { InsHistory } from './history.js';
export type { InsProducts } from './products.js';
export type { InsSnapshot } from './snapshot.js';
export { newInsTimings } from './stats.js';

/** Where a pass starts: a snapshot of an earlier pass over the same grid and that pass's engine (its forward products up to the snapshot). */
export interface InsResume {
  snapshot: InsSnapshot;
  from: InsSmoother;
}

export class InsSmoother {
  readonly stats: InsStats = newInsStats();
  readonly products: InsProducts;
  /** The forward pass's snapshots, by epoch. */
  readonly snapshots: InsSnapshot[] = [];
  private history: InsHistory | null;
  // covariance kernels and their slots (WebAssembly memory where the module loads: ./kernels.ts)
  private readonly kern: { filter: InsFilterKernel; rts: InsRtsKernel };
  private readonly s: InsState;
  private readonly w: InsScratch;
  private readonly pass: InsPass;
  private mode: 0 | 1 | 2 = 0; // idle, aligning, running
  /** The next epoch to process, and the epoch being aligned at. */
  private ke = 0;
  private alignEpoch = -1;
  /** The sample being processed (t, fx, fy, fz, wx, wy, wz). */
  private readonly cur = new Float64Array(7);
  // alignment buffer (bounded by alignSec)
  private readonly align = newAlignmentBuffer();
  /** Samples handed to the engine (skipped ones included) and the epoch of the latest snapshot. */
  private samplesSeen = 0;
  private lastSnapshotEpoch = -1;

  /**
   * `history`: a released history of an earlier pass over the same grid, to be reused. `resume`:
   * start from a snapshot of an earlier pass (its history must be `history`, the inputs of both passes
   * equal up to an epoch after the snapshot's); the caller then hands in the samples after
   * `resume.snapshot.sample` only.
   */
  constructor(private readonly ep: InsEpochs, private readonly init: InsInit, private readonly opt: InsOptions, private readonly tm?: InsTimings, history?: InsHistory, resume?: InsResume) {
    checkInsEpochs(ep);
    this.kern = makeInsKernels(opt.err, opt.kernels);
    this.s = makeInsState(this.kern.filter);
    this.w = makeInsScratch(this.kern.filter);
    const N = ep.N;
    if (resume && !(history && history.N === N)) throw new Error('InsSmoother: resume needs the history of the pass it resumes');
    this.history = historyForPass(N, history, resume ? resume.snapshot.epoch : -1);
    this.products = newInsProducts(N);
    this.pass = { ep, init, opt, thresholds: gnssGateThresholds(opt.gateProbability), zp: makeZeroUpdateParams(opt), stats: this.stats, products: this.products, history: this.history, gate: { nis: NaN, threshold: NaN } };
    if (resume) this.restore(resume);
  }

  private restore({ snapshot: sn, from }: InsResume): void {
    this.mode = 2;
    this.ke = sn.ke;
    restoreSnapshot(this.s, sn);
    Object.assign(this.stats, copyInsStats(sn.stats));
    this.samplesSeen = sn.sample;
    this.lastSnapshotEpoch = sn.epoch;
    // the forward products of the epochs before, and the snapshots up to this one
    copyForwardProducts(from.products, this.products, sn.epoch + 1);
    for (const x of from.snapshots) if (x.epoch <= sn.epoch) this.snapshots.push(x);
  }

  /** The latest snapshot of this pass before epoch k (for a next pass whose inputs first differ at k), if any. */
  snapshotBefore(k: number): InsSnapshot | undefined {
    return latestSnapshotBefore(this.snapshots, k);
  }

  /** One IMU sample: time (UTC Unix s), specific force (m/s²) and angular rate (rad/s), body frame. */
  addSample(tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number): void {
    const c = this.cur;
    c[0] = tSec;
    c[1] = fx;
    c[2] = fy;
    c[3] = fz;
    c[4] = wx;
    c[5] = wy;
    c[6] = wz;
    this.onSample();
  }

  /** The sample at src[o..o+7) (t, fx, fy, fz, wx, wy, wz), as addSample. */
  addSampleAt(src: Float64Array, o: number): void {
    if (!(o >= 0 && o + 7 <= src.length)) throw new Error(`InsSmoother.addSampleAt: sample at ${o}..${o + 7} outside an array of ${src.length}`);
    const c = this.cur;
    for (let i = 0; i < 7; i++) c[i] = src[o + i]!;
    this.onSample();
  }

  /**
   * The sample in `cur`. Samples travel in Float64Arrays, not as arguments, from here to the
   * mechanization: a double passed to a call that is not inlined is boxed on the heap, which cost
   * ~0.7 kB of garbage a sample over the calls of this path (1-hour bench log at 1 Hz fixes: 135 →
   * 99 young-generation collections; the time, within the noise of the shared machine).
   */
  private onSample(): void {
    this.samplesSeen++;
    const c = this.cur, s = this.s;
    const tSec = c[0]!;
    if (!(tSec > s.prevT) && Number.isFinite(s.prevT)) {
      this.stats.samplesSkipped++;
      return;
    }
    const st = this.stats;
    if (st.samples === 0) st.firstSampleSec = tSec;
    st.samples++;
    st.lastSampleSec = tSec;
    // detector window sized from the first interval (bounded)
    if (s.det.ring === null && Number.isFinite(s.prevT)) sizeDetector(s.det, this.opt.staticWindowSec, tSec - s.prevT);
    const ep = this.ep;
    if (this.mode === 0) {
      // idle: epochs before this sample cannot be covered; start at the next epoch with a fix
      while (this.ke < ep.N && (ep.tSec[this.ke]! < tSec || !epochHasFix(ep, this.ke))) this.ke++;
      if (this.ke < ep.N) {
        this.mode = 1;
        this.alignEpoch = this.ke;
        this.align.count = 0;
      }
    }
    if (this.mode === 1) {
      if (tSec < ep.tSec[this.alignEpoch]!) {
        this.remember(c, 0);
        return;
      }
      bufferSample(this.align, c);
      if (tSec - ep.tSec[this.alignEpoch]! >= this.opt.alignSec) this.alignAndReplay();
      return;
    }
    if (this.mode === 2) {
      this.runSample(c, 0);
      if (this.ke - 1 >= this.lastSnapshotEpoch + SNAPSHOT_EVERY) this.snapshot();
    } else this.remember(c, 0);
  }

  /** End of the IMU stream: finish a pending alignment; epochs after the last sample stay uncovered. */
  finishStream(): void {
    if (this.mode === 1 && this.align.count > 0) this.alignAndReplay();
  }

  private snapshot(): void {
    const k = this.ke - 1;
    this.snapshots.push(takeSnapshot(this.s, k, this.samplesSeen, this.ke, this.stats));
    this.lastSnapshotEpoch = k;
  }

  /** The sample at src[o..o+7) becomes the previous one. */
  private remember(src: Float64Array, o: number): void {
    const s = this.s;
    s.prevT = src[o]!;
    s.prevF[0] = src[o + 1]!;
    s.prevF[1] = src[o + 2]!;
    s.prevF[2] = src[o + 3]!;
    s.prevW[0] = src[o + 4]!;
    s.prevW[1] = src[o + 5]!;
    s.prevW[2] = src[o + 6]!;
    pushDetector(s.det, src, o);
  }

  /** Levelling from the buffered samples, heading from the caller; the alignment epoch's updates; then replay the buffer. */
  private alignAndReplay(): void {
    const k = this.alignEpoch;
    insAlign(this.s, this.w, this.ep, this.init, this.opt, k, this.align, this.stats);
    this.mode = 2;
    this.pass.history.chainStart[k] = 1;
    this.ke = k;
    this.processEpoch(k);
    this.ke = k + 1;
    const a = this.align.buf, n = this.align.count;
    for (let i = 0; i < n; i++) {
      const o = 7 * i;
      if (a[o]! <= this.s.prevT) continue;
      this.runSample(a, o);
    }
    this.align.count = 0;
  }

  /** Mechanize up to the sample at src[o..o+7), processing the epochs on the way. */
  private runSample(src: Float64Array, o: number): void {
    const s = this.s;
    const t = src[o]!;
    // interval mean of the rates (trapezoid between consecutive samples), then the step Δt: rate[0..7)
    const m = this.w.rate;
    for (let i = 0; i < 3; i++) {
      m[i] = 0.5 * (s.prevF[i]! + src[o + 1 + i]!);
      m[3 + i] = 0.5 * (s.prevW[i]! + src[o + 4 + i]!);
    }
    if (t - s.tNav > 1) this.stats.imuGaps++;
    const ep = this.ep;
    while (this.ke < ep.N && ep.tSec[this.ke]! <= t) {
      m[6] = ep.tSec[this.ke]! - s.tNav;
      this.advance();
      this.processEpoch(this.ke);
      this.ke++;
    }
    m[6] = t - s.tNav;
    this.advance();
    this.remember(src, o);
  }

  private advance(): void {
    const opt = this.opt;
    insAdvance(this.s, this.w, opt.mech, opt.err, opt.propagationStepSec, this.tm);
  }

  private processEpoch(k: number): void {
    insPropagate(this.s, this.w, this.opt.err, this.tm);
    if (!this.tm) return insEpochUpdate(this.s, this.w, this.pass, k);
    const t0 = performance.now();
    insEpochUpdate(this.s, this.w, this.pass, k);
    this.tm.updateMs += performance.now() - t0;
  }

  /** Hand the history to the next pass; this engine keeps its products but can no longer smooth. */
  releaseHistory(): InsHistory {
    const h = this.history;
    if (!h) throw new Error('InsSmoother: history already released');
    this.history = null;
    return h;
  }

  /** Backward RTS over every chain of covered epochs, then the per-epoch products. */
  smooth(): void {
    if (!this.history) throw new Error('InsSmoother: history released');
    const t0 = this.tm ? performance.now() : 0;
    insSmoothChains(this.history, this.kern.rts, this.opt.leverArmBody, this.products, this.stats);
    if (this.tm) this.tm.smoothMs += performance.now() - t0;
  }
}
