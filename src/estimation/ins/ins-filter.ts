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
 */
import { chiSquareQuantile } from '../chi-square.js';
import { cholesky } from '../cholesky.js';
import { quatFromEuler, quatRotateNav, quatToDcm, dcmToEuler } from '../../models/ins/attitude.js';
import { gravityAt, makeMechScratch, mechanizeRates, NAV_BA, NAV_BG, NAV_GM, NAV_LEN, NAV_P, NAV_Q, NAV_V, type MechParams, type MechScratch } from '../../models/ins/mechanization.js';
import { gmPhi } from '../../models/gauss-markov.js';
import { E_A, E_BA, E_BG, E_GM, E_P, E_V, fillErrorF, NE, NE_PACKED, packPhi, packSym, PHI_COMPACT, type ErrorModelParams } from './error-model.js';
import { bodyVelocityRow, gnssRow, gyroBiasRow, velocityRow } from './measurements.js';
import { makeInsKernels, type InsFilterKernel, type InsRtsKernel, type KernelKind } from './kernels.js';

/** The epoch grid and its GNSS measurements (antenna position in the local frame). */
export interface InsEpochs {
  N: number;
  tSec: Float64Array;
  /** Per axis e, n, u: measured antenna coordinate (m), NaN where none; variance (m²). */
  z: [Float64Array, Float64Array, Float64Array];
  r: [Float64Array, Float64Array, Float64Array];
  /** 0 no fix, 1 gated fix, 2 fix accepted without gate (user-kept). */
  use: Uint8Array;
  /** 1 at the first epoch of a segment (the chain of the smoother restarts there). */
  segStart: Uint8Array;
}

/** Caller-provided initial values at an epoch (from the fixes-only track). */
export interface InsInit {
  /** Velocity (m/s, ENU) and its 1-sigma per axis. */
  velocity(k: number, out: Float64Array): number;
  /** Yaw (rad, counter-clockwise from east) and its 1-sigma (rad), from the first motion after epoch k. */
  yaw(k: number): { yawRad: number; sigmaRad: number };
}

export interface InsOptions {
  mech: MechParams;
  err: ErrorModelParams;
  leverArmBody: [number, number, number];
  gateProbability: number;
  reacquireAfter: number;
  accelBiasSigmaMps2: number;
  gyroBiasSigmaRadps: number;
  zupt: boolean;
  nhc: boolean;
  zuptSigmaMps: number;
  nhcSigmaMps: number;
  staticWindowSec: number;
  staticAccelSdMps2: number;
  staticGyroRadps: number;
  staticMaxSpeedMps: number;
  /** Largest departure of the window's mean specific force (bias-corrected, nav frame) from gravity (m/s²): sustained braking or pulling away is not stationary. */
  staticAccelMeanMps2: number;
  alignSec: number;
  propagationStepSec: number;
  /** Heights measured (3-axis fixes); without them a weak height hold keeps the vertical channel bounded. */
  hasHeight: boolean;
  /** Covariance kernels: WebAssembly where the module loads (default) or TypeScript; the same results bit for bit. */
  kernels?: KernelKind;
}

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

export interface InsStats {
  samples: number;
  samplesSkipped: number;
  imuGaps: number;
  firstSampleSec: number;
  lastSampleSec: number;
  alignments: Array<{ epoch: number; tSec: number; static: boolean; rollDeg: number; pitchDeg: number; headingDeg: number; headingSigmaDeg: number }>;
  zuptEpochs: number;
  nhcEpochs: number;
  gnssRejected: number;
  reacquisitions: number;
  smootherFallbacks: number;
}

/**
 * Optional wall-clock accounting of the filter (for `npm run bench`), in ms summed over calls:
 * covariance propagation, the epoch's updates (everything of processEpoch but its propagation) and
 * the backward pass. Callers that pass none pay one branch per epoch.
 */
export interface InsTimings {
  propagateMs: number;
  updateMs: number;
  smoothMs: number;
}

export function newInsTimings(): InsTimings {
  return { propagateMs: 0, updateMs: 0, smoothMs: 0 };
}

/**
 * The per-epoch history of one pass (the filter's memory per epoch: nominal state, packed P⁺ and P⁻,
 * compact Φ, correction, chain starts). Once a pass has smoothed, the next pass of the same epoch
 * grid reuses it (releaseHistory): every entry the smoother reads is written again by the new pass
 * (chain starts are cleared), so results do not depend on it, and the memory is written in place
 * instead of freshly allocated and touched again.
 */
export interface InsHistory {
  N: number;
  nav: Float64Array;
  pPlus: Float64Array;
  pMinus: Float64Array;
  phi: Float64Array;
  dx: Float64Array;
  chainStart: Uint8Array;
}

export function newInsHistory(N: number): InsHistory {
  return {
    N,
    nav: new Float64Array(N * NAV_LEN),
    pPlus: new Float64Array(N * NE_PACKED),
    pMinus: new Float64Array(N * NE_PACKED),
    phi: new Float64Array(N * PHI_COMPACT),
    dx: new Float64Array(N * NE),
    chainStart: new Uint8Array(N),
  };
}

/**
 * χ²₃ quantile at 0.9999 (21.11; a strict tail, common practice for a pseudo-measurement gate): a true stop passes
 * (the ZUPT innovation is the velocity drift of one epoch interval), a vehicle moving at a few dm/s
 * against a velocity sd of a few cm/s does not.
 */
export const ZUPT_GATE_NIS = 21.108;

