/**
 * selectKth (src/estimation/select.ts) against the typed-array sort it replaces: the same value bit
 * for bit (Object.is, so −0/+0 and NaN count) for every k, on seeded random arrays with ties, both
 * zeros, NaN, sorted and reversed input, and on sub-ranges; and a second selection on the permuted
 * array. Seeded; no timing.
 */
import { describe, expect, it } from 'vitest';
import { selectKth } from '../../src/estimation/select.js';

function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

function sample(r: () => number, n: number, kind: number): Float64Array {
  const a = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const u = r();
    if (kind === 0) a[i] = u * 100 - 50;
    else if (kind === 1) a[i] = Math.floor(u * 5) - 2; // many ties, zeros
    else if (kind === 2) a[i] = u < 0.2 ? -0 : u < 0.4 ? 0 : u < 0.5 ? NaN : u < 0.7 ? -1 : 1;
    else if (kind === 3) a[i] = i; // sorted
    else if (kind === 4) a[i] = n - i; // reversed
    else a[i] = u < 0.05 ? NaN : u < 0.1 ? Infinity : u < 0.15 ? -Infinity : (u - 0.5) * 1e-300;
  }
  return a;
}

describe('selectKth: the k-th of the typed-array sort', () => {
  it('every k of seeded arrays of six kinds and sizes 1–300', () => {
    const r = rng(7);
    let bad = 0, checked = 0;
    for (let kind = 0; kind < 6; kind++)
      for (const n of [1, 2, 3, 5, 16, 17, 33, 100, 300]) {
        const a = sample(r, n, kind);
        const sorted = a.slice().sort();
        for (let k = 0; k < n; k++) {
          const v = selectKth(a.slice(), k);
          checked++;
          if (!Object.is(v, sorted[k])) bad++;
        }
      }
    expect(checked).toBe(6 * 477);
    expect(bad).toBe(0);
  });

  it('large arrays (20,000 values): medians and quantiles, and a second selection on the permuted array', () => {
    const r = rng(11);
    for (let kind = 0; kind < 6; kind++) {
      const a = sample(r, 20_000, kind);
      const sorted = a.slice().sort();
      const w = a.slice();
      for (const q of [0.5, 0.05, 0.95, 0, 1]) {
        const k = Math.floor(q * (a.length - 1));
        expect(Object.is(selectKth(w, k), sorted[k])).toBe(true);
      }
    }
  });

  it('sub-ranges [lo, hi) as subarray(lo, hi).sort()[k − lo], the rest untouched', () => {
    const r = rng(3);
    for (let t = 0; t < 200; t++) {
      const a = sample(r, 60, t % 6);
      const lo = Math.floor(r() * 30), hi = lo + 1 + Math.floor(r() * 29);
      const k = lo + Math.floor(r() * (hi - lo));
      const w = a.slice();
      const v = selectKth(w, k, lo, hi);
      expect(Object.is(v, a.slice(lo, hi).sort()[k - lo])).toBe(true);
      for (let i = 0; i < 60; i++) if (i < lo || i >= hi) expect(Object.is(w[i], a[i])).toBe(true);
    }
  });

  it('rejects k outside the range', () => {
    expect(() => selectKth(new Float64Array(3), 3)).toThrow(RangeError);
  });
});
