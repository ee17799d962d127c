/**
 * What the IMU-aided filter is given besides the IMU samples: the epoch grid with its GNSS fixes,
 * the caller's initial values (from the fixes-only track) and the options of the filter.
 */
import type { MechParams } from '../../models/ins/mechanization.js';
import type { ErrorModelParams } from './error-model.js';
import type { KernelKind } from './kernels.js';

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

/** Epoch k has a usable fix (offered, with east and north). */
export function epochHasFix(ep: InsEpochs, k: number): boolean {
  return ep.use[k]! > 0 && Number.isFinite(ep.z[0][k]!) && Number.isFinite(ep.z[1][k]!);
}

/** Every per-epoch array of the grid holds N entries (checked once, when a filter is made). */
export function checkInsEpochs(ep: InsEpochs): void {
  const N = ep.N;
  if (!(Number.isInteger(N) && N >= 0)) throw new Error(`InsEpochs: N = ${N} is not a count of epochs`);
  const arrays: Array<[string, ArrayLike<number>]> = [
    ['tSec', ep.tSec], ['use', ep.use], ['segStart', ep.segStart],
    ['z[0]', ep.z[0]], ['z[1]', ep.z[1]], ['z[2]', ep.z[2]], ['r[0]', ep.r[0]], ['r[1]', ep.r[1]], ['r[2]', ep.r[2]],
  ];
  for (const [name, v] of arrays) if (v.length !== N) throw new Error(`InsEpochs: ${name} has ${v.length} elements, expected ${N} (one an epoch)`);
}
