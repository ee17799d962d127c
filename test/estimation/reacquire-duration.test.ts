/**
 * Re-acquisition after a run of gate rejections that has lasted a duration, not only a count of
 * fixes: at 10 Hz a multipath burst of 3 s (30 fixes) must stay rejected (the track is not lost, the
 * burst ends), while a step of the fix error that persists (12 s) must still be re-acquired. With
 * reacquireAfterSec 0 the count alone decides (the filter re-acquires onto the burst). The burst is
 * added to a seeded simulated vehicle log (src/simulate), 60 m east and 45 m north.
 */
import { describe, expect, it } from 'vitest';
import { forwardFilter, type SegmentData } from '../../src/estimation/track-filter.js';
import { segmentCase } from '../helpers/history-compare.js';

/** The segment with the fixes from a third of the way in, for durSec, displaced by (60, −45) m. */
function displaced(d: SegmentData, durSec: number): { data: SegmentData; first: number; last: number } {
  const z = d.z.map((a) => a.slice());
  const first = Math.floor(d.N / 3);
  const t0 = d.tSec[first]!;
  let last = first;
  for (let k = first; k < d.N && d.tSec[k]! - t0 < durSec; k++) {
    if (!Number.isFinite(z[0]![k]!)) continue;
    z[0]![k] += 60;
    z[1]![k] -= 45;
    last = k;
  }
  return { data: { ...d, z }, first, last };
}

describe('re-acquisition waits for a duration, not only a count of fixes', () => {
  const c = segmentCase('vehicle', 6, 10);
  it.each([
    // [burst s, reacquireAfterSec, re-acquires inside the displaced run]
    [3, 5.5, false],
    [3, 0, true],
    [12, 5.5, true],
    [12, 0, true],
  ])('a %f s displacement at 10 Hz with reacquireAfterSec %f: re-acquires %s', (durSec, minSec, expected) => {
    const { data, first, last } = displaced(c.data, durSec);
    const h = forwardFilter(c.models, data, { ...c.opt, reacquireAfterSec: minSec });
    const inside = h.reacquired.filter((k) => k >= first && k <= last);
    expect(inside.length > 0).toBe(expected);
    if (!expected) {
      // every displaced fix rejected by the forward gate (the burst did not become the track)
      let accepted = 0;
      for (let k = first; k <= last; k++) if (data.use[k] === 1) accepted += h.accepted[k]!;
      expect(accepted).toBe(0);
    }
  });
});