/** Epochs between the forward pass's snapshots (one every SNAPSHOT_EVERY epochs: ~11 kB each, ~40 bytes an epoch). */
export const SNAPSHOT_EVERY = 256;

/**
 * The forward filter's whole state after an IMU sample (`sample`: how many samples the engine had
 * been given, skipped ones included) during whose processing epoch `epoch` was processed. A later
 * pass whose inputs equal this pass's up to an epoch after `epoch` reaches exactly this state there,
 * so it can start from it instead of from the beginning of the log (resume).
 */
export interface InsSnapshot {
  epoch: number;
  sample: number;
  ke: number;
  tNav: number;
  sumDt: number;
  zaruDt: number;
  prevT: number;
  runCount: number;
  runStartT: number;
  phiAccIdentity: boolean;
  ringCap: number;
  ringHead: number;
  ringCount: number;
  /** nav, P, PhiAcc, sumC, sumF, zaruSum, prevF, prevW, ring: concatenated. */
  arrays: Float64Array;
  stats: InsStats;
}

/** Where a pass starts: a snapshot of an earlier pass over the same grid and that pass's engine (its forward products up to the snapshot). */
export interface InsResume {
  snapshot: InsSnapshot;
  from: InsSmoother;
}

export class InsSmoother {
  readonly stats: InsStats = { samples: 0, samplesSkipped: 0, imuGaps: 0, firstSampleSec: NaN, lastSampleSec: NaN, alignments: [], zuptEpochs: 0, nhcEpochs: 0, gnssRejected: 0, reacquisitions: 0, smootherFallbacks: 0 };
  readonly products: InsProducts;
  // ---- per-epoch history ----
  private history: InsHistory | null;
  private readonly hNav: Float64Array;
  private readonly hPplus: Float64Array;
  private readonly hPminus: Float64Array;
  private readonly hPhi: Float64Array;
  private readonly hDx: Float64Array;
  private readonly chainStart: Uint8Array;
  // ---- working state ----
  private mode: 0 | 1 | 2 = 0; // idle, aligning, running
  private ke = 0;
  private alignEpoch = -1;
  private tNav = NaN;
  private readonly nav = new Float64Array(NAV_LEN);
  // covariance kernels and their slots (WebAssembly memory where the module loads: ./kernels.ts)
  private readonly kern: { filter: InsFilterKernel; rts: InsRtsKernel };
  private readonly kf: InsFilterKernel;
  private readonly P: Float64Array;
  private readonly PhiAcc: Float64Array;
  /** PhiAcc is the identity (reset at an epoch, nothing propagated since). */
  private phiAccIdentity = true;
  private readonly F: Float64Array;
  private readonly ms: MechScratch = makeMechScratch();
  /** The sample being processed (t, fx, fy, fz, wx, wy, wz) and the mean rates of a step with its Δt. */
  private readonly cur = new Float64Array(7);
  private readonly rate = new Float64Array(7);
  private readonly h: Float64Array;
  private readonly dx: Float64Array;
  private readonly C = new Float64Array(9);
  private readonly v3 = new Float64Array(3);
  private readonly nu = new Float64Array(3);
  private readonly Hm = new Float64Array(3 * NE);
  private readonly S3 = new Float64Array(9);
  private readonly L3 = new Float64Array(9);
  private readonly sumC = new Float64Array(9);
  private readonly sumF = new Float64Array(3);
  private sumDt = 0;
  private readonly zaruSum = new Float64Array(3);
  private zaruDt = 0;
  private prevT = NaN;
  private readonly prevF = new Float64Array(3);
  private readonly prevW = new Float64Array(3);
  private readonly thresholds: number[];
  private runCount = 0;
  private runStartT = NaN;
  // alignment buffer (bounded by alignSec) and the stationary-detector ring
  private alignBuf = new Float64Array(7 * 1024);
  private alignCount = 0;
  private ring: Float64Array | null = null;
  private ringCap = 0;
  private ringHead = 0;
  private ringCount = 0;
  /** Samples handed to the engine (skipped ones included) and the forward pass's snapshots, by epoch. */
  private samplesSeen = 0;
  private lastSnapshotEpoch = -1;
  readonly snapshots: InsSnapshot[] = [];

  /**
   * `history`: a released history of an earlier pass over the same grid, to be reused. `resume`:
   * start from a snapshot of an earlier pass (its history must be `history`, the inputs of both passes
   * equal up to an epoch after the snapshot's); the caller then hands in the samples after
   * `resume.snapshot.sample` only.
   */
  constructor(private readonly ep: InsEpochs, private readonly init: InsInit, private readonly opt: InsOptions, private readonly tm?: InsTimings, history?: InsHistory, resume?: InsResume) {
    this.kern = makeInsKernels(opt.err, opt.kernels);
    this.kf = this.kern.filter;
    this.P = this.kf.P;
    this.PhiAcc = this.kf.PhiAcc;
    this.F = this.kf.F;
    this.h = this.kf.h;
    this.dx = this.kf.dx;
    const N = ep.N;
    let h = history;
    if (resume && !(h && h.N === N)) throw new Error('InsSmoother: resume needs the history of the pass it resumes');
    // a resumed pass keeps the entries up to the snapshot's epoch (the same values it would write)
    if (h && h.N === N) h.chainStart.fill(0, resume ? resume.snapshot.epoch + 1 : 0);
    else h = newInsHistory(N);
    this.history = h;
    this.hNav = h.nav;
    this.hPplus = h.pPlus;
    this.hPminus = h.pMinus;
    this.hPhi = h.phi;
    this.hDx = h.dx;
    this.chainStart = h.chainStart;
    const mk = () => new Float64Array(N).fill(NaN);
    const m3 = (): [Float64Array, Float64Array, Float64Array] => [mk(), mk(), mk()];
    this.products = {
      covered: new Uint8Array(N), pos: m3(), vel: m3(), covPos: new Float64Array(N * 6).fill(NaN), zPred: m3(), zCov: new Float64Array(N * 6).fill(NaN), att: m3(), attSd: m3(),
      accelBias: m3(), accelBiasSd: m3(), gyroBias: m3(), gyroBiasSd: m3(),
      nis: mk(), threshold: mk(), accepted: new Uint8Array(N), stationary: new Uint8Array(N),
    };
    this.thresholds = [Infinity, 1, 2, 3].map((d, i) => (i === 0 ? Infinity : chiSquareQuantile(opt.gateProbability, d)));
    if (resume) this.restore(resume);
  }

