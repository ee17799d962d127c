/**
 * The calibration's likelihood kernel run by its WebAssembly module (./asm/loglik-kernel.ts,
 * compiled by `npm run build`) where it loads: forwardLogLik's loop with the same operations in the
 * same order and the same logarithm, so the same bits (test/estimation/loglik-wasm.test.ts); where
 * the module is missing, forwardLogLik runs its TypeScript loop. Measured (300 calls, warm): the
 * batch bench's two-hour 1 Hz log (6,460 epochs) 106–112 ns an epoch in TypeScript, 77 here; the
 * 10k-fix 10 Hz bench log (6,500 epochs) 140 and 74. Most of the gain is the logarithm (two an
 * epoch, ~40 ns of the TypeScript loop's time). A warm two-hour session's calibration went
 * 619–633 → 466–511 ms in-process; in the batch (one worker, 16 such sessions, three alternating
 * runs) the sessions' summed time went 8.30–10.65 → 7.54–7.72 s.
 * The caller's data arrays are copied into the module's memory once per segment (the calibration
 * evaluates the same chunks ~1,000 times); F and Q of every distinct Δt are computed per call in
 * JavaScript by the models (the exponentials stay JavaScript's) and passed in a table.
 */
import type { AxisModel } from '../models/axis-model.js';
import { wasmInstance, wasmModule, type WasmMemory, type WasmModule } from './wasm-module.js';
import type { SegmentData } from './track-filter.js';

interface Exports {
  memory: WasmMemory;
  run(N: number, pSt: number, pPar: number, pTab: number, pSlot: number, pUse: number, pZE: number, pZN: number, pZU: number, pRE: number, pRU: number): number;
  logLn(x: number): number;
  log2pi(): number;
}

/** The compiled module, or null where it is missing (not built): forwardLogLik's TypeScript loop gives the same results, slower. */
function kernelModule(): WasmModule | null {
  return wasmModule(new URL('./asm/loglik-kernel.wasm', import.meta.url));
}

/** Tests and troubleshooting: 'js' makes forwardLogLik run its TypeScript loop (results do not depend on it). */
export const LOGLIK_KERNEL: { prefer: 'wasm' | 'js' } = { prefer: 'wasm' };

const P_ST = 0; // 22 doubles
const P_PAR = 22 * 8; // 14 doubles
const P_TAB = 48 * 8; // 8 doubles of the kernel's scratch after par; the first segment's inputs start here

/** A segment's inputs in the module's memory: its distinct steps and where its per-epoch arrays start. */
interface Loaded {
  dts: number[];
  /** The step table (F, Q east; F, Q up: 36 doubles a distinct Δt), then the epochs' step indices. */
  pTab: number;
  pSlot: number;
  pUse: number;
  pZ: [number, number, number];
  pR: [number, number];
}

/** One module instance and the segments whose inputs it holds (by identity; the calibration passes the same few chunks ~1,000 times). */
export interface LogLikKernel {
  ex: Exports;
  loaded: Map<SegmentData, Loaded>;
  /** First free byte of the module's memory (segments are laid out one after another). */
  top: number;
  f64: Float64Array;
  /** Scratch for one step's F and Q. */
  F: Float64Array;
  Q: Float64Array;
}

/** A kernel instance, or null where the module is missing or not preferred. */
export function makeLogLikKernel(): LogLikKernel | null {
  if (LOGLIK_KERNEL.prefer !== 'wasm') return null;
  const m = kernelModule();
  if (!m) return null;
  const ex = wasmInstance<Exports>(m, 'loglik-kernel');
  return { ex, loaded: new Map(), top: 0, f64: new Float64Array(ex.memory.buffer), F: new Float64Array(9), Q: new Float64Array(9) };
}

/** The module's logarithm and log 2π (for the test against Math.log). */
export function kernelLog(k: LogLikKernel, x: number): number {
  return k.ex.logLn(x);
}
export function kernelLog2Pi(k: LogLikKernel): number {
  return k.ex.log2pi();
}

/** Segments held at most (a calibration round passes ≤ 4 chunks; beyond this the memory starts afresh). */
const MAX_LOADED = 16;

/** A segment's distinct Δt in order of appearance, and per epoch k ≥ 1 the index of its Δt (from k − 1); the WebAssembly kernels' step tables are laid out by it. */
export function distinctSteps(data: SegmentData): { dts: number[]; slot: Int32Array } {
  const index = new Map<number, number>();
  const dts: number[] = [];
  const slot = new Int32Array(data.N);
  for (let i = 1; i < data.N; i++) {
    const dt = data.tSec[i]! - data.tSec[i - 1]!;
    let s = index.get(dt);
    if (s === undefined) {
      s = dts.length;
      index.set(dt, s);
      dts.push(dt);
    }
    slot[i] = s;
  }
  return { dts, slot };
}

