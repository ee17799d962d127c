/**
 * Loading the numerics' compiled WebAssembly modules (AssemblyScript sources in the asm/ folders,
 * built by `npm run build`): the module's bytes read and compiled once per thread, null where the
 * file is missing or this runtime cannot compile it (the callers then run their TypeScript kernels,
 * with the same results); and an instance with the import every module has (abort) and those a
 * module declares of its own.
 */
import { readFileSync } from 'node:fs';
import { fileURLToPath } from 'node:url';

// the WebAssembly API as used here (the project's TypeScript libraries do not declare it)
declare namespace WebAssembly {
  class Module {
    constructor(bytes: Uint8Array);
  }
  class Instance {
    constructor(module: Module, imports: object);
    readonly exports: unknown;
  }
}

/** A module's exported linear memory. */
export interface WasmMemory {
  readonly buffer: ArrayBuffer;
  grow(pages: number): number;
}

/** An exported global (the kernels export their slot offsets so). */
export interface WasmGlobal {
  readonly value: unknown;
}

export type WasmModule = WebAssembly.Module;

const compiled = new Map<string, WasmModule | null>();

/** The module at `url` (a file URL), compiled once per thread; null where it is missing or cannot be compiled here. */
export function wasmModule(url: URL): WasmModule | null {
  const key = url.href;
  const have = compiled.get(key);
  if (have !== undefined) return have;
  let m: WasmModule | null;
  try {
    m = new WebAssembly.Module(readFileSync(fileURLToPath(url)));
  } catch {
    m = null;
  }
  compiled.set(key, m);
  return m;
}

/** A fresh instance of a module (its own memory); `name` goes into the abort message; `env` adds imports (functions the module declares external). */
export function wasmInstance<E>(m: WasmModule, name: string, env: Record<string, unknown> = {}): E {
  return new WebAssembly.Instance(m, { env: { ...env, abort: () => { throw new Error(`${name}: abort`); } } }).exports as E;
}
