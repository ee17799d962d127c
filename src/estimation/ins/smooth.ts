/**
 * The backward pass of the IMU smoother: the error-state RTS step (./rts.ts) over every chain of
 * covered epochs (a chain ends at an uncovered epoch and restarts at a chain start: alignment or a new
 * segment), each smoothed state turned into the epoch's products (./products.ts).
 */
import { NAV_LEN } from '../../models/ins/mechanization.js';
import { applyCorrection } from './correction.js';
import { NE, NE_PACKED, PHI_COMPACT } from './error-model.js';
import type { InsHistory } from './history.js';
import type { InsRtsKernel } from './kernels.js';
import { extractProducts, makeExtractScratch, type InsProducts } from './products.js';
import type { InsStats } from './stats.js';

/** Smooth every chain of `h` backward with the RTS kernel `rk`, writing the products of the covered epochs. */
export function insSmoothChains(h: InsHistory, rk: InsRtsKernel, leverArmBody: [number, number, number], pr: InsProducts, stats: InsStats): void {
  const N = h.N;
  if (pr.covered.length !== N) throw new Error(`insSmoothChains: products of ${pr.covered.length} epochs for a history of ${N}`);
  // the step's slots (WebAssembly memory where the kernel loads: ./kernels.ts)
  const { Pf, Ps, dNext } = rk;
  const dxs = rk.dx;
  const navS = new Float64Array(NAV_LEN);
  const ex = makeExtractScratch();
  let linked = false;
  for (let k = N - 1; k >= 0; k--) {
    if (!pr.covered[k]) {
      linked = false;
      continue;
    }
    rk.loadPf(h.pPlus, k * NE_PACKED);
    if (!linked) {
      Ps.set(Pf);
      dxs.fill(0);
    } else {
      for (let i = 0; i < NE; i++) dNext[i] = dxs[i]! + h.dx[(k + 1) * NE + i]!;
      if (!rk.stepPacked(h.pMinus, (k + 1) * NE_PACKED, h.phi, (k + 1) * PHI_COMPACT)) {
        // not positive definite: keep the filtered estimate here and restart the chain
        stats.smootherFallbacks++;
        Ps.set(Pf);
        dxs.fill(0);
      }
    }
    navS.set(h.nav.subarray(k * NAV_LEN, (k + 1) * NAV_LEN));
    applyCorrection(navS, dxs);
    extractProducts(k, navS, Ps, leverArmBody, pr, ex);
    linked = !h.chainStart[k];
  }
}
