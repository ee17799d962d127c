/**
 * flagHeightJumps (the neighbours' range rules out a jump before any median is
 * taken) against its previous form, kept verbatim in test/helpers/reference-height-jumps.ts: the
 * validity flags and the reasons, element for element. Cases: seeded heights with single spikes,
 * bursts of bad heights, spikes right at the limit (slack plus climb rate over the span, in both
 * directions, ±1 cm), missing heights, invalid neighbours, irregular times and gaps, ±0 heights,
 * and the first and last fixes. Seeded.
 */
import { describe, expect, it } from 'vitest';
import type { FixSeries } from '../../src/input/fix-series.js';
import { HEIGHT_JUMP_RATE_MPS, HEIGHT_JUMP_SLACK_M, flagHeightJumps } from '../../src/session/valid-fixes.js';
import { refFlagHeightJumps } from '../helpers/reference-height-jumps.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

function series(tSec: Float64Array, heightM: Float64Array): FixSeries {
  const n = tSec.length;
  return { file: 't.csv', n, tSec, latDeg: new Float64Array(n), lonDeg: new Float64Array(n), heightM, quality: {}, line: new Uint32Array(n), warnings: [], meta: {} };
}

function compare(s: FixSeries, valid0: Uint8Array): number {
  const va = valid0.slice(), vb = valid0.slice();
  const wa: string[] = new Array(s.n).fill(''), wb: string[] = new Array(s.n).fill('');
  flagHeightJumps(s, va, wa);
  refFlagHeightJumps(s, vb, wb);
  expect(Array.from(va)).toEqual(Array.from(vb));
  expect(wa).toEqual(wb);
  let flagged = 0;
  for (let i = 0; i < s.n; i++) if (valid0[i] && !va[i]) flagged++;
  return flagged;
}

describe('flagHeightJumps against its reference form', () => {
  it.each([1, 2, 3, 4, 5, 6])('seeded log %i: the same flags and reasons', (seed) => {
    const r = rng(seed * 104729);
    const n = 20000;
    const t = new Float64Array(n), h = new Float64Array(n);
    const valid = new Uint8Array(n).fill(1);
    let time = 1.7e9 + seed, height = 100;
    for (let i = 0; i < n; i++) {
      time += r() < 0.01 ? 5 + 60 * r() : seed % 2 ? 0.1 : 1;
      height += (r() - 0.5) * (seed % 3 === 0 ? 20 : 2);
      t[i] = time;
      h[i] = height + (r() - 0.5) * 5;
    }
    for (let i = 0; i < n; i++) {
      const x = r();
      if (x < 0.01) h[i] = h[i]! + (r() < 0.5 ? -1 : 1) * (200 + 2000 * r()); // a spike
      else if (x < 0.013) for (let j = i; j < Math.min(n, i + 2 + Math.floor(8 * r())); j++) h[j] = h[j]! + 500; // a burst
      else if (x < 0.03) h[i] = NaN;
      else if (x < 0.05) valid[i] = 0;
      else if (x < 0.052) h[i] = r() < 0.5 ? 0 : -0;
    }
    // spikes at the limit: the median of the neighbours ± (slack + rate · span) ± 1 cm, ± 1 ulp
    for (let i = 50; i < n - 50; i += 97) {
      const nbs: number[] = [];
      let span = 0;
      for (let d = 1; d <= 5; d++)
        for (const j of [i - d, i + d]) {
          nbs.push(h[j]!);
          span = Math.max(span, Math.abs(t[j]! - t[i]!));
        }
      if (nbs.some((v) => !Number.isFinite(v))) continue;
      nbs.sort((a, b) => a - b);
      const lim = HEIGHT_JUMP_SLACK_M + HEIGHT_JUMP_RATE_MPS * span;
      const e = [0, 0.01, -0.01, 1e-9][i % 4]!;
      h[i] = nbs[5]! + ((i >> 2) % 2 ? 1 : -1) * (lim + e);
    }
    const s = series(t, h);
    expect(compare(s, valid)).toBeGreaterThan(100);
  });

  it('short logs, the edges, no height and all-missing heights', () => {
    const r = rng(99);
    for (let n = 0; n < 14; n++) {
      const t = Float64Array.from({ length: n }, (_, i) => i);
      const h = Float64Array.from({ length: n }, () => (r() < 0.3 ? 5000 : 10 * r()));
      compare(series(t, h), new Uint8Array(n).fill(1));
      compare(series(t, h.map(() => NaN)), new Uint8Array(n).fill(1));
    }
    const t = Float64Array.from({ length: 10 }, (_, i) => i);
    const s = { ...series(t, new Float64Array(10)), heightM: null };
    const v = new Uint8Array(10).fill(1);
    flagHeightJumps(s, v, []);
    expect(Array.from(v)).toEqual(new Array(10).fill(1));
  });
});
