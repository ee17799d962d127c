/**
 * The medians of the session centre, the height reference and the quality
 * columns are selected in arrays the caller will fill afterwards (scratch) instead of new ones. The
 * values must be the previous form's, bit for bit (Object.is): sessionCentre with and without
 * scratch, and fixSigmaFactors against its previous form (test/helpers/reference-fix-noise.ts), on
 * seeded random series with missing, zero and negative quality values and invalid fixes.
 */
import { describe, expect, test } from 'vitest';
import { sessionCentre } from '../../src/geodesy/local-frame.js';
import { fixSigmaFactors } from '../../src/session/fix-noise.js';
import type { FixSeries, QualityColumn } from '../../src/input/fix-series.js';
import { Rng } from '../../src/simulate/rng.js';
import { refFixSigmaFactors } from '../helpers/reference-fix-noise.js';

function sameArray(a: Float64Array, b: Float64Array): boolean {
  if (a.length !== b.length) return false;
  for (let i = 0; i < a.length; i++) if (!Object.is(a[i], b[i])) return false;
  return true;
}

function series(rng: Rng, n: number, cols: QualityColumn[]): FixSeries {
  const col = (f: () => number) => Float64Array.from({ length: n }, f);
  const quality: Partial<Record<QualityColumn, Float64Array>> = {};
  for (const c of cols)
    quality[c] = col(() => {
      const u = rng.next();
      if (u < 0.05) return NaN;
      if (u < 0.08) return 0;
      if (u < 0.1) return -1;
      return c === 'sats' ? Math.floor(4 + 10 * rng.next()) : c === 'fixQuality' ? [1, 2, 4, 5][Math.floor(4 * rng.next())]! : 0.3 + 3 * rng.next();
    });
  return {
    file: 'x.csv', n,
    tSec: col(() => 0), latDeg: col(() => 50 + rng.next()), lonDeg: col(() => (rng.next() < 0.5 ? 179.99 : -179.99) + 0.001 * rng.next()),
    heightM: col(() => 100 * rng.next()), quality, line: new Uint32Array(n), warnings: [], meta: {},
  };
}

describe('medians selected in scratch arrays = in new arrays', () => {
  test('sessionCentre with scratch (seeded, with invalid fixes)', () => {
    const rng = new Rng(10_101);
    for (let run = 0; run < 200; run++) {
      const n = 1 + Math.floor(rng.next() * 400);
      const s = series(rng, n, []);
      const valid = Uint8Array.from({ length: n }, () => (rng.next() < 0.9 ? 1 : 0));
      const a = sessionCentre(s.latDeg, s.lonDeg, valid);
      const b = sessionCentre(s.latDeg, s.lonDeg, valid, [new Float64Array(n).fill(7), new Float64Array(n).fill(-3)]);
      expect(Object.is(a[0], b[0]) && Object.is(a[1], b[1])).toBe(true);
    }
  });
  test('fixSigmaFactors = its reference form (seeded, every quality column set)', () => {
    const rng = new Rng(10_102);
    const sets: QualityColumn[][] = [[], ['hdop'], ['hdop', 'sats'], ['hdop', 'vdop', 'sats', 'fixQuality'], ['sats'], ['sdEast', 'sdNorth'], ['sdEast', 'sdNorth', 'sdUp', 'hdop']];
    for (let run = 0; run < 140; run++) {
      const n = 1 + Math.floor(rng.next() * 500);
      const s = series(rng, n, sets[run % sets.length]!);
      const a = fixSigmaFactors(s);
      const b = refFixSigmaFactors(s);
      expect(a.reported).toBe(b.reported);
      expect(a.used).toEqual(b.used);
      for (let k = 0; k < 3; k++) expect(sameArray(a.perAxis[k]!, b.perAxis[k]!), `run ${run} axis ${k}`).toBe(true);
    }
  });
});
