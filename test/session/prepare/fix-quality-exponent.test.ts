/**
 * How far the fix-quality column predicts the error (src/session/prepare/fix-noise.ts, the
 * exponent α_q on FIX_QUALITY_FACTOR, fitted by the calibration's likelihood between 0, ignore, and
 * 1, proportional): on simulated logs whose fix quality changes in blocks, α_q comes out near 1 where
 * the white noise follows the column and near 0 where it does not, and a column that says nothing
 * no longer tightens the outlier tests (fixes flagged).
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { FIX_QUALITY_FACTOR } from '../../../src/session/prepare/fix-noise.js';
import { gaussian } from '../../helpers/park-miller.js';
import { calibrationEstimates } from '../../helpers/score.js';

/**
 * A 1 Hz walk east at 1.2 m/s, 1800 fixes, the fix quality `qMain` with blocks of 60 fixes at `qOther`
 * every third block; white noise per axis `sigmaM` times the quality's factor ratio to the power
 * `truthExponent` (1: the column is right, 0: it says nothing).
 */
function csv(qMain: number, qOther: number, sigmaM: number, truthExponent: number, seed: number): string {
  const gauss = gaussian(seed);
  const rows = ['time,lat,lon,fix_quality'];
  for (let i = 0; i < 1800; i++) {
    const q = Math.floor(i / 60) % 3 === 2 ? qOther : qMain;
    const s = sigmaM * (FIX_QUALITY_FACTOR[q]! / FIX_QUALITY_FACTOR[qMain]!) ** truthExponent;
    const e = 1.2 * i + s * gauss(), n = s * gauss();
    const lat = 47.0 + n / 111_195, lon = 8.0 + e / (111_195 * Math.cos((47 * Math.PI) / 180));
    rows.push(`${new Date(Date.UTC(2026, 4, 3, 9, 0, i)).toISOString()},${lat.toFixed(9)},${lon.toFixed(9)},${q}`);
  }
  return rows.join('\n') + '\n';
}

const run = (text: string) => {
  const cfg = loadConfig();
  const r = processSession(readFixCsv(text, 'q.csv', cfg), cfg, 'q');
  const est = calibrationEstimates(r);
  return { r, alpha: est.fixQualityExponent?.value };
};

describe('fix-quality exponent', () => {
  // [main quality, other quality, white sigma of the main (m), the truth's exponent, expected range of α_q]
  test.each([
    [4, 5, 0.05, 1, [0.7, 1]],
    [4, 5, 0.5, 0, [0, 0.3]],
    [1, 2, 2, 1, [0.5, 1]],
    [1, 2, 2, 0, [0, 0.5]],
  ] as const)('quality %i with blocks of %i, sigma %d m, truth exponent %i: α_q in %j', (qMain, qOther, sigmaM, truth, [lo, hi]) => {
    const { alpha } = run(csv(qMain, qOther, sigmaM, truth, 11));
    console.log(`fix quality ${qMain}/${qOther}, truth exponent ${truth}: α_q ${alpha?.toFixed(3)}`);
    expect(alpha).toBeGreaterThanOrEqual(lo);
    expect(alpha).toBeLessThanOrEqual(hi);
  });
  test('a column that says nothing (RTK fixed / float labels on equal 0.5 m noise) does not tighten the tests: at most 0.5 % of the fixes flagged', () => {
    const { r } = run(csv(4, 5, 0.5, 0, 12));
    expect(r.metrics.outlierCount).toBeLessThanOrEqual(9);
  });
  test('a column with one value gets no exponent', () => {
    const { alpha } = run(csv(1, 1, 2, 1, 13));
    expect(alpha).toBeUndefined();
  });
});
