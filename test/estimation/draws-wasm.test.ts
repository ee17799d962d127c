/**
 * The simulation smoother's draw step in WebAssembly (src/estimation/draws-wasm.ts,
 * src/estimation/asm/draws-kernel.ts) against the TypeScript loop, with Object.is: its normal
 * generator against GaussianSource.normal (the ziggurat of Marsaglia & Tsang 2000 on mulberry32,
 * the rare slow path included) over seeded streams, and whole posterior draws (sampleBackward) of
 * processed sessions with heights and without, several segments, east and north sharing their gain:
 * every position of every draw at every epoch the same bits. A model with four states (constant
 * acceleration) keeps the TypeScript loop. survey.test.ts and posterior.test.ts run the module too
 * (it is the default).
 */
import { afterEach, describe, expect, it } from 'vitest';
import { DRAWS_KERNEL, drawsKernel } from '../../src/estimation/draws-wasm.js';
import { GaussianSource, seedState } from '../../src/estimation/gaussian-rng.js';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { posteriorOf, sampleBackward } from '../../src/session/survey/posterior.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

afterEach(() => {
  DRAWS_KERNEL.prefer = 'wasm';
});

/** Every visited position, in visiting order, under the kernel or the TypeScript loop. */
function allDraws(post: NonNullable<ReturnType<typeof posteriorOf>>, D: number, seed: number, prefer: 'wasm' | 'js'): Float64Array {
  DRAWS_KERNEL.prefer = prefer;
  const out = new Float64Array(post.N * post.nAx * D);
  let at = 0;
  sampleBackward(post, D, seed, (_j, _s, pos) => {
    for (let a = 0; a < post.nAx; a++) {
      out.set(pos[a]!, at);
      at += D;
    }
  });
  DRAWS_KERNEL.prefer = 'wasm';
  return out;
}

function firstDifference(a: Float64Array, b: Float64Array): number {
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return i;
  return -1;
}

describe('the draw kernel module', () => {
  it('is built and loads (a fallback to the TypeScript loop would fail this)', () => {
    expect(drawsKernel()).not.toBeNull();
  });

  it('its normals are GaussianSource’s bit for bit (4 seeds × 1,000,000, the slow path included)', () => {
    const k = drawsKernel()!;
    for (const seed of [0, 1, 20261203, 0xffffffff]) {
      const g = new GaussianSource(seed);
      k.ex.setState(seedState(seed));
      let bad = 0, tails = 0;
      for (let i = 0; i < 1_000_000; i++) {
        const a = g.normal(), b = k.ex.normal();
        if (!Object.is(a, b)) bad++;
        if (Math.abs(a) > 3.442619855899) tails++;
      }
      expect(bad, `seed ${seed}`).toBe(0);
      // the tail beyond R (the slowest path) was exercised: about 0.06% of a million
      expect(tails).toBeGreaterThan(100);
    }
  });
});

describe('whole posterior draws: the kernel and the TypeScript loop give the same bits', () => {
  const cfg = loadConfig();
  const cases = [
    ['walk with heights, gaps (three segments)', simulate(defaultSpec('walk', 3, { durationSec: 900 }))],
    ['vehicle (two segments)', simulate(defaultSpec('vehicle', 5, { durationSec: 1200 }))],
  ] as const;
  for (const [label, sc] of cases)
    it(label, () => {
      const r = processSession(readFixCsv(scenarioCsv(sc), 'd.csv', cfg), cfg, 'd');
      const post = posteriorOf(r)!;
      expect(post.segments.length).toBeGreaterThan(1);
      const w = allDraws(post, 37, 11, 'wasm'), j = allDraws(post, 37, 11, 'js');
      expect(firstDifference(w, j)).toBe(-1);
      // and a different seed gives different draws (the comparison can fail)
      expect(firstDifference(allDraws(post, 37, 12, 'wasm'), j)).toBeGreaterThanOrEqual(0);
    });

  it('without heights (two axes sharing one gain)', () => {
    const sc = simulate(defaultSpec('vehicle', 6, { durationSec: 600 }));
    const csv = scenarioCsv(sc).split('\n').map((l) => l.split(',').filter((_, i) => i !== 3).join(',')).join('\n');
    const r = processSession(readFixCsv(csv, 'h.csv', cfg), cfg, 'h');
    const post = posteriorOf(r)!;
    expect(post.nAx).toBe(2);
    expect(firstDifference(allDraws(post, 20, 3, 'wasm'), allDraws(post, 20, 3, 'js'))).toBe(-1);
  });

  it('constant acceleration (four states) keeps the TypeScript loop, with the same draws either way', () => {
    const ca = loadConfig({ overrides: { model: { motion: 'ca' } } });
    const sc = simulate(defaultSpec('vehicle', 7, { durationSec: 300 }));
    const r = processSession(readFixCsv(scenarioCsv(sc), 'c.csv', ca), ca, 'c');
    const post = posteriorOf(r)!;
    expect(post.segments[0]!.models[0]!.n).toBe(4);
    expect(firstDifference(allDraws(post, 10, 5, 'wasm'), allDraws(post, 10, 5, 'js'))).toBe(-1);
  });
});
