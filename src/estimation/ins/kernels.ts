/**
 * The numerical kernels of the IMU error-state filter and smoother behind one interface, run by the
 * WebAssembly module (./asm/ins-kernels.ts, compiled by `npm run build`) where it loads and by the
 * TypeScript kernels otherwise: the same operations in the same order, so the same results bit for
 * bit either way (test/imu/wasm-kernels.test.ts). Measured: the RTS step ~9 µs a call instead of
 * ~28 µs; on the 1-hour, 10 Hz bench log the propagation stage (Φ, Qd, P ← ΦPΦᵀ + Qd) went 3.1 →
 * 1.0 µs an IMU sample and the updates stage (Joseph updates, gate, history stores) 2.8 → 2.2.
 * The module's bytes are read once per thread (the one file access of the numerics: code, not data).
 * Inputs and outputs live in fixed slots: Float64Array views of the module's memory (plain arrays
 * for the TypeScript kernels) that the caller fills and reads in place, so nothing is copied. One
 * instance per filter (each has its own memory).
 */
import { gmPhi, gmQ } from '../../models/gauss-markov.js';
import {
  discretize, fillQcDiag, leftMultiply, makeDiscScratch, makeNonzeros, NE, NE_PACKED, PHI_COMPACT, propagateCovariance, setFromIdentityProduct,
  unpackPhi, unpackSym, type ErrorModelParams,
} from './error-model.js';
import { insRtsStep, makeInsRtsScratch } from './rts.js';
import { makeScalarScratch, scalarJosephUpdate } from './scalar-update.js';
import { wasmInstance, wasmModule, type WasmGlobal, type WasmMemory, type WasmModule } from '../wasm-module.js';

export type KernelKind = 'wasm' | 'js';

/** The RTS step (./rts.ts insRtsStep) on its slots. */
export interface InsRtsKernel {
  readonly kind: KernelKind;
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
  /** Pf from the history's packed P⁺ at src[off..off+171) (error-model.ts unpackSym). */
  loadPf(src: Float64Array, off: number): void;
  /** Pm and Φ from the history's packed forms (unpackSym, unpackPhi), then step. */
  stepPacked(pm: Float64Array, offPm: number, phi: Float64Array, offPhi: number): boolean;
}

/** The forward filter's covariance kernels on its slots. */
export interface InsFilterKernel {
  readonly kind: KernelKind;
  /** F (in), Φ and Qd (out of discretize), P, the transition accumulated since the last epoch. */
  readonly F: Float64Array;
  readonly Phi: Float64Array;
  readonly Qd: Float64Array;
  readonly P: Float64Array;
  readonly PhiAcc: Float64Array;
  /** Measurement row and the error-state estimate of the scalar updates. */
  readonly h: Float64Array;
  readonly dx: Float64Array;
  /** Φ and Qd for a step of tSec from F (error-model.ts discretize, with the model's parameters). */
  discretize(tSec: number): void;
  /** P ← Φ P Φᵀ + Qd (propagateCovariance). */
  propagate(): void;
  /** Φ_acc ← Φ Φ_acc, or Φ_acc ← Φ when `identity` (after propagate). */
  accumulate(identity: boolean): void;
  /** Scalar Joseph update with row h, innovation nu against the nominal (the estimate's hᵀδx is taken off) and variance r. */
  scalarUpdate(nu: number, r: number): number;
}

interface KernelExports {
  memory: WasmMemory;
  rtsStep(): number;
  unpackPf(): void;
  unpackStep(): number;
  discretize(t: number, phiGm: number, qGmH: number, qGmV: number): void;
  propagate(): void;
  accumulate(identity: number): void;
  scalarUpdate(nu: number, r: number): number;
  [slot: string]: unknown;
}

/** The compiled module, or null where it is missing or this runtime cannot run it (not built, or no WebAssembly SIMD here: the TypeScript kernels give the same results, slower). */
function kernelModule(): WasmModule | null {
  return wasmModule(new URL('./asm/ins-kernels.wasm', import.meta.url));
}

let defaultKind: KernelKind = 'wasm';

/** The kernels preferred when not told (tests and troubleshooting; results do not depend on it). */
export function preferInsKernels(kind: KernelKind): void {
  defaultKind = kind;
}

/** Which kernels are used by default here. */
export function insKernelKind(): KernelKind {
  return defaultKind === 'wasm' && kernelModule() ? 'wasm' : 'js';
}

function instance(): KernelExports {
  return wasmInstance<KernelExports>(kernelModule()!, 'ins-kernels');
}

function slot(ex: KernelExports, name: string, len: number): Float64Array {
  return new Float64Array(ex.memory.buffer, ((ex[name] as WasmGlobal).value as number) * 8, len);
}

const NN = NE * NE;

