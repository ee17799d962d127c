/**
 * Acceptance: one simulated session written as CSV, NMEA (GGA + RMC) and GPX 1.1 gives the same
 * smoothed track through readFixBytes + processSession — within 2 cm median horizontally;
 * heights are compared where the format carries ellipsoidal height (CSV, and NMEA as altitude +
 * geoid separation), not for GPX (ele above mean sea level).
 * The simulated fixes are first put on a grid that every format carries exactly — latitude and
 * longitude on multiples of 5e-9° (9 decimals of a degree = 7 decimals of an arc-minute, 3e-7′),
 * heights on multiples of 1/8 m with a geoid separation of 47.25 m — so the three readers must
 * return the same numbers (to the last bits of a double), and the tracks must then agree.
 * (Without the grid, 0.1 mm rounding differences between the formats moved smoothed heights by
 * decimetres through the session's noise calibration; that is a property of the session layer,
 * not of the readers.)
 */
import { gzipSync } from 'node:zlib';
import { describe, expect, test } from 'vitest';
import { configSchema } from '../../src/config/schema.js';
import { readFixBytes } from '../../src/input/read-log.js';
import { processSession } from '../../src/session/process-session.js';
import type { SessionResult } from '../../src/session/result/result.js';
import { defaultSpec, scenarioCsv, simulate, type Scenario } from '../../src/simulate/scenario.js';
import { scenarioNmea } from '../../src/simulate/nmea-writer.js';
import { scenarioGpx } from '../../src/simulate/gpx-writer.js';

const cfg = configSchema.parse({});
const N_GEOID = 47.25;

function median(a: number[]): number {
  const v = a.slice().sort((x, y) => x - y);
  return v[v.length >> 1]!;
}

/** Per-epoch horizontal and vertical differences (m) of two results on the same epoch times. */
function compare(sc: Scenario, a: SessionResult, b: SessionResult): { horizM: number[]; upM: number[]; matched: number } {
  const byT = new Map<number, number>();
  for (let j = 0; j < b.N; j++) byT.set(Math.round(b.tSec[j]! * 1000), j);
  const horizM: number[] = [];
  const upM: number[] = [];
  for (let j = 0; j < a.N; j++) {
    const k = byT.get(Math.round(a.tSec[j]! * 1000));
    if (k === undefined) continue;
    const [e1, n1] = sc.frame.geodeticToEnu(a.latDeg[j]!, a.lonDeg[j]!, 0);
    const [e2, n2] = sc.frame.geodeticToEnu(b.latDeg[k]!, b.lonDeg[k]!, 0);
    horizM.push(Math.hypot(e1 - e2, n1 - n2));
    if (a.hasHeight && b.hasHeight) upM.push(Math.abs(a.heightM[j]! - b.heightM[k]!));
  }
  return { horizM, upM, matched: horizM.length };
}

// [scenario, seed, spec overrides] — invented sessions from the project simulator (seeded)
const cases: Array<[string, Parameters<typeof defaultSpec>]> = [
  ['walk, 1 Hz', ['walk', 11, { durationSec: 300 }]],
  // starts 23:57:30 UTC: the session crosses midnight, so NMEA dates roll over with RMC
  ['vehicle across UTC midnight', ['vehicle', 12, { durationSec: 300, startUnixSec: Date.UTC(2026, 4, 13, 23, 57, 30) / 1000 }]],
  ['drone, 5 Hz (fractional seconds)', ['drone', 13, { durationSec: 100 }]],
];

describe('same session as CSV, NMEA and GPX → same smoothed track', () => {
  test.each(cases)('%s', (_name, args) => {
    const sc = simulate(defaultSpec(...args));
    for (const f of sc.fixes) {
      f.latDeg = Math.round(f.latDeg / 5e-9) * 5e-9;
      f.lonDeg = Math.round(f.lonDeg / 5e-9) * 5e-9;
      f.heightM = Math.round(f.heightM * 8) / 8;
    }
    const enc = new TextEncoder();
    const csv = readFixBytes(enc.encode(scenarioCsv(sc)), 's.csv', cfg);
    const nmea = readFixBytes(enc.encode(scenarioNmea(sc, { geoidSeparationM: N_GEOID })), 's.nmea', cfg);
    // GPX through gzip, to cover the .gz path in the same run
    const gpx = readFixBytes(gzipSync(enc.encode(scenarioGpx(sc, { geoidSeparationM: N_GEOID }))), 's.gpx.gz', cfg);
    expect(nmea.n).toBe(csv.n);
    expect(gpx.n).toBe(csv.n);
    expect(Array.from(nmea.tSec)).toEqual(Array.from(csv.tSec));
    expect(Array.from(gpx.tSec)).toEqual(Array.from(csv.tSec));
    expect(nmea.meta.heightReference).toBe('ellipsoidal');
    expect(gpx.meta.heightReference).toBe('msl');
    // reader level: the same positions (to 1e-12°, ≈ 0.1 µm) and, for NMEA, the same ellipsoidal heights
    for (let i = 0; i < csv.n; i++) {
      expect(Math.abs(nmea.latDeg[i]! - csv.latDeg[i]!) + Math.abs(nmea.lonDeg[i]! - csv.lonDeg[i]!)).toBeLessThan(1e-12);
      expect(Math.abs(gpx.latDeg[i]! - csv.latDeg[i]!) + Math.abs(gpx.lonDeg[i]! - csv.lonDeg[i]!)).toBeLessThan(1e-12);
      expect(nmea.heightM![i]).toBe(csv.heightM![i]);
      expect(gpx.heightM![i]).toBe(csv.heightM![i]! - N_GEOID); // GPX ele: above mean sea level
    }
    const rc = processSession(csv, cfg, 's');
    const rn = processSession(nmea, cfg, 's');
    const rg = processSession(gpx, cfg, 's');
    for (const [label, other] of [['nmea', rn], ['gpx', rg]] as const) {
      const d = compare(sc, rc, other);
      expect(d.matched, label).toBe(rc.N);
      expect(median(d.horizM), `${label} median horizontal difference (m)`).toBeLessThan(0.02);
    }
    const du = compare(sc, rc, rn).upM;
    expect(du.length).toBe(rc.N);
    expect(median(du), 'nmea median height difference (m)').toBeLessThan(0.02);
    // the invalid (0, 0) rows of the simulator reach the session in every format and are flagged there
    const invalid = sc.fixes.filter((f) => f.invalid).length;
    expect(rc.metrics.invalidCount).toBe(invalid);
    expect(rn.metrics.invalidCount).toBe(invalid);
    expect(rg.metrics.invalidCount).toBe(invalid);
  });
});
