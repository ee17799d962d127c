/**
 * Per-fix white-noise factors under the quality columns' exponents (src/session/prepare/fix-noise.ts):
 * factor = (hdop / median)^αₕ · (median sats / sats)^(αₛ/2) · fix-quality ratio. At αₕ = αₛ = 1 the
 * factors are the proportional rule's own arrays; at 0 the columns are ignored; between, the
 * closed form. Seeded rows.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { factorsWithExponents, fixSigmaFactors } from '../../../src/session/prepare/fix-noise.js';

/** Park–Miller minimal standard generator (seeded). */
function rng(seed: number): () => number {
  let s = seed;
  return () => (s = (s * 48271) % 2147483647) / 2147483647;
}

function series(withVdop: boolean, seed = 7) {
  const r = rng(seed);
  const rows = [withVdop ? 'time,lat,lon,height,hdop,vdop,sats' : 'time,lat,lon,height,hdop,sats'];
  for (let i = 0; i < 200; i++) {
    const t = new Date(Date.UTC(2026, 4, 1, 8, 0, i)).toISOString();
    const hdop = (0.6 + 2.4 * r()).toFixed(1);
    const vdop = (0.9 + 3 * r()).toFixed(1);
    const sats = 4 + Math.floor(10 * r());
    rows.push(`${t},${(47 + 1e-5 * i).toFixed(7)},8.5,400,${hdop},${withVdop ? `${vdop},` : ''}${sats}`);
  }
  return readFixCsv(rows.join('\n') + '\n', 'q.csv', loadConfig());
}

describe('factorsWithExponents', () => {
  test('at exponents 1 and 1: the proportional rule’s arrays themselves', () => {
    const s = series(true);
    const f = fixSigmaFactors(s);
    expect(f.exponents).toEqual({ hdop: true, sats: true, fixQuality: false, reported: false });
    expect(factorsWithExponents(s, f, 1, 1)).toBe(f.perAxis);
  });

  test('at exponents 0 and 0: every factor 1 (no fix-quality column)', () => {
    const s = series(true);
    const f = fixSigmaFactors(s);
    for (const a of factorsWithExponents(s, f, 0, 0)) for (const v of a) expect(v).toBe(1);
  });

  // closed form; tolerance 1e-12 relative (exp/log round trip)
  test.each([
    [0.5, 0.5, true],
    [0.3, 0.9, true],
    [0.7, 0, false],
  ] as const)('αₕ = %f, αₛ = %f (vdop column: %s): the closed form', (aH, aS, withVdop) => {
    const s = series(withVdop);
    const f = fixSigmaFactors(s);
    const [fe, fn, fu] = factorsWithExponents(s, f, aH, aS);
    const q = s.quality;
    const { hdop: mh, vdop: mv, sats: ms } = f.medians;
    for (let i = 0; i < s.n; i++) {
      const sat = (ms / Math.max(q.sats![i]!, 3)) ** (aS / 2);
      const h = (q.hdop![i]! / mh) ** aH * sat;
      const v = (withVdop ? q.vdop![i]! / mv : q.hdop![i]! / mh) ** aH * sat;
      expect(Math.abs(fe[i]! / h - 1)).toBeLessThan(1e-12);
      expect(fn[i]).toBe(fe[i]);
      expect(Math.abs(fu[i]! / v - 1)).toBeLessThan(1e-12);
    }
  });

  test('the proportional factors at 1 and 1 match the closed form too (1e-12 relative)', () => {
    const s = series(true);
    const f = fixSigmaFactors(s);
    const q = s.quality;
    for (let i = 0; i < s.n; i++) {
      const h = (q.hdop![i]! / f.medians.hdop) * Math.sqrt(f.medians.sats / Math.max(q.sats![i]!, 3));
      expect(Math.abs(f.perAxis[0][i]! / h - 1)).toBeLessThan(1e-12);
    }
  });
});