export function makeInsRtsKernel(prefer: KernelKind = defaultKind): InsRtsKernel {
  if (prefer === 'wasm' && kernelModule()) return wasmRts(instance());
  const Pf = new Float64Array(NN), Pm = new Float64Array(NN), Phi = new Float64Array(NN), Ps = new Float64Array(NN);
  const dNext = new Float64Array(NE), dx = new Float64Array(NE);
  const s = makeInsRtsScratch();
  // insRtsStep fails before it writes anything, as the WebAssembly step does
  const step = () => insRtsStep(Pf, Pm, Phi, Ps, dNext, dx, Ps, s);
  return {
    kind: 'js', Pf, Pm, Phi, Ps, dNext, dx, step,
    loadPf: (src, off) => unpackSym(src, off, Pf),
    stepPacked: (pm, offPm, phi, offPhi) => {
      unpackSym(pm, offPm, Pm);
      unpackPhi(phi, offPhi, Phi);
      return step();
    },
  };
}

function wasmRts(ex: KernelExports): InsRtsKernel {
  // the packed forms are copied in and unpacked by the module (a loop, not subarray + set: no view object per epoch)
  const pkF = slot(ex, 'PK_F', NE_PACKED), pkM = slot(ex, 'PK_M', NE_PACKED), pkPhi = slot(ex, 'PK_PHI', PHI_COMPACT);
  const copy = (dst: Float64Array, src: Float64Array, off: number) => {
    for (let i = 0, n = dst.length; i < n; i++) dst[i] = src[off + i]!;
  };
  return {
    kind: 'wasm',
    Pf: slot(ex, 'PF', NN),
    Pm: slot(ex, 'PM', NN),
    Phi: slot(ex, 'PHI', NN),
    Ps: slot(ex, 'PS', NN),
    dNext: slot(ex, 'DN', NE),
    dx: slot(ex, 'DX', NE),
    step: () => ex.rtsStep() === 1,
    loadPf: (src, off) => {
      copy(pkF, src, off);
      ex.unpackPf();
    },
    stepPacked: (pm, offPm, phi, offPhi) => {
      copy(pkM, pm, offPm);
      copy(pkPhi, phi, offPhi);
      return ex.unpackStep() === 1;
    },
  };
}

/** The Gauss–Markov block of Φ and Qd over tSec, as discretize computes it (exponentials in JavaScript). */
function gmStep(tSec: number, mp: ErrorModelParams): [number, number, number] {
  const q = (sigmaM: number) => Math.max(gmQ(tSec, { sigmaM, tauSec: mp.gmTauSec }), 1e-12);
  return [gmPhi(tSec, mp.gmTauSec), q(mp.gmSigmaHM), q(mp.gmSigmaVM)];
}

/** The filter kernels and the RTS kernel of one filter (one WebAssembly instance for both). */
export function makeInsKernels(mp: ErrorModelParams, prefer: KernelKind = defaultKind): { filter: InsFilterKernel; rts: InsRtsKernel } {
  if (prefer === 'wasm' && kernelModule()) {
    const ex = instance();
    const qc = slot(ex, 'F_QC', NE);
    fillQcDiag(qc, mp);
    const filter: InsFilterKernel = {
      kind: 'wasm',
      F: slot(ex, 'F_F', NN),
      Phi: slot(ex, 'F_PHI', NN),
      Qd: slot(ex, 'F_QD', NN),
      P: slot(ex, 'F_P', NN),
      PhiAcc: slot(ex, 'F_ACC', NN),
      h: slot(ex, 'F_H', NE),
      dx: slot(ex, 'F_DX', NE),
      discretize: (tSec) => {
        const [phiGm, qH, qV] = gmStep(tSec, mp);
        ex.discretize(tSec, phiGm, qH, qV);
      },
      propagate: () => ex.propagate(),
      accumulate: (identity) => ex.accumulate(identity ? 1 : 0),
      scalarUpdate: (nu, r) => ex.scalarUpdate(nu, r),
    };
    return { filter, rts: wasmRts(ex) };
  }
  const F = new Float64Array(NN), Phi = new Float64Array(NN), Qd = new Float64Array(NN), P = new Float64Array(NN), PhiAcc = new Float64Array(NN);
  const tmp = new Float64Array(NN), h = new Float64Array(NE), dx = new Float64Array(NE);
  const disc = makeDiscScratch(), nzPhi = makeNonzeros(), ss = makeScalarScratch(NE);
  const filter: InsFilterKernel = {
    kind: 'js',
    F, Phi, Qd, P, PhiAcc, h, dx,
    discretize: (tSec) => discretize(F, tSec, mp, Phi, Qd, disc),
    propagate: () => propagateCovariance(Phi, Qd, P, tmp, nzPhi),
    accumulate: (identity) => (identity ? setFromIdentityProduct(Phi, PhiAcc) : leftMultiply(Phi, PhiAcc, tmp, nzPhi)),
    scalarUpdate: (nu, r) => {
      let hx = 0;
      for (let i = 0; i < NE; i++) hx += h[i]! * dx[i]!;
      return scalarJosephUpdate(NE, h, nu - hx, r, dx, P, ss);
    },
  };
  return { filter, rts: makeInsRtsKernel('js') };
}
