/**
 * The state-space model of one local axis (east, north or up): a kinematic block (constant
 * velocity or constant acceleration) and, optionally, a first-order Gauss–Markov fix-error state.
 * Layout x = [p, v, (a), (b)], measurement z = p + b + white noise, so H = [1, 0, (0), (1)].
 * The three axes are independent (diagonal R, per-axis process noise), which lets the filter run
 * three small filters instead of one large one and keep the joint chi-square gate exact.
 */
import { fillMotionF, fillMotionQ, motionDim, type MotionKind } from './motion.js';
import { gmPhi, gmQ, type GaussMarkovParams } from './gauss-markov.js';

export interface AxisModelParams {
  motion: MotionKind;
  /** Spectral density of the driving white noise (m²/s³ for cv, m²/s⁵ for ca). */
  q: number;
  /** Time-correlated fix error; null or sigma 0 for none. */
  gm: GaussMarkovParams | null;
}

export interface AxisModel {
  readonly params: AxisModelParams;
  /** State dimension. */
  readonly n: number;
  /** Kinematic dimension (position, velocity, …). */
  readonly nMotion: number;
  /** Index of the Gauss–Markov error state, or −1. */
  readonly iBias: number;
  /** Measurement row H (length n). */
  readonly h: Float64Array;
  /** F for a step Δt into an n×n row-major array (fully overwritten). */
  fillF(dtSec: number, F: Float64Array): void;
  /** Q for a step Δt into an n×n row-major array (fully overwritten); qScale multiplies the kinematic part. */
  fillQ(dtSec: number, Q: Float64Array, qScale?: number): void;
}

export function makeAxisModel(params: AxisModelParams): AxisModel {
  const nMotion = motionDim(params.motion);
  const hasGm = params.gm !== null && params.gm.sigmaM > 0 && params.gm.tauSec > 0;
  const n = nMotion + (hasGm ? 1 : 0);
  const iBias = hasGm ? n - 1 : -1;
  const h = new Float64Array(n);
  h[0] = 1;
  if (hasGm) h[iBias] = 1;
  const gm = params.gm;
  return {
    params,
    n,
    nMotion,
    iBias,
    h,
    fillF(dtSec, F) {
      F.fill(0);
      fillMotionF(params.motion, dtSec, F, n);
      if (hasGm) F[iBias * n + iBias] = gmPhi(dtSec, gm!.tauSec);
    },
    fillQ(dtSec, Q, qScale = 1) {
      Q.fill(0);
      fillMotionQ(params.motion, dtSec, params.q * qScale, Q, n);
      if (hasGm) Q[iBias * n + iBias] = gmQ(dtSec, gm!);
    },
  };
}
