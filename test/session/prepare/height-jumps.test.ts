/**
 * flagHeightJumps against its definition, written naively below: fixes are judged in order; a
 * valid fix with a finite height is judged on its nearest valid neighbours with finite heights
 * (at most ten, within fifteen positions, the earlier first at equal distance; at least four), and
 * is an impossible jump when |h − median of their heights| (the upper median for an even count)
 * exceeds the slack plus the fastest climb rate times the span to the farthest of them; a fix so
 * flagged no longer counts as a neighbour of later ones. Flags and reasons element for element.
 * Cases: seeded heights with single spikes, bursts of bad heights, spikes right at the limit
 * (slack plus climb rate over the span, in both directions, ±1 cm), missing heights, invalid
 * neighbours, irregular times and gaps, ±0 heights, and the first and last fixes; and worked
 * values at the limit. Seeded.
 */
import { describe, expect, it } from 'vitest';
import type { FixSeries } from '../../../src/input/fix-series.js';
import { HEIGHT_JUMP_RATE_MPS, HEIGHT_JUMP_SLACK_M, flagHeightJumps } from '../../../src/session/prepare/valid-fixes.js';

/** The definition, one fix at a time: sorts and filters, no shortcut. */
function definitionFlags(s: FixSeries, valid: Uint8Array, why: string[]): void {
  const h = s.heightM;
  if (!h) return;
  const usable = (j: number) => valid[j] === 1 && Number.isFinite(h[j]!);
  for (let i = 0; i < s.n; i++) {
    if (!usable(i)) continue;
    const near: number[] = [];
    for (let j = Math.max(0, i - 15); j <= Math.min(s.n - 1, i + 15); j++) if (j !== i && usable(j)) near.push(j);
    near.sort((a, b) => Math.abs(a - i) - Math.abs(b - i) || a - b);
    const nbs = near.slice(0, 10);
    if (nbs.length < 4) continue;
    const heights = nbs.map((j) => h[j]!).sort((a, b) => a - b);
    const median = heights[Math.floor(heights.length / 2)]!;
    const span = Math.max(...nbs.map((j) => Math.abs(s.tSec[j]! - s.tSec[i]!)));
    const jump = Math.abs(h[i]! - median);
    if (jump > HEIGHT_JUMP_SLACK_M + HEIGHT_JUMP_RATE_MPS * span) {
      valid[i] = 0;
      why[i] = `impossible height jump: ${jump.toFixed(0)} m from its neighbours within ${span.toFixed(1)} s`;
    }
  }
}

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
  definitionFlags(s, vb, wb);
  expect(Array.from(va)).toEqual(Array.from(vb));
  expect(wa).toEqual(wb);
  let flagged = 0;
  for (let i = 0; i < s.n; i++) if (valid0[i] && !va[i]) flagged++;
  return flagged;
}

describe('flagHeightJumps flags the fixes its definition flags', () => {
  it('worked values: eleven level fixes a second apart, the middle one raised to the limit and 1 cm past it', () => {
    const t = Float64Array.from({ length: 11 }, (_, i) => i);
    // five neighbours each side, the farthest 5 s away: limit 150 m + 30 m/s · 5 s = 300 m
    const at = (dh: number) => {
      const h = new Float64Array(11).fill(100);
      h[5] = 100 + dh;
      const v = new Uint8Array(11).fill(1);
      const why: string[] = new Array(11).fill('');
      flagHeightJumps(series(t, h), v, why);
      return { v: Array.from(v), why: why[5] };
    };
    expect(at(300).v).toEqual(new Array(11).fill(1));
    expect(at(-300).v).toEqual(new Array(11).fill(1));
    const past = at(300.01);
    expect(past.v).toEqual([1, 1, 1, 1, 1, 0, 1, 1, 1, 1, 1]);
    expect(past.why).toBe('impossible height jump: 300 m from its neighbours within 5.0 s');
    expect(at(-300.01).v[5]).toBe(0);
  });
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