/**
 * Copy a segment's fixed inputs into the module (once per SegmentData object: its tSec and z are
 * taken as fixed while the same object is passed, as the calibration's chunks are): z, r per epoch
 * and each epoch's step index. `use` and r are copied again at every call (runLogLikKernel).
 */
function load(k: LogLikKernel, data: SegmentData, up: boolean): Loaded {
  const N = data.N;
  if (k.loaded.size >= MAX_LOADED) {
    k.loaded.clear();
    k.top = 0;
  }
  const { dts, slot } = distinctSteps(data);
  const align = (b: number) => (b + 7) & ~7;
  const base = align(Math.max(k.top, P_TAB));
  const pTab = base;
  const pSlot = align(pTab + dts.length * 36 * 8);
  const pUse = align(pSlot + N * 4);
  const need = pUse + 6 * N * 8;
  const mem = k.ex.memory;
  if (mem.buffer.byteLength < need) mem.grow(Math.ceil((need - mem.buffer.byteLength) / 65536));
  const buf = mem.buffer;
  k.f64 = new Float64Array(buf);
  new Int32Array(buf, pSlot, N).set(slot);
  const f = k.f64;
  const o = pUse / 8;
  f.set(data.z[0]!, o + N);
  f.set(data.z[1]!, o + 2 * N);
  if (up) f.set(data.z[2]!, o + 3 * N);
  f.set(data.r[0]!, o + 4 * N);
  if (up) f.set(data.r[2]!, o + 5 * N);
  k.top = need;
  const l: Loaded = { dts, pTab, pSlot, pUse, pZ: [pUse + N * 8, pUse + 2 * N * 8, pUse + 3 * N * 8], pR: [pUse + 4 * N * 8, pUse + 5 * N * 8] };
  k.loaded.set(data, l);
  return l;
}

/**
 * forwardLogLik's loop on the module: st (22 doubles: the prior in, the last epoch's state and the
 * sum out, as forwardLogLik's work), thresholds by dof, the r scales; returns the sum.
 */
export function runLogLikKernel(k: LogLikKernel, models: AxisModel[], data: SegmentData, thresholds: number[], rScale: number[], st: Float64Array): number {
  const up = models.length === 3;
  const l = k.loaded.get(data) ?? load(k, data, up);
  const f = k.f64;
  const ou = l.pUse / 8, N = data.N, use = data.use;
  for (let i = 0; i < N; i++) f[ou + i] = use[i]!;
  // r too (the calibration rewrites it in place when it estimates the quality columns' exponents)
  f.set(data.r[0]!, l.pR[0] / 8);
  if (up) f.set(data.r[2]!, l.pR[1] / 8);
  // F, Q of every distinct step, east then up (the models' own functions: the bits ensureStep gives)
  const F = k.F, Q = k.Q;
  for (let s = 0; s < l.dts.length; s++) {
    const o = l.pTab / 8 + s * 36;
    const dt = l.dts[s]!;
    models[0]!.fillF(dt, F);
    models[0]!.fillQ(dt, Q, 1);
    f.set(F, o);
    f.set(Q, o + 9);
    if (up) {
      models[2]!.fillF(dt, F);
      models[2]!.fillQ(dt, Q, 1);
      f.set(F, o + 18);
      f.set(Q, o + 27);
    }
  }
  const par = P_PAR / 8;
  f[par] = thresholds[0]!;
  f[par + 1] = thresholds[1]!;
  f[par + 2] = thresholds[2]!;
  f[par + 3] = thresholds[3]!;
  const hH = models[0]!.h, hV = up ? models[2]!.h : hH;
  f[par + 4] = hH[0]!;
  f[par + 5] = hH[1]!;
  f[par + 6] = hH[2]!;
  f[par + 7] = hV[0]!;
  f[par + 8] = hV[1]!;
  f[par + 9] = hV[2]!;
  f[par + 10] = rScale[0]!;
  f[par + 11] = up ? rScale[2]! : 1;
  f[par + 12] = up ? 1 : 0;
  f.set(st, P_ST / 8);
  const sum = k.ex.run(N, P_ST, P_PAR, l.pTab, l.pSlot, l.pUse, l.pZ[0], l.pZ[1], l.pZ[2], l.pR[0], l.pR[1]);
  st.set(f.subarray(P_ST / 8, P_ST / 8 + 22));
  return sum;
}
