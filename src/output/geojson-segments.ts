/**
 * The track segments of a session as both GeoJSON writers see them: the rows of each segment and
 * the statistics of its feature's properties (epochs, bridged and flagged epochs, length, mean sd).
 */
import { STATUS, type SessionResult } from '../session/result/result.js';

/** Segments of the track (segment numbers run 0 … count − 1 in row order). */
export function segmentCount(r: SessionResult): number {
  return r.N > 0 ? r.segment[r.N - 1]! + 1 : 0;
}

export interface SegmentStats {
  /** One past the segment's last row. */
  end: number;
  /** Sum over its rows of the horizontal sd (m). */
  sumSd: number;
  bridged: number;
  flagged: number;
  /** Along-track length in the local frame (m). */
  lengthM: number;
}

/** The rows of segment `s` from row `j0` on, with their statistics. */
export function segmentStats(r: SessionResult, s: number, j0: number): SegmentStats {
  const { N, segment, status, sdEnu, posEnu } = r;
  let sumSd = 0, bridged = 0, flagged = 0, lengthM = 0;
  let j = j0;
  while (j < N && segment[j] === s) {
    sumSd += Math.hypot(sdEnu[0][j]!, sdEnu[1][j]!);
    if (status[j] === STATUS.bridged) bridged++;
    if (status[j] === STATUS.outlier || status[j] === STATUS.userRejected) flagged++;
    if (j > j0) lengthM += Math.hypot(posEnu[0][j]! - posEnu[0][j - 1]!, posEnu[1][j]! - posEnu[1][j - 1]!);
    j++;
  }
  return { end: j, sumSd, bridged, flagged, lengthM };
}
