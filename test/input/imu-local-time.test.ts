/**
 * IMU samples written in local time across the autumn clock change (src/input/imu-csv.ts with
 * src/time/local-time.ts). Europe/Berlin went back from 03:00 CEST to 02:00 CET at 01:00 UTC on
 * 2025-10-26 (IANA tz database, common practice).
 */
import { describe, expect, it } from 'vitest';
import { DateTime } from 'luxon';
import { loadConfig } from '../../src/config/load.js';
import { parseImuCsvText } from '../../src/input/imu-csv.js';

const U = (y: number, mo: number, d: number, h = 0, mi = 0, s = 0) => Date.UTC(y, mo - 1, d, h, mi, s) / 1000;
const cfg = loadConfig({ overrides: { input: { timeZone: 'Europe/Berlin' } } });

function imuText(t0: number, n: number, dtSec: number): string {
  const rows = ['time,ax,ay,az,gx,gy,gz'];
  for (let i = 0; i < n; i++) rows.push(`${DateTime.fromMillis(Math.round((t0 + i * dtSec) * 1000), { zone: 'Europe/Berlin' }).toFormat("yyyy-MM-dd'T'HH:mm:ss.SSS")},0,0,9.81,0,0,0`);
  return rows.join('\n') + '\n';
}

describe('IMU local times at a clock change', () => {
  it('samples from before the repeated hour on are read by their order, with a note', () => {
    // 01:59:50 CEST, through the hour in CEST, then again in CET, to 02:01:39 CET, at 1 Hz
    const t0 = U(2025, 10, 25, 23, 59, 50);
    const times: number[] = [];
    const st = parseImuCsvText(imuText(t0, 3710, 1), 'n.imu.csv', cfg, (t) => times.push(t));
    expect(st.samples).toBe(3710);
    times.forEach((t, i) => expect(Math.abs(t - (t0 + i))).toBeLessThan(1e-6));
    expect(st.warnings.map((w) => w.code)).toEqual(['local-time-clock-change']);
  });
  it('samples that start inside the repeated hour are skipped, not guessed', () => {
    const t0 = U(2025, 10, 26, 1, 0, 0); // 02:00:00 CET, also 02:00:00 CEST an hour before
    const st = parseImuCsvText(imuText(t0, 5, 0.1), 'n.imu.csv', cfg, () => undefined);
    expect(st.samples).toBe(0);
    expect(st.warnings[0]!.message).toMatch(/occurs twice in Europe\/Berlin \(clock change\)/);
  });
});
