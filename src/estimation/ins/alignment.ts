/**
 * Initial alignment of the IMU-aided filter: roll and pitch from the accelerometer mean over the
 * first `alignSec` of samples from the first fix epoch (Groves 2013 §5.6.2, "levelling"), heading from
 * the first motion of the GNSS track (given by the caller), position from the fix and velocity from
 * the caller; the prior covariance of each. The same position/velocity start restarts a new segment.
 */
import { quatFromEuler, quatToDcm, yawToHeadingDeg } from '../../models/ins/attitude.js';
import { NAV_GM, NAV_P, NAV_Q, NAV_V } from '../../models/ins/mechanization.js';
import { checkMinSize } from './check-size.js';
import { E_A, E_BA, E_BG, E_GM, E_P, E_V, NE } from './error-model.js';
import type { InsEpochs, InsInit, InsOptions } from './inputs.js';
import { resetPhiAcc, type InsScratch, type InsState } from './state.js';
import type { InsStats } from './stats.js';

/** The samples (t, fx, fy, fz, wx, wy, wz: 7 a sample) buffered from the alignment epoch on; grows by doubling. */
export interface AlignmentBuffer {
  buf: Float64Array;
  count: number;
}

export function newAlignmentBuffer(): AlignmentBuffer {
  return { buf: new Float64Array(7 * 1024), count: 0 };
}

export function bufferSample(b: AlignmentBuffer, c: Float64Array): void {
  if (7 * (b.count + 1) > b.buf.length) {
    const g = new Float64Array(b.buf.length * 2);
    g.set(b.buf);
    b.buf = g;
  }
  const o = 7 * b.count++;
  const a = b.buf;
  for (let i = 0; i < 7; i++) a[o + i] = c[i]!;
}

/** Means of the buffered specific force (m/s²) and angular rate (rad/s), and the spread of each. */
interface BufferMoments {
  mf: [number, number, number];
  mw: [number, number, number];
  sdF: number;
  sdW: number;
}

function bufferMoments(a: Float64Array, n: number): BufferMoments {
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
  return { mf: [mf0, mf1, mf2], mw: [mw0, mw1, mw2], sdF: Math.sqrt(vf / Math.max(1, n - 1)), sdW: Math.sqrt(vw / Math.max(1, n - 1)) };
}

/**
 * The vehicle stands during the levelling time. A log that starts in motion on a smooth road, or pulls
 * away at a steady acceleration within the levelling time, can pass the sd tests: standing also needs
 * the fixes-only track's speed below the detector's limit over the whole levelling time, and the mean
 * specific force to be gravity alone.
 */
function standsAtStart(mo: BufferMoments, n: number, ep: InsEpochs, init: InsInit, opt: InsOptions, k: number, v3: Float64Array): boolean {
  const g = opt.mech.gamma0Mps2;
  let trackSpeed = 0;
  const tEnd = ep.tSec[k]! + opt.alignSec;
  for (let j = k; j < ep.N && ep.tSec[j]! <= tEnd; j++) {
    init.velocity(j, v3);
    trackSpeed = Math.max(trackSpeed, Math.hypot(v3[0]!, v3[1]!, v3[2]!));
  }
  const [mf0, mf1, mf2] = mo.mf, [mw0, mw1, mw2] = mo.mw;
  return (
    n >= 3 && mo.sdF < opt.staticAccelSdMps2 && mo.sdW < opt.staticGyroRadps && Math.hypot(mw0, mw1, mw2) < opt.staticGyroRadps &&
    trackSpeed < opt.staticMaxSpeedMps && Math.abs(Math.hypot(mf0, mf1, mf2) - g) < opt.staticAccelMeanMps2
  );
}

/**
 * Levelling from the n buffered samples, heading from the caller: the nominal state and P at epoch k,
 * the alignment recorded in `stats`; the state's time is the epoch's and its previous sample is the
 * first buffered one (which stands for the interval from the epoch to it).
 */
