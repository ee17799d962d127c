/**
 * A segment's inputs and its filter history as the per-axis kernels read them (flat arrays per
 * axis, covariances packed by covStride), and the size checks at the public entry points of the
 * filter, likelihood and smoother: a segment's arrays must hold its N epochs and one row of z and
 * r per axis model, and a history one state of n and one covariance of covStride(n) doubles per
 * epoch and axis. The kernels index flat arrays without bounds checks (a wrong size reads undefined
 * and spreads NaN silently, or writes past a view), so the sizes are checked once per call, in
 * O(axes), with a message naming the caller, the array and the sizes expected and found.
 */
import type { AxisModel } from '../models/axis-model.js';

/** Epoch-wise inputs of one segment, per axis arrays indexed by epoch. */
export interface SegmentData {
  /** Number of epochs. */
  N: number;
  tSec: Float64Array;
  /** Measured coordinate per axis (m, local frame); NaN where the axis is not measured. */
  z: Float64Array[];
  /** Measurement variance per axis (m²). */
  r: Float64Array[];
  /** 0 no measurement (bridged epoch, invalid or user-rejected fix), 1 gated fix, 2 fix accepted without gating (user-kept). */
  use: Uint8Array;
}

/** Forward history of one segment; x/P hold filtered values (later overwritten by the smoother). */
export interface FilterHistory {
  N: number;
  /** Per axis: N×n states. */
  x: Float64Array[];
  /** Per axis: N covariances of covStride(n) doubles each (n = 3: the upper triangle, see covIndex; otherwise n×n row-major). */
  P: Float64Array[];
  /** NIS of each offered fix against the prediction (NaN where none). */
  nis: Float64Array;
  /** Degrees of freedom of that NIS. */
  dof: Uint8Array;
  /** Gate threshold used at that epoch. */
  threshold: Float64Array;
  /** 1 where the fix was used in the update. */
  accepted: Uint8Array;
  /** Extra process-noise diagonal added to the step ending at an epoch (re-acquisition), per axis. */
  extraQ: Map<number, Float64Array[]>;
  /** Gaussian log-likelihood contribution of each epoch (capped at the gate for rejected fixes); filled with FilterOptions.likelihood, else 0. */
  logLik: Float64Array;
  /** Epochs where re-acquisition happened. */
  reacquired: number[];
}

/**
 * Doubles per epoch of an axis covariance in a history: for n = 3 the upper triangle
 * [p00, p01, p02, p11, p12, p22] (the covariances are symmetric bit for bit: every kernel writes them
 * mirrored), otherwise the full n×n matrix.
 */
export function covStride(n: number): number {
  return n === 3 ? 6 : n * n;
}

/** Index of element (i, j) within one epoch's covariance of an axis with state dimension n (see covStride). */
export function covIndex(n: number, i: number, j: number): number {
  if (n !== 3) return i * n + j;
  const r = i < j ? i : j, c = i < j ? j : i;
  return r * 3 - (r * (r - 1)) / 2 + (c - r);
}

function fail(fn: string, what: string, found: number, expected: number | string): never {
  throw new RangeError(`${fn}: ${what} has ${found} elements, expected ${expected}`);
}

/** The segment holds N epochs for every axis of `models` (longer arrays are allowed: views of a larger buffer are sliced by N). */
export function checkSegment(fn: string, models: AxisModel[], data: SegmentData): void {
  const N = data.N;
  if (!(Number.isInteger(N) && N >= 0)) throw new RangeError(`${fn}: N = ${N} is not a count of epochs`);
  if (models.length < 1 || models.length > 3) throw new RangeError(`${fn}: ${models.length} axis models, expected 1 to 3`);
  if (data.tSec.length < N) fail(fn, 'tSec', data.tSec.length, `at least N = ${N}`);
  if (data.use.length < N) fail(fn, 'use', data.use.length, `at least N = ${N}`);
  if (data.z.length < models.length) fail(fn, 'z (axes)', data.z.length, `one per model (${models.length})`);
  if (data.r.length < models.length) fail(fn, 'r (axes)', data.r.length, `one per model (${models.length})`);
  for (let a = 0; a < models.length; a++) {
    if (data.z[a]!.length < N) fail(fn, `z[${a}]`, data.z[a]!.length, `at least N = ${N}`);
    if (data.r[a]!.length < N) fail(fn, `r[${a}]`, data.r[a]!.length, `at least N = ${N}`);
  }
}

/** The history holds N epochs of every axis's state and covariance. */
export function checkHistory(fn: string, models: AxisModel[], h: FilterHistory, N: number): void {
  if (h.N !== N) throw new RangeError(`${fn}: the history holds ${h.N} epochs, the segment ${N}`);
  if (h.x.length !== models.length || h.P.length !== models.length) throw new RangeError(`${fn}: the history has ${h.x.length} axes, the models ${models.length}`);
  for (let a = 0; a < models.length; a++) {
    const n = models[a]!.n;
    if (h.x[a]!.length !== N * n) fail(fn, `x[${a}]`, h.x[a]!.length, `N × n = ${N} × ${n}`);
    if (h.P[a]!.length !== N * covStride(n)) fail(fn, `P[${a}]`, h.P[a]!.length, `N × ${covStride(n)} = ${N * covStride(n)}`);
  }
}
