/**
 * The simulation smoother's draw step for three-state axes run by its WebAssembly module
 * (./asm/draws-kernel.ts, compiled by `npm run build`) where it loads: the normal generator of
 * gaussian-rng.ts and the backward draw of session/survey/posterior.ts with the same integer
 * steps and floating-point operations in the same order (the slow path's exp and log are
 * JavaScript's own, imported), so the same draws bit for bit (test/estimation/draws-wasm.test.ts).
 * Where the module is missing the TypeScript loop runs, with the same results. Measured (four
 * one-hour 1 Hz vehicle logs, 200 draws, warm, in-process): the survey products 84 → 45 ms a log;
 * the normals were half of the TypeScript loop's time.
 */
import { wasmInstance, wasmModule, type WasmMemory } from './wasm-module.js';
import { ZIGGURAT_TABLES } from './gaussian-rng.js';

interface Exports {
  memory: WasmMemory;
  setTables(kn: number, wn: number, fn: number): void;
  setState(v: number): void;
  getState(): number;
  normal(): number;
  step3(
    D: number, pPrev: number, pOut: number, pPos: number,
    g00: number, g01: number, g02: number, g10: number, g11: number, g12: number, g20: number, g21: number, g22: number,
    c0: number, c1: number, c2: number,
    l00: number, l10: number, l11: number, l20: number, l21: number, l22: number,
  ): void;
  last3(D: number, pOut: number, pPos: number, x0: number, x1: number, x2: number, l00: number, l10: number, l11: number, l20: number, l21: number, l22: number): void;
}

/** Tests and troubleshooting: 'js' makes the draws run their TypeScript loop (results do not depend on it). */
export const DRAWS_KERNEL: { prefer: 'wasm' | 'js' } = { prefer: 'wasm' };

/** Bytes of the tables at the start of the module's memory (KN i32, WN and FN f64; 128 each). */
const TABLE_BYTES = 128 * 4 + 2 * 128 * 8;

export interface DrawsKernel {
  ex: Exports;
}

let instance: DrawsKernel | null | undefined;

/** The thread's kernel (its tables written once), or null where the module is missing or not preferred. */
export function drawsKernel(): DrawsKernel | null {
  if (DRAWS_KERNEL.prefer !== 'wasm') return null;
  if (instance !== undefined) return instance;
  const m = wasmModule(new URL('./asm/draws-kernel.wasm', import.meta.url));
  if (!m) return (instance = null);
  const ex = wasmInstance<Exports>(m, 'draws-kernel', { exp: Math.exp, log: Math.log });
  const buf = ex.memory.buffer;
  new Int32Array(buf, 0, 128).set(ZIGGURAT_TABLES.KN);
  new Float64Array(buf, 512, 128).set(ZIGGURAT_TABLES.WN);
  new Float64Array(buf, 512 + 1024, 128).set(ZIGGURAT_TABLES.FN);
  ex.setTables(0, 512, 512 + 1024);
  return (instance = { ex });
}

/**
 * Views into the module's memory for nAx axes of D three-state draws: per axis the draws of the
 * current and of the next epoch (3 doubles a draw) and the positions (1 a draw). The memory grows
 * here if it must; the views stay valid until the next call.
 */
export function drawBuffers(k: DrawsKernel, nAx: number, D: number): { cur: Float64Array[]; nxt: Float64Array[]; pos: Float64Array[] } {
  const need = TABLE_BYTES + nAx * 7 * D * 8;
  const mem = k.ex.memory;
  if (mem.buffer.byteLength < need) mem.grow(Math.ceil((need - mem.buffer.byteLength) / 65536));
  const buf = mem.buffer;
  let at = TABLE_BYTES;
  const take = (n: number): Float64Array => {
    const v = new Float64Array(buf, at, n);
    at += n * 8;
    return v;
  };
  const cur: Float64Array[] = [], nxt: Float64Array[] = [], pos: Float64Array[] = [];
  for (let a = 0; a < nAx; a++) {
    cur.push(take(3 * D));
    nxt.push(take(3 * D));
    pos.push(take(D));
  }
  return { cur, nxt, pos };
}