export function insAlign(s: InsState, w: InsScratch, ep: InsEpochs, init: InsInit, opt: InsOptions, k: number, b: AlignmentBuffer, stats: InsStats): void {
  const a = b.buf, n = b.count;
  checkMinSize('insAlign', 'alignment buffer', a, 7 * Math.max(n, 1), `7 × ${n} samples`);
  const mo = bufferMoments(a, n);
  const isStatic = standsAtStart(mo, n, ep, init, opt, k, w.v3);
  const g = opt.mech.gamma0Mps2;
  const [mf0, mf1, mf2] = mo.mf;
  // levelling: f^b = g·[sin θ, cos θ sin φ, cos θ cos φ]  ⇒  φ = atan2(f_y, f_z), θ = atan2(f_x, √(f_y² + f_z²))
  const roll = Math.atan2(mf1, mf2);
  const pitch = Math.atan2(mf0, Math.hypot(mf1, mf2));
  const { yawRad, sigmaRad } = init.yaw(k);
  const x = s.nav;
  x.fill(0);
  quatFromEuler(roll, pitch, yawRad, x, NAV_Q);
  // tilt error of levelling: accelerometer bias / g, plus a static allowance (moving: 5°)
  const tiltSigma = isStatic ? Math.hypot(opt.accelBiasSigmaMps2 / g, 0.1 * (Math.PI / 180)) : 5 * (Math.PI / 180);
  insInitPositionVelocity(s, w, ep, init, opt, k, isStatic);
  const P = s.P;
  for (let i = 0; i < 2; i++) P[(E_A + i) * NE + E_A + i] = tiltSigma ** 2;
  P[(E_A + 2) * NE + E_A + 2] = sigmaRad ** 2;
  for (let i = 0; i < 3; i++) {
    P[(E_BA + i) * NE + E_BA + i] = opt.accelBiasSigmaMps2 ** 2;
    P[(E_BG + i) * NE + E_BG + i] = opt.gyroBiasSigmaRadps ** 2;
  }
  stats.alignments.push({ epoch: k, tSec: ep.tSec[k]!, static: isStatic, rollDeg: (roll * 180) / Math.PI, pitchDeg: (pitch * 180) / Math.PI, headingDeg: yawToHeadingDeg(yawRad), headingSigmaDeg: (sigmaRad * 180) / Math.PI });
  s.tNav = ep.tSec[k]!;
  s.prevT = s.tNav;
  for (let i = 0; i < 3; i++) {
    s.prevF[i] = a[1 + i]!;
    s.prevW[i] = a[4 + i]!;
  }
}

/** Position from the fix (antenna minus lever arm), velocity from the caller; diffuse position prior, GNSS error at its stationary variance. */
export function insInitPositionVelocity(s: InsState, w: InsScratch, ep: InsEpochs, init: InsInit, opt: InsOptions, k: number, isStatic: boolean): void {
  const x = s.nav;
  const P = s.P;
  // clear the position, velocity and GNSS-error rows and columns
  for (const base of [E_P, E_V, E_GM])
    for (let i = base; i < base + 3; i++)
      for (let j = 0; j < NE; j++) {
        P[i * NE + j] = 0;
        P[j * NE + i] = 0;
      }
  quatToDcm(x, NAV_Q, w.C);
  const l = opt.leverArmBody;
  const C = w.C;
  for (let i = 0; i < 3; i++) {
    const li = C[i * 3]! * l[0] + C[i * 3 + 1]! * l[1] + C[i * 3 + 2]! * l[2];
    const z = ep.z[i]![k]!;
    x[NAV_P + i] = Number.isFinite(z) ? z - li : 0;
    x[NAV_GM + i] = 0;
    // diffuse position prior (100 m): the fix update at this epoch then sets position and GNSS error jointly
    P[(E_P + i) * NE + E_P + i] = 1e4;
    const gs = i < 2 ? opt.err.gmSigmaHM : opt.err.gmSigmaVM;
    P[(E_GM + i) * NE + E_GM + i] = Math.max(gs * gs, 1e-12);
  }
  const sv = init.velocity(k, w.v3);
  for (let i = 0; i < 3; i++) {
    x[NAV_V + i] = isStatic ? 0 : w.v3[i]!;
    P[(E_V + i) * NE + E_V + i] = isStatic ? 0.2 ** 2 : Math.max(sv, 0.5) ** 2;
  }
  resetPhiAcc(s);
  s.sumDt = 0;
  s.sumC.fill(0);
  s.sumF.fill(0);
  s.zaruSum.fill(0);
  s.zaruDt = 0;
  s.runCount = 0;
}
