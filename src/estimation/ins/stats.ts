/** The IMU-aided filter's counters (per pass) and its optional wall-clock accounting. */

export interface InsStats {
  samples: number;
  samplesSkipped: number;
  imuGaps: number;
  firstSampleSec: number;
  lastSampleSec: number;
  alignments: Array<{ epoch: number; tSec: number; static: boolean; rollDeg: number; pitchDeg: number; headingDeg: number; headingSigmaDeg: number }>;
  zuptEpochs: number;
  nhcEpochs: number;
  gnssRejected: number;
  reacquisitions: number;
  smootherFallbacks: number;
}

export function newInsStats(): InsStats {
  return { samples: 0, samplesSkipped: 0, imuGaps: 0, firstSampleSec: NaN, lastSampleSec: NaN, alignments: [], zuptEpochs: 0, nhcEpochs: 0, gnssRejected: 0, reacquisitions: 0, smootherFallbacks: 0 };
}

/** A copy that shares nothing mutable with `st` (snapshots). */
export function copyInsStats(st: InsStats): InsStats {
  return { ...st, alignments: st.alignments.slice() };
}

/**
 * Optional wall-clock accounting of the filter (for `npm run bench`), in ms summed over calls:
 * covariance propagation, the epoch's updates (everything of processEpoch but its propagation) and
 * the backward pass. Callers that pass none pay one branch per epoch.
 */
export interface InsTimings {
  propagateMs: number;
  updateMs: number;
  smoothMs: number;
}

export function newInsTimings(): InsTimings {
  return { propagateMs: 0, updateMs: 0, smoothMs: 0 };
}
