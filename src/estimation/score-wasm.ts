/**
 * The calibration's exact gradient (track-score.ts trackScore) run by the likelihood kernel's
 * WebAssembly module (./asm/loglik-kernel.ts scoreGroup) where it loads: forwardGroup and
 * backwardGroup with the same operations in the same order and the same logarithm, the per-Δt
 * exponentials computed here as trackScore computes them, so the same bits
 * (test/estimation/score-wasm.test.ts). Where the module is missing, trackScore runs its
 * TypeScript loops. One instance a thread, with its own memory; a segment's inputs are copied in at
 * every call (r changes with the quality-column exponents), its step layout once (by identity).
 */
import type { AxisModel } from '../models/axis-model.js';
import { NumericalError } from '../errors.js';
import { wasmInstance, wasmModule, type WasmMemory } from './wasm-module.js';
import type { SegmentData } from './track-filter.js';
import { distinctSteps } from './loglik-wasm.js';

interface Exports {
  memory: WasmMemory;
  scoreGroup(
    N: number, pSlot: number, pTab: number, pUse: number, pZ0: number, pZ1: number, pR: number, rScale: number,
    prior0: number, prior1: number, s2: number, q: number, two: number,
    pXf0: number, pXf1: number, pXs0: number, pXs1: number, pPf: number, pPp: number, pPs: number,
    pOut0: number, pOut1: number, pG: number, pAcc: number,
  ): number;
  scoreFailedAt(): number;
}

/** Tests and troubleshooting: 'js' makes trackScore run its TypeScript loops (results do not depend on it). */
export const SCORE_KERNEL: { prefer: 'wasm' | 'js' } = { prefer: 'wasm' };

let instance: Exports | null | undefined;

/** The thread's instance, or null where the module is missing or not preferred. */
export function scoreKernel(): Exports | null {
  if (SCORE_KERNEL.prefer !== 'wasm') return null;
  if (instance !== undefined) return instance;
  const m = wasmModule(new URL('./asm/loglik-kernel.wasm', import.meta.url));
  return (instance = m ? wasmInstance<Exports>(m, 'score-kernel') : null);
}

/** A segment's steps: each epoch's index of its Δt (from the epoch before) and the distinct Δt in order. */
const steps = new WeakMap<SegmentData, { slot: Int32Array; dts: number[] }>();

function stepsOf(data: SegmentData): { slot: Int32Array; dts: number[] } {
  let s = steps.get(data);
  if (!s || s.slot.length !== data.N) steps.set(data, (s = distinctSteps(data)));
  return s;
}

/**
 * One group's forward and backward pass in the module (trackScore's forwardGroup + backwardGroup):
 * its log-likelihood; dLogR of the group's axes written; the group's axes' score terms added into
 * `axes` (as backwardGroup adds them).
 */
export function scoreGroupKernel(
  ex: Exports,
  m: AxisModel,
  data: SegmentData,
  group: number[],
  rScale: number,
  priorVar: [number, number, number],
  dLogR: Float64Array[],
  axes: Array<{ dLogQ: number; dLogSigmaB: number; dLogTau: number }>,
): number {
  const N = data.N, two = group.length > 1;
  const a0 = group[0]!, a1 = two ? group[1]! : -1;
  const q = m.params.q, s2 = m.params.gm!.sigmaM ** 2, tau = m.params.gm!.tauSec;
  const { slot, dts } = stepsOf(data);
  // the layout (bytes, 8-aligned): slots, the step table, use, z, r, then the pass's arrays
  const align = (b: number) => (b + 7) & ~7;
  let at = 0;
  const take = (bytes: number) => {
    const p = at;
    at = align(at + bytes);
    return p;
  };
  const pSlot = take(4 * N), pTab = take(64 * dts.length), pUse = take(8 * N), pZ0 = take(8 * N), pZ1 = take(two ? 8 * N : 8), pR = take(8 * N);
  const pXf0 = take(24 * N), pXf1 = take(two ? 24 * N : 8), pXs0 = take(24 * N), pXs1 = take(two ? 24 * N : 8);
  const pPf = take(48 * N), pPp = take(48 * N), pPs = take(48 * N), pOut0 = take(8 * N), pOut1 = take(two ? 8 * N : 8), pG = take(128), pAcc = take(48);
  const mem = ex.memory;
  if (mem.buffer.byteLength < at) mem.grow(Math.ceil((at - mem.buffer.byteLength) / 65536));
  const buf = mem.buffer;
  new Int32Array(buf, pSlot, N).set(slot);
  const tab = new Float64Array(buf, pTab, 8 * dts.length);
  dts.forEach((dt, i) => {
    // trackScore's constants of a Δt (forwardGroup and backwardGroup compute the same)
    const phi = Math.exp(-dt / tau);
    const V = s2 * -Math.expm1((-2 * dt) / tau);
    const dphi = (phi * dt) / tau;
    tab.set([dt, phi, V, (q * dt * dt * dt) / 3, (q * dt * dt) / 2, q * dt, dphi, -2 * s2 * phi * dphi], 8 * i);
  });
  const use = new Float64Array(buf, pUse, N);
  for (let k = 0; k < N; k++) use[k] = data.use[k]!;
  new Float64Array(buf, pZ0, N).set(data.z[a0]!);
  if (two) new Float64Array(buf, pZ1, N).set(data.z[a1]!);
  new Float64Array(buf, pR, N).set(data.r[a0]!);
  const ll = ex.scoreGroup(N, pSlot, pTab, pUse, pZ0, pZ1, pR, rScale, priorVar[0], priorVar[1], s2, q, two ? 1 : 0, pXf0, pXf1, pXs0, pXs1, pPf, pPp, pPs, pOut0, pOut1, pG, pAcc);
  if (Number.isNaN(ll) && ex.scoreFailedAt() >= 0) throw new NumericalError(`score: predicted covariance not positive definite at epoch ${ex.scoreFailedAt()}`);
  const f64 = new Float64Array(buf);
  dLogR[a0]!.set(new Float64Array(buf, pOut0, N));
  if (two) dLogR[a1]!.set(new Float64Array(buf, pOut1, N));
  const acc = new Float64Array(buf, pAcc, 6);
  // the prior of the Gauss–Markov state at the first epoch, b₀ ~ N(0, σ_b²): −1 + E[b₀²]/σ_b² (backwardGroup)
  const ps5 = f64[pPs / 8 + 5]!;
  group.forEach((a, i) => {
    const ax = axes[a]!;
    const xs2 = f64[(i === 0 ? pXs0 : pXs1) / 8 + 2]!;
    const Eb0 = ps5 + xs2 ** 2;
    ax.dLogQ += acc[3 * i]!;
    ax.dLogSigmaB += acc[3 * i + 1]! - 1 + Eb0 / s2;
    ax.dLogTau += acc[3 * i + 2]!;
  });
  return ll;
}
