/**
 * Choosing the epochs drawn in the report's plots. Long sessions are thinned to about `maxPoints`
 * epochs by buckets of equal epoch count (each bucket keeps its first epoch and the epochs where the
 * horizontal sd and the test statistic peak, so spikes survive thinning: the "min–max" style of
 * decimation, common practice for line charts); every epoch that is not a plain kept fix (flagged,
 * user decision, bridged-span ends) and the first and last epoch of every segment are always kept,
 * so no flagged fix is ever hidden by thinning.
 */
import { STATUS, type SessionResult } from '../../session/result/result.js';

/** Sorted, distinct epoch indices to draw. */
export function plotEpochs(r: SessionResult, maxPoints: number): Int32Array {
  const N = r.N;
  const keep = new Uint8Array(N);
  for (let j = 0; j < N; j++) {
    const st = r.status[j]!;
    if (st !== STATUS.kept && st !== STATUS.bridged) keep[j] = 1;
    // first/last epoch of a segment, and both ends of every bridged run
    const segStart = j === 0 || r.segment[j - 1] !== r.segment[j];
    const segEnd = j === N - 1 || r.segment[j + 1] !== r.segment[j];
    if (segStart || segEnd) keep[j] = 1;
    if (st === STATUS.bridged && (segStart || segEnd || r.status[j - 1] !== STATUS.bridged || r.status[j + 1] !== STATUS.bridged)) keep[j] = 1;
  }
  if (N <= maxPoints) keep.fill(1);
  else {
    // three kept epochs a bucket at most (first, peak sd, peak statistic)
    const bucket = Math.max(1, Math.ceil((3 * N) / maxPoints));
    for (let b0 = 0; b0 < N; b0 += bucket) {
      const b1 = Math.min(N, b0 + bucket);
      keep[b0] = 1;
      let jSd = -1, jNis = -1, maxSd = -Infinity, maxNis = -Infinity;
      for (let j = b0; j < b1; j++) {
        const sd = r.sdEnu[0][j]! ** 2 + r.sdEnu[1][j]! ** 2;
        if (sd > maxSd) {
          maxSd = sd;
          jSd = j;
        }
        const q = r.nis[j]!;
        if (Number.isFinite(q) && q > maxNis) {
          maxNis = q;
          jNis = j;
        }
      }
      if (jSd >= 0) keep[jSd] = 1;
      if (jNis >= 0) keep[jNis] = 1;
    }
  }
  let count = 0;
  for (let j = 0; j < N; j++) count += keep[j]!;
  const idx = new Int32Array(count);
  let k = 0;
  for (let j = 0; j < N; j++) if (keep[j]) idx[k++] = j;
  return idx;
}

/** Every `step`-th of the given indices (at least the first), e.g. epochs for the ellipses on the track plot. */
export function everyNth(idx: Int32Array, count: number): Int32Array {
  if (idx.length <= count) return idx.slice();
  const step = idx.length / count;
  const out = new Int32Array(count);
  for (let i = 0; i < count; i++) out[i] = idx[Math.floor(i * step)]!;
  return out;
}
