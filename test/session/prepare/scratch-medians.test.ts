/**
 * The medians of the session centre, the height reference and the quality columns are selected in
 * arrays the caller fills afterwards (scratch) instead of new ones. sessionCentre gives the same
 * values (Object.is) with and without scratch; fixSigmaFactors gives the factors of the documented
 * rules (docs/formats.md, "Quality columns"), written naively below with sorted medians: the
 * relative factor hdop / median(hdop) (vdop / median(vdop) for the vertical, hdop's where a row has
 * no vdop) times √(median sats / max(sats, 3)) times the fix-quality factor over the most common
 * fix quality's; with reported sigmas, the sigma itself, or the column's median times the row's
 * relative factor where a row has none. Medians are of the finite positive values, the upper one
 * for an even count. Seeded random series with missing, zero and negative quality values and
 * invalid fixes.
 */
import { describe, expect, test } from 'vitest';
import { sessionCentre } from '../../../src/geodesy/local-frame.js';
import { FIX_QUALITY_FACTOR, fixSigmaFactors } from '../../../src/session/prepare/fix-noise.js';
import type { FixSeries, QualityColumn } from '../../../src/input/fix-series.js';
import { Rng } from '../../../src/simulate/rng.js';

/** Upper median of the finite positive values, by sorting; NaN when there are none. */
function sortedMedian(a: Float64Array | undefined): number {
  const v = a ? Array.from(a).filter((x) => Number.isFinite(x) && x > 0).sort((x, y) => x - y) : [];
  return v.length ? v[v.length >> 1]! : NaN;
}

/** The most common finite value (the first seen among equals); NaN when there is none. */
function mostCommon(a: Float64Array | undefined): number {
  const v = a ? Array.from(a).filter(Number.isFinite) : [];
  let best = NaN, most = 0;
  for (const x of v) {
    const c = v.filter((y) => y === x).length;
    if (c > most) [best, most] = [x, c];
  }
  return best;
}

/** The rules of docs/formats.md, one fix at a time: [east, north, up] factors and whether they are reported sigmas. */
function definitionFactors(s: FixSeries): { perAxis: number[][]; reported: boolean; used: string[] } {
  const q = s.quality;
  const mh = sortedMedian(q.hdop), mv = sortedMedian(q.vdop), ms = sortedMedian(q.sats), mq = mostCommon(q.fixQuality);
  const good = (a: Float64Array | undefined, m: number, i: number) => a !== undefined && Number.isFinite(m) && a[i]! > 0;
  const used = [['hdop', mh], ['vdop', mv], ['sats', ms], ['fix_quality', mq]].filter(([, m]) => Number.isFinite(m)).map(([c]) => c as string);
  const rel: number[][] = [];
  for (let i = 0; i < s.n; i++) {
    const dopH = good(q.hdop, mh, i) ? q.hdop![i]! / mh : 1;
    const dopV = good(q.vdop, mv, i) ? q.vdop![i]! / mv : dopH;
    const sat = good(q.sats, ms, i) ? Math.sqrt(ms / Math.max(q.sats![i]!, 3)) : 1;
    const fix = q.fixQuality && Number.isFinite(mq) && Number.isFinite(q.fixQuality[i]!) ? (FIX_QUALITY_FACTOR[q.fixQuality[i]!] ?? 1) / (FIX_QUALITY_FACTOR[mq] ?? 1) : 1;
    rel.push([dopH * sat * fix, dopV * sat * fix]);
  }
  if (!(q.sdEast && q.sdNorth)) return { perAxis: [rel.map((r) => r[0]!), rel.map((r) => r[0]!), rel.map((r) => r[1]!)], reported: false, used };
  const cols = [q.sdEast, q.sdNorth, q.sdUp];
  const meds = cols.map(sortedMedian);
  // a column without any value: 1 m horizontally, twice the east median (or 2 m) vertically
  const fallback = [0, 1, 2].map((a) => (Number.isFinite(meds[a]!) ? meds[a]! : a < 2 ? 1 : 2 * (Number.isFinite(meds[0]!) ? meds[0]! : 1)));
  const perAxis = [0, 1, 2].map((a) => rel.map((r, i) => {
    const v = cols[a]?.[i];
    return v !== undefined && Number.isFinite(v) && v > 0 ? v : fallback[a]! * r[a < 2 ? 0 : 1]!;
  }));
  return { perAxis, reported: true, used: [...used, 'sd_east', 'sd_north', ...(q.sdUp ? ['sd_up'] : [])] };
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
      return c === 'sats' ? Math.floor(1 + 13 * rng.next()) : c === 'fixQuality' ? [1, 2, 4, 5][Math.floor(4 * rng.next())]! : 0.3 + 3 * rng.next();
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
  test('fixSigmaFactors = the documented rules with sorted medians (seeded, every quality column set)', () => {
    const rng = new Rng(10_102);
    const sets: QualityColumn[][] = [[], ['hdop'], ['hdop', 'sats'], ['hdop', 'vdop', 'sats', 'fixQuality'], ['sats'], ['sdEast', 'sdNorth'], ['sdEast', 'sdNorth', 'sdUp', 'hdop'], ['sdEast', 'sdNorth', 'hdop', 'vdop', 'sats', 'fixQuality']];
    for (let run = 0; run < 160; run++) {
      const n = 1 + Math.floor(rng.next() * 500);
      const s = series(rng, n, sets[run % sets.length]!);
      const a = fixSigmaFactors(s);
      const b = definitionFactors(s);
      expect(a.reported).toBe(b.reported);
      expect(a.used).toEqual(b.used);
      const q = s.quality;
      expect(a.medians.hdop).toEqual(sortedMedian(q.hdop));
      expect(a.medians.vdop).toEqual(sortedMedian(q.vdop));
      expect(a.medians.sats).toEqual(sortedMedian(q.sats));
      for (let k = 0; k < 3; k++)
        for (let i = 0; i < n; i++) {
          const x = a.perAxis[k]![i]!, y = b.perAxis[k]![i]!;
          // the same products, possibly in another order: within a few ulps
          expect(Math.abs(x - y), `run ${run} axis ${k} fix ${i}: ${x} against ${y}`).toBeLessThanOrEqual(4e-16 * Math.abs(y));
        }
    }
  });
});
