/**
 * The non-holonomic constraint of the IMU-aided filter at an epoch where the vehicle is not standing:
 * a road vehicle neither slides sideways nor leaves the road surface, so its body-frame lateral and
 * vertical velocities are zero within a small noise.
 *   v^b = C_bn v^n,  z = 0 = v^b_{y,z} + w,  δv^b = Ĉ_bn δv + Ĉ_bn [v̂×] φ
 * Sources: Groves (2013) §15.3 (motion constraints); Shin (2005) §5 (NHC) — from memory; rows in
 * ./measurements.ts.
 */
import { NAV_V } from '../../models/ins/mechanization.js';
import { bodyVelocityRow } from './measurements.js';
import { checkInsRecords, type InsScratch, type InsState } from './state.js';

/** Two scalar updates (body y, then z) with variance nhcSigmaMps². Needs w.C = Ĉ_nb at the epoch. */
export function insNonHolonomicUpdate(s: InsState, w: InsScratch, nhcSigmaMps: number): void {
  checkInsRecords('insNonHolonomicUpdate', s, w);
  const kf = w.kf;
  const r = nhcSigmaMps ** 2;
  for (let b = 1; b < 3; b++) {
    const vb = bodyVelocityRow(b, w.C, s.nav, NAV_V, kf.h);
    kf.scalarUpdate(-vb, r);
  }
}
