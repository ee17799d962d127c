/**
 * The per-epoch history of one forward pass, what the smoother (./smooth.ts) reads: nominal state,
 * packed P⁺ and P⁻, compact Φ (accumulated since the previous epoch), the applied correction and the
 * chain starts — about 4 kB an epoch, nothing per IMU sample (./error-model.ts packSym, packPhi).
 * Once a pass has smoothed, the next pass of the same epoch grid reuses it (releaseHistory): every
 * entry the smoother reads is written again by the new pass (chain starts are cleared), so results do
 * not depend on it, and the memory is written in place instead of freshly allocated and touched again.
 */
import { NAV_LEN } from '../../models/ins/mechanization.js';
import { checkSize } from './check-size.js';
import { NE, NE_PACKED, NE_SHAPE, packPhi, packSym, PHI_COMPACT } from './error-model.js';

export interface InsHistory {
  N: number;
  nav: Float64Array;
  pPlus: Float64Array;
  pMinus: Float64Array;
  phi: Float64Array;
  dx: Float64Array;
  chainStart: Uint8Array;
}

export function newInsHistory(N: number): InsHistory {
  return {
    N,
    nav: new Float64Array(N * NAV_LEN),
    pPlus: new Float64Array(N * NE_PACKED),
    pMinus: new Float64Array(N * NE_PACKED),
    phi: new Float64Array(N * PHI_COMPACT),
    dx: new Float64Array(N * NE),
    chainStart: new Uint8Array(N),
  };
}

/**
 * The history a pass of N epochs writes: `reuse` (a released history of the same grid) with its chain
 * starts cleared from `keepUpTo + 1` on (a resumed pass keeps the entries up to its snapshot's epoch:
 * the same values it would write), or a new one.
 */
export function historyForPass(N: number, reuse: InsHistory | undefined, keepUpTo = -1): InsHistory {
  if (reuse && reuse.N === N) {
    reuse.chainStart.fill(0, keepUpTo + 1);
    return reuse;
  }
  return newInsHistory(N);
}

/** Store epoch k's prediction P⁻ and the transition Φ accumulated since the previous epoch. */
export function storePrediction(h: InsHistory, k: number, P: Float64Array, PhiAcc: Float64Array): void {
  checkSize('storePrediction', 'P', P, NE * NE, NE_SHAPE);
  checkSize('storePrediction', 'PhiAcc', PhiAcc, NE * NE, NE_SHAPE);
  packSym(P, h.pMinus, k * NE_PACKED);
  packPhi(PhiAcc, h.phi, k * PHI_COMPACT);
}

/** Store epoch k's corrected nominal state, the correction applied and P⁺. */
export function storeFiltered(h: InsHistory, k: number, nav: Float64Array, dx: Float64Array, P: Float64Array): void {
  checkSize('storeFiltered', 'P', P, NE * NE, NE_SHAPE);
  h.dx.set(dx, k * NE);
  h.nav.set(nav, k * NAV_LEN);
  packSym(P, h.pPlus, k * NE_PACKED);
}
