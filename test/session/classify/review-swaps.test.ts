/**
 * The swap test's pattern finder and cost (src/session/classify/review-swaps.ts) on hand-made decision rows;
 * its effect on a burst during braking is in test/session/accuracy.test.ts (vehicle seed 5).
 */
import { describe, expect, it } from 'vitest';
import { applySwap, findSwaps, swapCost } from '../../../src/session/classify/review-swaps.js';

/** 1 Hz epochs, every one a gated fix; `row` gives kept (K) and rejected (r) per epoch. */
function setup(row: string) {
  const N = row.length;
  return {
    N,
    offered: new Uint8Array(N).fill(1),
    kept: Uint8Array.from(row, (c) => (c === 'K' ? 1 : 0)),
    tSec: Float64Array.from({ length: N }, (_, k) => k),
  };
}

describe('findSwaps', () => {
  it('finds a short kept run between rejected fixes, with the rejected runs beside it', () => {
    const { N, offered, kept, tSec } = setup('KKKKKKKKKKrKKKKrrrKKKKKKKKKK');
    const s = findSwaps(N, offered, kept, tSec, 5);
    expect(s).toHaveLength(1);
    expect(s[0]!.keptRun).toEqual([11, 12, 13, 14]);
    expect(s[0]!.rejected).toEqual([10, 15, 16, 17]);
    // the neighbourhood reaches the guard time beyond the outermost rejected fixes
    expect(s[0]!.window).toEqual([5, 22]);
  });

  it('ignores kept runs longer than the guard time, runs at a segment end, and rejections too far away', () => {
    expect(findSwaps(...args(setup('KKKKrKKKKKKKKrKKKK')), 5)).toHaveLength(0); // 8 kept epochs span 7 s > 5 s
    expect(findSwaps(...args(setup('KKKrrrr')), 5)).toHaveLength(0); // nothing kept after the rejections
    expect(findSwaps(...args(setup('rKKr')), 5)).toHaveLength(1);
    const far = setup('KKrKKKr');
    far.tSec[2] = -10; // the left rejection lies 12 s before the run (times need not be uniform)
    for (let k = 0; k < 2; k++) far.tSec[k] = -20 + k;
    expect(findSwaps(...args(far), 5)).toHaveLength(0);
  });

  it('skips a sandwich whose neighbourhood overlaps the previous one', () => {
    const { N, offered, kept, tSec } = setup('KKKKKKrKrKKKKKKKKKKKKK');
    // runs [7] (between 6 and 8) and then [9..] (too long): one swap
    expect(findSwaps(N, offered, kept, tSec, 5)).toHaveLength(1);
    const two = setup('KKKKKKrKrKKKKKKKKrKrKKKKKK');
    // sandwiches at 7 and 18: neighbourhoods [3, 11] and [14, 22] with a 3 s guard; with 5 s the
    // second one's [12, 24] overlaps the first one's [1, 13]
    expect(findSwaps(two.N, two.offered, two.kept, two.tSec, 3)).toHaveLength(2);
    expect(findSwaps(two.N, two.offered, two.kept, two.tSec, 5)).toHaveLength(1);
  });
});

function args(x: ReturnType<typeof setup>): [number, Uint8Array, Uint8Array, Float64Array] {
  return [x.N, x.offered, x.kept, x.tSec];
}

describe('swapCost and applySwap', () => {
  it('costs kept fixes their statistic and rejected ones the threshold; a swap and its undo restore the row', () => {
    const { N, offered, kept, tSec } = setup('KKrKKrKK');
    const [s] = findSwaps(N, offered, kept, tSec, 2);
    const T = Float64Array.from([1, 1, 30, 2, 3, 25, 1, 1]);
    const thr = new Float64Array(N).fill(10);
    // window [0, 7]: kept 1+1+2+3+1+1 = 9, rejected 2 × 10
    expect(swapCost(s!, offered, kept, T, thr)).toBe(29);
    const before = kept.slice();
    applySwap(s!, kept, false);
    expect(Array.from(kept)).toEqual([1, 1, 1, 0, 0, 1, 1, 1]);
    applySwap(s!, kept, true);
    expect(Array.from(kept)).toEqual(Array.from(before));
  });
});
