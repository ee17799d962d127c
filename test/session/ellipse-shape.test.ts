/**
 * When the ellipses of a fixes-only session are circles and when not: with one horizontal sigma
 * per fix (HDOP scaling or no quality column) east and north have equal variances and every 95%
 * ellipse is a circle (its azimuth then carries no information); with reported per-axis sigmas
 * (sd_east, sd_north columns; NMEA GST latitude and longitude sigmas) the ellipse is stretched
 * along the noisier axis. Seeded simulator drive; its CSV given sd columns of 1 m east, 3 m north.
 */
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { processSession } from '../../src/session/process-session.js';
import { DEFAULT_ERRORS, defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

const sc = simulate(defaultSpec('vehicle', 2, { durationSec: 240, errors: { ...DEFAULT_ERRORS.vehicle, burstsPer100: 0, gaps: [], nullIslandRows: 0 } }));
const cfg = loadConfig();

describe('95% ellipse shape of a fixes-only session', () => {
  test('one sigma for both horizontal axes: circles (major = minor to 1e-9 m)', () => {
    const r = processSession(readFixCsv(scenarioCsv(sc), 'v.csv', cfg), cfg, 'v');
    for (let j = 0; j < r.N; j++) expect(Math.abs(r.ell95MajorM[j]! - r.ell95MinorM[j]!)).toBeLessThan(1e-9);
  });
  // the smoothed sd is mostly the time-correlated error's, one sigma for both horizontal axes: the
  // white noise's difference stretches the ellipse only a little (measured: major/minor 1.008–1.023)
  test('sd_east 1 m, sd_north 3 m: ellipses stretched north–south (azimuth 0, major/minor > 1.005 at every epoch)', () => {
    const lines = scenarioCsv(sc, { hdop: false }).trim().split('\n');
    const csv = [`${lines[0]},sd_east,sd_north,sd_up`, ...lines.slice(1).map((l) => `${l},1.0,3.0,4.0`)].join('\n') + '\n';
    const r = processSession(readFixCsv(csv, 'v-sd.csv', cfg), cfg, 'v-sd');
    expect(r.info.qualityColumnsUsed).toEqual(expect.arrayContaining(['sd_east', 'sd_north']));
    for (let j = 0; j < r.N; j++) {
      expect(r.ell95MajorM[j]! / r.ell95MinorM[j]!).toBeGreaterThan(1.005);
      expect(r.sdEnu[1][j]!).toBeGreaterThan(r.sdEnu[0][j]!);
      // the major axis along north: azimuth 0 (or 180), to 1e-6 degrees
      expect(Math.min(r.ell95AzimuthDeg[j]!, 180 - r.ell95AzimuthDeg[j]!)).toBeLessThan(1e-6);
    }
  });
});
