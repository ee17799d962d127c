/**
 * The smoother's RTS step (./rts.ts, insRtsStep) behind one interface, run by the WebAssembly kernel
 * (./asm/ins-kernels.ts, compiled by `npm run build`) where it loads and by the TypeScript one
 * otherwise: the same operations in the same order, so the same results bit for bit either way
 * (test/imu/wasm-kernels.test.ts); the WebAssembly one takes ~9 µs a step instead of ~28 µs.
 * The inputs and outputs live in fixed slots: Float64Array views of the kernel's memory (or plain
 * arrays for the TypeScript one) that the caller fills and reads in place, so nothing is copied.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { NE } from './error-model.js';
import { insRtsStep, makeInsRtsScratch } from './rts.js';

// the WebAssembly API as used here (the project's TypeScript libraries do not declare it)
declare namespace WebAssembly {
  class Module {
    constructor(bytes: Uint8Array);
  }
  class Instance {
    constructor(module: Module, imports: object);
    readonly exports: unknown;
  }
  interface Memory {
    readonly buffer: ArrayBuffer;
  }
  interface Global {
    readonly value: unknown;
  }
}

export interface InsRtsKernel {
  readonly kind: 'wasm' | 'js';
  /** Pₖ⁺, P⁻ₖ₊₁, Φ (k → k+1), Pˢₖ₊₁ in and Pˢₖ out (18×18 row-major each). */
  readonly Pf: Float64Array;
  readonly Pm: Float64Array;
  readonly Phi: Float64Array;
  readonly Ps: Float64Array;
  /** δxˢₖ₊₁ + δx̂ₖ₊₁ in, δxˢₖ out (18 each). */
  readonly dNext: Float64Array;
  readonly dx: Float64Array;
  /** One step on the slots; false (Ps and dx untouched) when P⁻ₖ₊₁ is not positive definite. */
  step(): boolean;
}

interface KernelExports {
  memory: WebAssembly.Memory;
  rtsStep(): number;
  PF: WebAssembly.Global;
  PM: WebAssembly.Global;
  PHI: WebAssembly.Global;
  PS: WebAssembly.Global;
  DN: WebAssembly.Global;
  DX: WebAssembly.Global;
}

let compiled: WebAssembly.Module | null | undefined;

/** The compiled kernel module, or null where it is missing or this runtime cannot run it (compiled once per thread). */
function kernelModule(): WebAssembly.Module | null {
  if (compiled !== undefined) return compiled;
  try {
    const bytes = readFileSync(fileURLToPath(new URL('./asm/ins-kernels.wasm', import.meta.url)));
    compiled = new WebAssembly.Module(bytes);
  } catch {
    // not built, or no WebAssembly SIMD here: the TypeScript kernel gives the same results, slower
    compiled = null;
  }
  return compiled;
}

let defaultKind: 'wasm' | 'js' = 'wasm';

/** The kernel makeInsRtsKernel() prefers when not told (tests and troubleshooting; results do not depend on it). */
export function preferInsRtsKernel(kind: 'wasm' | 'js'): void {
  defaultKind = kind;
}

/** Which kernel makeInsRtsKernel() gives by default here. */
export function insRtsKernelKind(): 'wasm' | 'js' {
  return defaultKind === 'wasm' && kernelModule() ? 'wasm' : 'js';
}

export function makeInsRtsKernel(prefer: 'wasm' | 'js' = defaultKind): InsRtsKernel {
  const mod = prefer === 'wasm' ? kernelModule() : null;
  if (mod) {
    const ex = new WebAssembly.Instance(mod, { env: { abort: () => { throw new Error('ins-kernels: abort'); } } }).exports as unknown as KernelExports;
    const buf = ex.memory.buffer;
    const view = (g: WebAssembly.Global, len: number) => new Float64Array(buf, (g.value as number) * 8, len);
    const m = NE * NE;
    return {
      kind: 'wasm',
      Pf: view(ex.PF, m),
      Pm: view(ex.PM, m),
      Phi: view(ex.PHI, m),
      Ps: view(ex.PS, m),
      dNext: view(ex.DN, NE),
      dx: view(ex.DX, NE),
      step: () => ex.rtsStep() === 1,
    };
  }
  const m = NE * NE;
  const Pf = new Float64Array(m), Pm = new Float64Array(m), Phi = new Float64Array(m), Ps = new Float64Array(m);
  const dNext = new Float64Array(NE), dx = new Float64Array(NE);
  const s = makeInsRtsScratch();
  // insRtsStep fails before it writes anything, as the WebAssembly step does
  return { kind: 'js', Pf, Pm, Phi, Ps, dNext, dx, step: () => insRtsStep(Pf, Pm, Phi, Ps, dNext, dx, Ps, s) };
}
