/**
 * How far reported per-fix sigmas (sd_east/sd_north/sd_up, NMEA GST) predict the error
 * (src/session/prepare/fix-noise.ts, the exponent α_r about their median, fitted by the
 * calibration's likelihood between 0, one sigma for the log, and 1, the reported sigmas as they
 * are): near 1 where the noise follows them, near 0 where it does not, and sigmas that say nothing no
 * longer tighten the outlier tests.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { gaussian } from '../../helpers/park-miller.js';
import { calibrationEstimates } from '../../helpers/score.js';

/**
 * A 1 Hz walk east at 1.2 m/s, 1800 fixes, reported sd 0.5 m with blocks of 60 fixes at 2 m every
 * third block; the white noise per axis `sigmaM` times (reported / 0.5)^truthExponent.
 */
function csv(sigmaM: number, truthExponent: number, seed: number): string {
  const gauss = gaussian(seed);
  const rows = ['time,lat,lon,sd_east,sd_north'];
  for (let i = 0; i < 1800; i++) {
    const sd = Math.floor(i / 60) % 3 === 2 ? 2 : 0.5;
    const s = sigmaM * (sd / 0.5) ** truthExponent;
    const e = 1.2 * i + s * gauss(), n = s * gauss();
    const lat = 47.0 + n / 111_195, lon = 8.0 + e / (111_195 * Math.cos((47 * Math.PI) / 180));
    rows.push(`${new Date(Date.UTC(2026, 4, 3, 9, 0, i)).toISOString()},${lat.toFixed(9)},${lon.toFixed(9)},${sd},${sd}`);
  }
  return rows.join('\n') + '\n';
}

const run = (text: string) => {
  const cfg = loadConfig();
  const r = processSession(readFixCsv(text, 'sd.csv', cfg), cfg, 'sd');
  const est = calibrationEstimates(r);
  return { r, alpha: est.reportedExponent?.value };
};

describe('reported-sigma exponent', () => {
  // [white sigma at the median reported sd (m), the truth's exponent, expected range of α_r]
  test.each([
    [0.5, 1, [0.7, 1]],
    [1.0, 0, [0, 0.3]],
  ] as const)('sigma %d m, truth exponent %i: α_r in %j', (sigmaM, truth, [lo, hi]) => {
    const { alpha } = run(csv(sigmaM, truth, 21));
    console.log(`reported sigmas, truth exponent ${truth}: α_r ${alpha?.toFixed(3)}`);
    expect(alpha).toBeGreaterThanOrEqual(lo);
    expect(alpha).toBeLessThanOrEqual(hi);
  });
  test('reported sigmas that say nothing (0.5 / 2 m over equal 1 m noise) do not tighten the tests: at most 0.5 % of the fixes flagged', () => {
    const { r } = run(csv(1.0, 0, 22));
    expect(r.metrics.outlierCount).toBeLessThanOrEqual(9);
  });
});