  /** The array part of the forward state, in the order a snapshot holds it (InsSnapshot.arrays). */
  private stateArrays(): Float64Array[] {
    const parts = [this.nav, this.P, this.PhiAcc, this.sumC, this.sumF, this.zaruSum, this.prevF, this.prevW];
    if (this.ring) parts.push(this.ring);
    return parts;
  }

  private snapshot(): void {
    const k = this.ke - 1;
    const parts = this.stateArrays();
    const arrays = new Float64Array(parts.reduce((a, v) => a + v.length, 0));
    let o = 0;
    for (const v of parts) {
      arrays.set(v, o);
      o += v.length;
    }
    this.snapshots.push({
      epoch: k, sample: this.samplesSeen, ke: this.ke, tNav: this.tNav, sumDt: this.sumDt, zaruDt: this.zaruDt, prevT: this.prevT,
      runCount: this.runCount, runStartT: this.runStartT, phiAccIdentity: this.phiAccIdentity,
      ringCap: this.ringCap, ringHead: this.ringHead, ringCount: this.ringCount, arrays,
      stats: { ...this.stats, alignments: this.stats.alignments.slice() },
    });
    this.lastSnapshotEpoch = k;
  }

  private restore({ snapshot: sn, from }: InsResume): void {
    this.mode = 2;
    this.ke = sn.ke;
    this.tNav = sn.tNav;
    this.sumDt = sn.sumDt;
    this.zaruDt = sn.zaruDt;
    this.prevT = sn.prevT;
    this.runCount = sn.runCount;
    this.runStartT = sn.runStartT;
    this.phiAccIdentity = sn.phiAccIdentity;
    this.ringCap = sn.ringCap;
    this.ringHead = sn.ringHead;
    this.ringCount = sn.ringCount;
    this.ring = sn.ringCap > 0 ? new Float64Array(6 * sn.ringCap) : null;
    let o = 0;
    for (const v of this.stateArrays()) {
      v.set(sn.arrays.subarray(o, o + v.length));
      o += v.length;
    }
    if (o !== sn.arrays.length) throw new Error('InsSmoother: snapshot of another layout');
    Object.assign(this.stats, { ...sn.stats, alignments: sn.stats.alignments.slice() });
    this.samplesSeen = sn.sample;
    this.lastSnapshotEpoch = sn.epoch;
    // the forward products of the epochs before, and the snapshots up to this one
    const a = from.products, b = this.products, n = sn.epoch + 1;
    b.covered.set(a.covered.subarray(0, n));
    b.nis.set(a.nis.subarray(0, n));
    b.threshold.set(a.threshold.subarray(0, n));
    b.accepted.set(a.accepted.subarray(0, n));
    b.stationary.set(a.stationary.subarray(0, n));
    for (const x of from.snapshots) if (x.epoch <= sn.epoch) this.snapshots.push(x);
  }

