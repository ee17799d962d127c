/**
 * Snapshots of the forward filter: every SNAPSHOT_EVERY epochs the pass keeps its whole state
 * (./state.ts InsState, the detector's ring included, and its counters), so that a later pass whose
 * inputs first differ after a snapshot can start there (InsResume) and reach the same results.
 */
import { copyInsStats, type InsStats } from './stats.js';
import type { InsState } from './state.js';

/** Epochs between the forward pass's snapshots (one every SNAPSHOT_EVERY epochs: ~11 kB each, ~40 bytes an epoch). */
export const SNAPSHOT_EVERY = 256;

/**
 * The forward filter's whole state after an IMU sample (`sample`: how many samples the engine had
 * been given, skipped ones included) during whose processing epoch `epoch` was processed. A later
 * pass whose inputs equal this pass's up to an epoch after `epoch` reaches exactly this state there,
 * so it can start from it instead of from the beginning of the log (resume).
 */
export interface InsSnapshot {
  epoch: number;
  sample: number;
  ke: number;
  tNav: number;
  sumDt: number;
  zaruDt: number;
  prevT: number;
  runCount: number;
  runStartT: number;
  phiAccIdentity: boolean;
  ringCap: number;
  ringHead: number;
  ringCount: number;
  /** nav, P, PhiAcc, sumC, sumF, zaruSum, prevF, prevW, ring: concatenated. */
  arrays: Float64Array;
  stats: InsStats;
}

/** The array part of the state, in the order a snapshot holds it (InsSnapshot.arrays). */
function stateArrays(s: InsState): Float64Array[] {
  const parts = [s.nav, s.P, s.PhiAcc, s.sumC, s.sumF, s.zaruSum, s.prevF, s.prevW];
  if (s.det.ring) parts.push(s.det.ring);
  return parts;
}

/** A copy of the state after `sample` samples, at epoch `epoch` (`ke`: the next epoch to process). */
export function takeSnapshot(s: InsState, epoch: number, sample: number, ke: number, stats: InsStats): InsSnapshot {
  const parts = stateArrays(s);
  const arrays = new Float64Array(parts.reduce((a, v) => a + v.length, 0));
  let o = 0;
  for (const v of parts) {
    arrays.set(v, o);
    o += v.length;
  }
  const d = s.det;
  return {
    epoch, sample, ke, tNav: s.tNav, sumDt: s.sumDt, zaruDt: s.zaruDt, prevT: s.prevT,
    runCount: s.runCount, runStartT: s.runStartT, phiAccIdentity: s.phiAccIdentity,
    ringCap: d.cap, ringHead: d.head, ringCount: d.count, arrays, stats: copyInsStats(stats),
  };
}

/** The state of the snapshot written into `s` (its arrays in place; the detector's ring allocated anew). */
export function restoreSnapshot(s: InsState, sn: InsSnapshot): void {
  s.tNav = sn.tNav;
  s.sumDt = sn.sumDt;
  s.zaruDt = sn.zaruDt;
  s.prevT = sn.prevT;
  s.runCount = sn.runCount;
  s.runStartT = sn.runStartT;
  s.phiAccIdentity = sn.phiAccIdentity;
  const d = s.det;
  d.cap = sn.ringCap;
  d.head = sn.ringHead;
  d.count = sn.ringCount;
  d.ring = sn.ringCap > 0 ? new Float64Array(6 * sn.ringCap) : null;
  let o = 0;
  for (const v of stateArrays(s)) {
    if (o + v.length > sn.arrays.length) throw new Error('restoreSnapshot: snapshot of another layout (too short)');
    v.set(sn.arrays.subarray(o, o + v.length));
    o += v.length;
  }
  if (o !== sn.arrays.length) throw new Error('restoreSnapshot: snapshot of another layout');
}

/** The latest snapshot before epoch k (for a next pass whose inputs first differ at k), if any. */
export function latestSnapshotBefore(snapshots: readonly InsSnapshot[], k: number): InsSnapshot | undefined {
  let best: InsSnapshot | undefined;
  for (const x of snapshots) if (x.epoch < k && (!best || x.epoch > best.epoch)) best = x;
  return best;
}