  /** The latest snapshot of this pass before epoch k (for a next pass whose inputs first differ at k), if any. */
  snapshotBefore(k: number): InsSnapshot | undefined {
    let best: InsSnapshot | undefined;
    for (const x of this.snapshots) if (x.epoch < k && (!best || x.epoch > best.epoch)) best = x;
    return best;
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
    const c = this.cur;
    const tSec = c[0]!;
    if (!(tSec > this.prevT) && Number.isFinite(this.prevT)) {
      this.stats.samplesSkipped++;
      return;
    }
    const st = this.stats;
    if (st.samples === 0) st.firstSampleSec = tSec;
    st.samples++;
    st.lastSampleSec = tSec;
    if (this.ring === null && Number.isFinite(this.prevT)) {
      // detector window sized from the first interval (bounded)
      this.ringCap = Math.max(5, Math.min(8192, Math.round(this.opt.staticWindowSec / (tSec - this.prevT))));
      this.ring = new Float64Array(6 * this.ringCap);
    }
    const ep = this.ep;
    if (this.mode === 0) {
      // idle: epochs before this sample cannot be covered; start at the next epoch with a fix
      while (this.ke < ep.N && (ep.tSec[this.ke]! < tSec || !this.hasFix(this.ke))) this.ke++;
      if (this.ke < ep.N) {
        this.mode = 1;
        this.alignEpoch = this.ke;
        this.alignCount = 0;
      }
    }
    if (this.mode === 1) {
      if (tSec < ep.tSec[this.alignEpoch]!) {
        this.remember(c, 0);
        return;
      }
      this.bufferSample(c);
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
    if (this.mode === 1 && this.alignCount > 0) this.alignAndReplay();
  }

  private hasFix(k: number): boolean {
    return this.ep.use[k]! > 0 && Number.isFinite(this.ep.z[0][k]!) && Number.isFinite(this.ep.z[1][k]!);
  }

  /** The sample at src[o..o+7) becomes the previous one. */
  private remember(src: Float64Array, o: number): void {
    this.prevT = src[o]!;
    this.prevF[0] = src[o + 1]!;
    this.prevF[1] = src[o + 2]!;
    this.prevF[2] = src[o + 3]!;
    this.prevW[0] = src[o + 4]!;
    this.prevW[1] = src[o + 5]!;
    this.prevW[2] = src[o + 6]!;
    this.pushRing(src, o);
  }

  private pushRing(src: Float64Array, o: number): void {
    const r = this.ring;
    if (!r) return;
    const h = 6 * this.ringHead;
    for (let i = 0; i < 6; i++) r[h + i] = src[o + 1 + i]!;
    this.ringHead = (this.ringHead + 1) % this.ringCap;
    if (this.ringCount < this.ringCap) this.ringCount++;
  }

  private bufferSample(c: Float64Array): void {
    if (7 * (this.alignCount + 1) > this.alignBuf.length) {
      const b = new Float64Array(this.alignBuf.length * 2);
      b.set(this.alignBuf);
      this.alignBuf = b;
    }
    const o = 7 * this.alignCount++;
    const a = this.alignBuf;
    for (let i = 0; i < 7; i++) a[o + i] = c[i]!;
  }

  /** Levelling from the buffered accelerometer mean, heading from the caller; then replay the buffer. */
  private alignAndReplay(): void {
    const a = this.alignBuf;
    const n = this.alignCount;
    const opt = this.opt;
    let mf0 = 0, mf1 = 0, mf2 = 0, mw0 = 0, mw1 = 0, mw2 = 0;
    for (let i = 0; i < n; i++) {
      mf0 += a[7 * i + 1]!;
      mf1 += a[7 * i + 2]!;
      mf2 += a[7 * i + 3]!;
      mw0 += a[7 * i + 4]!;
      mw1 += a[7 * i + 5]!;
      mw2 += a[7 * i + 6]!;
    }
    mf0 /= n; mf1 /= n; mf2 /= n; mw0 /= n; mw1 /= n; mw2 /= n;
    let vf = 0, vw = 0;
    for (let i = 0; i < n; i++) {
      vf += (a[7 * i + 1]! - mf0) ** 2 + (a[7 * i + 2]! - mf1) ** 2 + (a[7 * i + 3]! - mf2) ** 2;
      vw += (a[7 * i + 4]! - mw0) ** 2 + (a[7 * i + 5]! - mw1) ** 2 + (a[7 * i + 6]! - mw2) ** 2;
    }
    const sdF = Math.sqrt(vf / Math.max(1, n - 1));
    const sdW = Math.sqrt(vw / Math.max(1, n - 1));
    // a log that starts in motion on a smooth road, or pulls away at a steady acceleration within the
    // levelling time, can pass the sd tests: standing also needs the fixes-only track's speed below the
    // detector's limit over the whole levelling time, and the mean specific force to be gravity alone
    const g = opt.mech.gamma0Mps2;
    let trackSpeed = 0;
    const tEnd = this.ep.tSec[this.alignEpoch]! + opt.alignSec;
    for (let j = this.alignEpoch; j < this.ep.N && this.ep.tSec[j]! <= tEnd; j++) {
      this.init.velocity(j, this.v3);
      trackSpeed = Math.max(trackSpeed, Math.hypot(this.v3[0]!, this.v3[1]!, this.v3[2]!));
    }
    const isStatic =
      n >= 3 && sdF < opt.staticAccelSdMps2 && sdW < opt.staticGyroRadps && Math.hypot(mw0, mw1, mw2) < opt.staticGyroRadps &&
      trackSpeed < opt.staticMaxSpeedMps && Math.abs(Math.hypot(mf0, mf1, mf2) - g) < opt.staticAccelMeanMps2;
    // levelling: f^b = g·[sin θ, cos θ sin φ, cos θ cos φ]  ⇒  φ = atan2(f_y, f_z), θ = atan2(f_x, √(f_y² + f_z²))
    const roll = Math.atan2(mf1, mf2);
    const pitch = Math.atan2(mf0, Math.hypot(mf1, mf2));
    const k = this.alignEpoch;
    const { yawRad, sigmaRad } = this.init.yaw(k);
    const x = this.nav;
    x.fill(0);
    quatFromEuler(roll, pitch, yawRad, x, NAV_Q);
    // tilt error of levelling: accelerometer bias / g, plus a static allowance (moving: 5°)
    const tiltSigma = isStatic ? Math.hypot(opt.accelBiasSigmaMps2 / g, 0.1 * (Math.PI / 180)) : 5 * (Math.PI / 180);
    this.initPositionVelocity(k, isStatic);
    const P = this.P;
    for (let i = 0; i < 2; i++) P[(E_A + i) * NE + E_A + i] = tiltSigma ** 2;
    P[(E_A + 2) * NE + E_A + 2] = sigmaRad ** 2;
    for (let i = 0; i < 3; i++) {
      P[(E_BA + i) * NE + E_BA + i] = opt.accelBiasSigmaMps2 ** 2;
      P[(E_BG + i) * NE + E_BG + i] = opt.gyroBiasSigmaRadps ** 2;
    }
    this.stats.alignments.push({ epoch: k, tSec: this.ep.tSec[k]!, static: isStatic, rollDeg: (roll * 180) / Math.PI, pitchDeg: (pitch * 180) / Math.PI, headingDeg: ((((90 - (yawRad * 180) / Math.PI) % 360) + 360) % 360), headingSigmaDeg: (sigmaRad * 180) / Math.PI });
    this.tNav = this.ep.tSec[k]!;
    this.mode = 2;
    this.chainStart[k] = 1;
    this.ke = k;
    // the first buffered sample stands for the interval from the epoch to it
    this.prevT = this.tNav;
    this.prevF[0] = a[1]!;
    this.prevF[1] = a[2]!;
    this.prevF[2] = a[3]!;
    this.prevW[0] = a[4]!;
    this.prevW[1] = a[5]!;
    this.prevW[2] = a[6]!;
    this.processEpoch(k);
    this.ke = k + 1;
    for (let i = 0; i < n; i++) {
      const o = 7 * i;
      if (a[o]! <= this.prevT) continue;
      this.runSample(a, o);
    }
    this.alignCount = 0;
  }

  /** Position from the fix (antenna minus lever arm), velocity from the caller; diffuse position prior, GNSS error at its stationary variance. */
  private initPositionVelocity(k: number, isStatic: boolean): void {
    const x = this.nav;
    const P = this.P;
    const opt = this.opt;
    // clear the position, velocity and GNSS-error rows and columns
    for (const base of [E_P, E_V, E_GM])
      for (let i = base; i < base + 3; i++)
        for (let j = 0; j < NE; j++) {
          P[i * NE + j] = 0;
          P[j * NE + i] = 0;
        }
    quatToDcm(x, NAV_Q, this.C);
    const l = opt.leverArmBody;
    const C = this.C;
    for (let i = 0; i < 3; i++) {
      const li = C[i * 3]! * l[0] + C[i * 3 + 1]! * l[1] + C[i * 3 + 2]! * l[2];
      const z = this.ep.z[i]![k]!;
      x[NAV_P + i] = Number.isFinite(z) ? z - li : 0;
      x[NAV_GM + i] = 0;
      // diffuse position prior (100 m): the fix update at this epoch then sets position and GNSS error jointly
      P[(E_P + i) * NE + E_P + i] = 1e4;
      const gs = i < 2 ? opt.err.gmSigmaHM : opt.err.gmSigmaVM;
      P[(E_GM + i) * NE + E_GM + i] = Math.max(gs * gs, 1e-12);
    }
    const sv = this.init.velocity(k, this.v3);
    for (let i = 0; i < 3; i++) {
      x[NAV_V + i] = isStatic ? 0 : this.v3[i]!;
      P[(E_V + i) * NE + E_V + i] = isStatic ? 0.2 ** 2 : Math.max(sv, 0.5) ** 2;
    }
    this.PhiAcc.fill(0);
    for (let i = 0; i < NE; i++) this.PhiAcc[i * NE + i] = 1;
    this.phiAccIdentity = true;
    this.sumDt = 0;
    this.sumC.fill(0);
    this.sumF.fill(0);
    this.zaruSum.fill(0);
    this.zaruDt = 0;
    this.runCount = 0;
  }

  /** Mechanize up to the sample at src[o..o+7), processing the epochs on the way. */
  private runSample(src: Float64Array, o: number): void {
    const t = src[o]!;
    // interval mean of the rates (trapezoid between consecutive samples), then the step Δt: rate[0..7)
    const m = this.rate;
    for (let i = 0; i < 3; i++) {
      m[i] = 0.5 * (this.prevF[i]! + src[o + 1 + i]!);
      m[3 + i] = 0.5 * (this.prevW[i]! + src[o + 4 + i]!);
    }
    if (t - this.tNav > 1) this.stats.imuGaps++;
    const ep = this.ep;
    while (this.ke < ep.N && ep.tSec[this.ke]! <= t) {
      m[6] = ep.tSec[this.ke]! - this.tNav;
      this.advance();
      this.processEpoch(this.ke);
      this.ke++;
    }
    m[6] = t - this.tNav;
    this.advance();
    this.remember(src, o);
  }

  /** Mechanize over rate[6] seconds with the mean rates rate[0..6). */
  private advance(): void {
    const m = this.rate;
    const dt = m[6]!;
    if (!(dt > 0)) return;
    const ms = this.ms;
    mechanizeRates(this.nav, m, this.opt.mech, ms);
    for (let i = 0; i < 9; i++) this.sumC[i] += ms.C[i]! * dt;
    for (let i = 0; i < 3; i++) this.sumF[i] += ms.fNav[i]! * dt;
    this.sumDt += dt;
    this.zaruSum[0] += m[3]! * dt;
    this.zaruSum[1] += m[4]! * dt;
    this.zaruSum[2] += m[5]! * dt;
    this.zaruDt += dt;
    this.tNav += dt;
    if (this.sumDt >= this.opt.propagationStepSec) this.propagate();
  }

  /** Covariance step over the time accumulated since the last one, with F at the interval means of C_nb and f^n. */
  private propagate(): void {
    const T = this.sumDt;
    if (!(T > 0)) return;
    const t0 = this.tm ? performance.now() : 0;
    const inv = 1 / T;
    for (let i = 0; i < 9; i++) this.C[i] = this.sumC[i]! * inv;
    for (let i = 0; i < 3; i++) this.v3[i] = this.sumF[i]! * inv;
    fillErrorF(this.F, this.C, this.v3, this.opt.err);
    this.kf.discretize(T);
    this.kf.propagate();
    // Φ_acc ← Φ Φ_acc (the first step after an epoch: Φ_acc = Φ, the same value)
    this.kf.accumulate(this.phiAccIdentity);
    this.phiAccIdentity = false;
    // mean of the Gauss–Markov fix error decays: b ← e^{−Δt/τ} b
    const phiGm = gmPhi(T, this.opt.err.gmTauSec);
    for (let i = 0; i < 3; i++) this.nav[NAV_GM + i] *= phiGm;
    this.sumDt = 0;
    this.sumC.fill(0);
    this.sumF.fill(0);
    if (this.tm) this.tm.propagateMs += performance.now() - t0;
  }

  /** Scalar update of the accumulated correction dx with innovation ν (w.r.t. the predicted nominal) and row h. */
  private scalarUpdate(nu: number, r: number): void {
    this.kf.scalarUpdate(nu, r);
  }

  private processEpoch(k: number): void {
    this.propagate();
    if (!this.tm) return this.updateEpoch(k);
    const t0 = performance.now();
    this.updateEpoch(k);
    this.tm.updateMs += performance.now() - t0;
  }

  /** The epoch's updates after the covariance has been propagated to it. */
  private updateEpoch(k: number): void {
    const ep = this.ep;
    const opt = this.opt;
    const P = this.P;
    const x = this.nav;
    const pr = this.products;
    if (ep.segStart[k] && !this.chainStart[k]) {
      // a new segment after a long gap: keep attitude and biases, restart position and velocity from GNSS
      this.initPositionVelocity(k, false);
      this.chainStart[k] = 1;
    }
    quatToDcm(x, NAV_Q, this.C);
    const C = this.C;
    const l = opt.leverArmBody;
    const leverNav = this.v3;
    for (let i = 0; i < 3; i++) leverNav[i] = C[i * 3]! * l[0] + C[i * 3 + 1]! * l[1] + C[i * 3 + 2]! * l[2];
    // ---- GNSS: innovation, joint gate ----
    let m = 0;
    let pass = false;
    const axes = [0, 0, 0];
    if (this.hasFix(k)) {
      for (let a = 0; a < 3; a++) {
        const z = ep.z[a]![k]!;
        if (!Number.isFinite(z)) continue;
        axes[m] = a;
        // ν = z − (p̂ + Ĉ l + b̂)
        this.nu[m] = z - (x[NAV_P + a]! + leverNav[a]! + x[NAV_GM + a]!);
        gnssRow(a, leverNav, this.h);
        this.Hm.set(this.h, m * NE);
        m++;
      }
      let nis = this.gnssNis(m, axes, k);
      const thr = this.thresholds[m]!;
      pass = ep.use[k] === 2 || nis <= thr;
      if (!pass) {
        this.stats.gnssRejected++;
        if (this.runCount === 0) this.runStartT = ep.tSec[k]!;
        this.runCount++;
        if (this.runCount >= opt.reacquireAfter) {
          // re-acquire: the run of misses says the solution drifted; inflate position and velocity by the miss
          const span = Math.max(ep.tSec[k]! - this.runStartT, 1);
          for (let j = 0; j < m; j++) {
            const a = axes[j]!;
            const miss2 = this.nu[j]! ** 2;
            P[(E_P + a) * NE + E_P + a] += miss2;
            P[(E_V + a) * NE + E_V + a] += (4 * miss2) / (span * span);
          }
          this.stats.reacquisitions++;
          pass = true;
          nis = this.gnssNis(m, axes, k);
        }
      }
      if (pass) this.runCount = 0;
      pr.nis[k] = nis;
      pr.threshold[k] = thr;
    }
    // ---- store the prediction (after any inflation) and the accumulated transition ----
    if (!this.chainStart[k]) {
      packSym(P, this.hPminus, k * NE_PACKED);
      packPhi(this.PhiAcc, this.hPhi, k * PHI_COMPACT);
    }
    this.PhiAcc.fill(0);
    for (let i = 0; i < NE; i++) this.PhiAcc[i * NE + i] = 1;
    this.phiAccIdentity = true;
    const dx = this.dx;
    dx.fill(0);
    if (pass) {
      for (let j = 0; j < m; j++) {
        for (let i = 0; i < NE; i++) this.h[i] = this.Hm[j * NE + i]!;
        this.scalarUpdate(this.nu[j]!, ep.r[axes[j]!]![k]!);
      }
      if (!opt.hasHeight) {
        // weak height hold (no heights in the log): up ≈ 0 within 30 m
        this.h.fill(0);
        this.h[E_P + 2] = 1;
        this.scalarUpdate(-x[NAV_P + 2]!, 900);
      }
      pr.accepted[k] = 1;
    }
    // ---- stationary: zero velocity and zero angular rate; otherwise the non-holonomic constraint ----
    const stationary = opt.zupt && this.isStationary() && this.zuptConsistent();
    if (stationary) {
      const r = this.zuptVariance();
      for (let a = 0; a < 3; a++) {
        velocityRow(a, this.h);
        this.scalarUpdate(-x[NAV_V + a]!, r);
      }
      if (this.zaruDt > 0) {
        const we = opt.mech.earthRateEnu;
        // gyro mean over the epoch interval ≈ b_g + C_bn ω_ie + noise of variance N²/T
        const rz = opt.err.gyroNoiseDensity ** 2 / this.zaruDt + 1e-10;
        for (let a = 0; a < 3; a++) {
          const earth = C[a]! * we[0]! + C[3 + a]! * we[1]! + C[6 + a]! * we[2]!;
          gyroBiasRow(a, this.h);
          this.scalarUpdate(this.zaruSum[a]! / this.zaruDt - earth - x[NAV_BG + a]!, rz);
        }
      }
      pr.stationary[k] = 1;
      this.stats.zuptEpochs++;
    } else if (opt.nhc) {
      const r = opt.nhcSigmaMps ** 2;
      for (let b = 1; b < 3; b++) {
        const vb = bodyVelocityRow(b, C, x, NAV_V, this.h);
        this.scalarUpdate(-vb, r);
      }
      this.stats.nhcEpochs++;
    }
    this.zaruSum.fill(0);
    this.zaruDt = 0;
    // ---- closed-loop reset: fold the correction into the nominal state ----
    applyCorrection(x, dx);
    this.hDx.set(dx, k * NE);
    this.hNav.set(x, k * NAV_LEN);
    packSym(P, this.hPplus, k * NE_PACKED);
    pr.covered[k] = 1;
  }

  /** NIS of the GNSS innovation: νᵀ S⁻¹ ν with S = H P Hᵀ + R, by Cholesky (S is at most 3×3). */
  private gnssNis(m: number, axes: number[], k: number): number {
    const P = this.P;
    const H = this.Hm;
    const S = this.S3;
    for (let i = 0; i < m; i++)
      for (let j = i; j < m; j++) {
        let acc = i === j ? this.ep.r[axes[i]!]![k]! : 0;
        for (let p = 0; p < NE; p++) {
          const hp = H[i * NE + p]!;
          if (hp === 0) continue;
          for (let q = 0; q < NE; q++) acc += hp * P[p * NE + q]! * H[j * NE + q]!;
        }
        S[i * m + j] = acc;
        S[j * m + i] = acc;
      }
    if (!cholesky(m, S, 0, this.L3)) return Infinity;
    // NIS = |L⁻¹ ν|²
    let nis = 0;
    const y = [0, 0, 0];
    for (let i = 0; i < m; i++) {
      let s = this.nu[i]!;
      for (let j = 0; j < i; j++) s -= this.L3[i * m + j]! * y[j]!;
      y[i] = s / this.L3[i * m + i]!;
      nis += y[i]! * y[i]!;
    }
    return nis;
  }

  /** The IMU shows the vehicle stationary (window statistics) and the estimated speed is low. */
  private isStationary(): boolean {
    const r = this.ring;
    const n = this.ringCount;
    if (!r || n < Math.max(3, this.ringCap >> 1)) return false;
    const x = this.nav;
    if (Math.hypot(x[NAV_V]!, x[NAV_V + 1]!, x[NAV_V + 2]!) > this.opt.staticMaxSpeedMps) return false;
    const mean = [0, 0, 0, 0, 0, 0];
    for (let i = 0; i < n; i++) for (let c = 0; c < 6; c++) mean[c] += r[6 * i + c]!;
    for (let c = 0; c < 6; c++) mean[c] /= n;
    let vf = 0, vw = 0;
    for (let i = 0; i < n; i++) {
      for (let c = 0; c < 3; c++) vf += (r[6 * i + c]! - mean[c]!) ** 2;
      for (let c = 3; c < 6; c++) vw += (r[6 * i + c]! - mean[c]!) ** 2;
    }
    const sdF = Math.sqrt(vf / (n - 1));
    const sdW = Math.sqrt(vw / (n - 1));
    const rate = Math.hypot(mean[3]! - x[NAV_BG]!, mean[4]! - x[NAV_BG + 1]!, mean[5]! - x[NAV_BG + 2]!);
    if (!(sdF < this.opt.staticAccelSdMps2 && sdW < this.opt.staticGyroRadps && rate < this.opt.staticGyroRadps)) return false;
    // mean specific force in the nav frame, f^n = C_nb (f̄^b − b̂_a), against gravity [0, 0, γ]: a steady
    // deceleration (braking into a stop, pulling away) has a small sd but a mean off gravity by the acceleration
    if (!(this.forceOffGravity(mean[0]!, mean[1]!, mean[2]!) < this.opt.staticAccelMeanMps2)) return false;
    // the same on the newest quarter of the window: pulling away shows there first (the whole window lags)
    const m = Math.max(3, n >> 2);
    let q0 = 0, q1 = 0, q2 = 0;
    for (let i = 1; i <= m; i++) {
      const o = 6 * ((this.ringHead - i + this.ringCap) % this.ringCap);
      q0 += r[o]!;
      q1 += r[o + 1]!;
      q2 += r[o + 2]!;
    }
    return this.forceOffGravity(q0 / m, q1 / m, q2 / m) < this.opt.staticAccelMeanMps2;
  }

  /** |C_nb (f̄^b − b̂_a) − [0, 0, γ]|: how far a mean specific force (body, m/s²) is from gravity. */
  private forceOffGravity(m0: number, m1: number, m2: number): number {
    const C = this.C, x = this.nav;
    const f0 = m0 - x[NAV_BA]!, f1 = m1 - x[NAV_BA + 1]!, f2 = m2 - x[NAV_BA + 2]!;
    const fe = C[0]! * f0 + C[1]! * f1 + C[2]! * f2;
    const fn = C[3]! * f0 + C[4]! * f1 + C[5]! * f2;
    const fu = C[6]! * f0 + C[7]! * f1 + C[8]! * f2;
    return Math.hypot(fe, fn, fu - gravityAt(this.opt.mech, x[NAV_P + 2]!));
  }

  /**
   * Variance of one zero-velocity pseudo-measurement: σ² · max(1, T_c/Δt). Its error is the standing
   * body's residual motion (engine shake, rocking as the vehicle is loaded), correlated over about the
   * detector's window T_c; updates closer together than that are not independent, so each carries the
   * share Δt/T_c of one window's information and the information per second does not grow with the
   * fix rate (at 1 Hz fixes and a 1 s window: σ² unchanged).
   */
  private zuptVariance(): number {
    const dt = this.zaruDt;
    const s2 = this.opt.zuptSigmaMps ** 2;
    return dt > 0 ? s2 * Math.max(1, this.opt.staticWindowSec / dt) : s2;
  }

  /**
   * The zero-velocity hypothesis against the filter's own prediction: χ² test (3 dof) of ν = 0 − v̂
   * with S = P_vv + R. Moving off (or creeping) after the detector's window last saw stillness, the
   * mechanized velocity grows by a·Δt each epoch and the test fails before a wrong update can pin the
   * velocity (and bias the accelerometer and tilt estimates through their correlations).
   */
  private zuptConsistent(): boolean {
    const P = this.P, x = this.nav, dx = this.dx, S = this.S3;
    const r = this.zuptVariance();
    for (let i = 0; i < 3; i++) {
      // ν = −(v̂ + δv̂): innovation at the current estimate (after this epoch's fix update)
      this.nu[i] = -(x[NAV_V + i]! + dx[E_V + i]!);
      for (let j = 0; j < 3; j++) S[i * 3 + j] = P[(E_V + i) * NE + E_V + j]! + (i === j ? r : 0);
    }
    if (!cholesky(3, S, 0, this.L3)) return false;
    let nis = 0;
    const y = [0, 0, 0];
    for (let i = 0; i < 3; i++) {
      let s = this.nu[i]!;
      for (let j = 0; j < i; j++) s -= this.L3[i * 3 + j]! * y[j]!;
      y[i] = s / this.L3[i * 3 + i]!;
      nis += y[i]! * y[i]!;
    }
    return nis <= ZUPT_GATE_NIS;
  }

  /** Backward RTS over every chain of covered epochs, then the per-epoch products. */
  /** Hand the history to the next pass; this engine keeps its products but can no longer smooth. */
  releaseHistory(): InsHistory {
    const h = this.history;
    if (!h) throw new Error('InsSmoother: history already released');
    this.history = null;
    return h;
  }

  smooth(): void {
    if (!this.history) throw new Error('InsSmoother: history released');
    const t0 = this.tm ? performance.now() : 0;
    this.smoothChains();
    if (this.tm) this.tm.smoothMs += performance.now() - t0;
  }

  private smoothChains(): void {
    const N = this.ep.N;
    const pr = this.products;
    // the step's slots (WebAssembly memory where the kernel loads: ./rts-kernel.ts)
    const rk = this.kern.rts;
    const { Pf, Ps, dNext } = rk;
    const dxs = rk.dx;
    const navS = new Float64Array(NAV_LEN);
    const ex = makeExtractScratch();
    let linked = false;
    for (let k = N - 1; k >= 0; k--) {
      if (!pr.covered[k]) {
        linked = false;
        continue;
      }
      rk.loadPf(this.hPplus, k * NE_PACKED);
      if (!linked) {
        Ps.set(Pf);
        dxs.fill(0);
      } else {
        for (let i = 0; i < NE; i++) dNext[i] = dxs[i]! + this.hDx[(k + 1) * NE + i]!;
        if (!rk.stepPacked(this.hPminus, (k + 1) * NE_PACKED, this.hPhi, (k + 1) * PHI_COMPACT)) {
          // not positive definite: keep the filtered estimate here and restart the chain
          this.stats.smootherFallbacks++;
          Ps.set(Pf);
          dxs.fill(0);
        }
      }
      navS.set(this.hNav.subarray(k * NAV_LEN, (k + 1) * NAV_LEN));
      applyCorrection(navS, dxs);
      extractProducts(k, navS, Ps, this.opt.leverArmBody, pr, ex);
      linked = !this.chainStart[k];
    }
  }
}

/** x ← x ⊕ δx: additive for position, velocity, biases and fix error; attitude by C ← (I + [φ×]) C. */
export function applyCorrection(x: Float64Array, dx: Float64Array): void {
  for (let i = 0; i < 3; i++) {
    x[NAV_P + i] += dx[E_P + i]!;
    x[NAV_V + i] += dx[E_V + i]!;
    x[NAV_BA + i] += dx[E_BA + i]!;
    x[NAV_BG + i] += dx[E_BG + i]!;
    x[NAV_GM + i] += dx[E_GM + i]!;
  }
  quatRotateNav(x, NAV_Q, dx[E_A]!, dx[E_A + 1]!, dx[E_A + 2]!);
}

interface ExtractScratch {
  C: Float64Array;
  C2: Float64Array;
  q: Float64Array;
  e0: Float64Array;
  e1: Float64Array;
  J: Float64Array;
  A: Float64Array;
}

function makeExtractScratch(): ExtractScratch {
  return { C: new Float64Array(9), C2: new Float64Array(9), q: new Float64Array(4), e0: new Float64Array(3), e1: new Float64Array(3), J: new Float64Array(9), A: new Float64Array(9) };
}

/** Products of one epoch: antenna position and its covariance, velocity, attitude and biases with sigmas. */
export function extractProducts(k: number, x: Float64Array, P: Float64Array, l: [number, number, number], pr: InsProducts, s: ExtractScratch): void {
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
  // Euler angles and their sigmas through a numerical Jacobian d(roll, pitch, yaw)/dφ
  dcmToEuler(C, s.e0);
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
