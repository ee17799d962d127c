/**
 * Acceptance of IMU-aided smoothing on the project's simulator: an urban drive of 15 min at
 * 1 Hz fixes with four 25–40 s GNSS outages, a consumer-grade MEMS IMU at 100 Hz (accelerometer bias
 * 0.02–0.05 m/s², gyro bias 0.1–0.2 °/s, white noise 0.03 m/s² and 0.1 °/s per sample).
 * Fixes-only = processSession on the same fixes.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { processSession } from '../../src/session/process-session.js';
import { processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { trackCsv } from '../../src/output/track-csv.js';
import type { SessionResult } from '../../src/session/result/result.js';
import { BRIDGED, KEPT, makeImuCase, score, type ImuCase } from './helpers.js';

const D = Math.PI / 180;

describe.each([
  { seed: 11, profile: 'vehicle', lever: [0, 0, 0] as [number, number, number], label: 'vehicle profile (NHC on)' },
  { seed: 23, profile: 'default', lever: [0.6, -0.2, 1.2] as [number, number, number], label: 'default profile (no NHC), antenna lever arm' },
])('IMU-aided drive, seed $seed, $label', ({ seed, profile, lever }) => {
  let c: ImuCase;
  let imu: SessionResult;
  let fixesOnly: SessionResult;
  beforeAll(async () => {
    c = makeImuCase(seed, { leverArmM: lever }, { imu: { leverArmM: lever } }, profile);
    fixesOnly = processSession(c.series, c.cfg, 'drive');
    imu = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'drive');
  });

  it('same epoch grid as fixes-only, every epoch covered by the IMU', () => {
    expect(imu.N).toBe(fixesOnly.N);
    expect(Array.from(imu.tSec)).toEqual(Array.from(fixesOnly.tSec));
    expect((imu.info.imu as { coveredEpochs: number }).coveredEpochs).toBe(imu.N);
  });

  it('bridged epochs in 25–40 s outages: horizontal RMSE ≤ 3 m and ≤ 0.3 × fixes-only; ≥ 85% inside the 95% ellipse', () => {
    const a = score(imu, c.sc, BRIDGED);
    const b = score(fixesOnly, c.sc, BRIDGED);
    console.log(`seed ${seed} bridged: IMU rmse ${a.rmseH.toFixed(2)} m (cov95 ${(a.coverage95 * 100).toFixed(1)}%, n ${a.n}), fixes-only ${b.rmseH.toFixed(2)} m (cov95 ${(b.coverage95 * 100).toFixed(1)}%)`);
    expect(a.n).toBeGreaterThan(80);
    expect(a.rmseH).toBeLessThanOrEqual(3);
    expect(a.rmseH).toBeLessThanOrEqual(0.3 * b.rmseH);
    expect(a.coverage95).toBeGreaterThanOrEqual(0.85);
  });

  it('with fixes present: RMSE and 95% coverage at least as good as fixes-only', () => {
    const a = score(imu, c.sc, KEPT);
    const b = score(fixesOnly, c.sc, KEPT);
    console.log(`seed ${seed} kept: IMU rmse ${a.rmseH.toFixed(2)} m (cov95 ${(a.coverage95 * 100).toFixed(1)}%), fixes-only ${b.rmseH.toFixed(2)} m (cov95 ${(b.coverage95 * 100).toFixed(1)}%)`);
    expect(a.rmseH).toBeLessThanOrEqual(b.rmseH);
    expect(a.coverage95).toBeGreaterThanOrEqual(Math.min(b.coverage95, 0.95));
  });

  it('estimated biases converge near the simulated ones', () => {
    const j = imu.N - 60;
    const be = imu.biasEstimates!;
    for (let a = 0; a < 3; a++) {
      const ea = be.accelMps2[a]![j]! - c.sc.imu.accelBias[a]!;
      const eg = be.gyroRadps[a]![j]! - c.sc.imu.gyroBias[a]!;
      console.log(`seed ${seed} axis ${a}: accel bias err ${ea.toFixed(4)} (sd ${be.accelSdMps2[a]![j]!.toFixed(4)}) m/s², gyro bias err ${(eg / D).toFixed(4)} (sd ${(be.gyroSdRadps[a]![j]! / D).toFixed(4)}) °/s`);
      // within 3 sigma and a tenth of the simulated magnitude scale (0.01 m/s², 0.02 °/s)
      expect(Math.abs(ea)).toBeLessThan(Math.max(3 * be.accelSdMps2[a]![j]!, 0.01));
      expect(Math.abs(eg)).toBeLessThan(Math.max(3 * be.gyroSdRadps[a]![j]!, 0.02 * D));
    }
  });

  it('heading error after alignment within its reported 3-sigma; roll and pitch too', () => {
    let outH = 0, outRP = 0, n = 0, s2 = 0;
    for (let j = 0; j < imu.N; j++) {
      const tr = c.sc.truthAt(imu.tSec[j]!);
      const hTrue = ((90 - tr.att[2] / D) % 360 + 360) % 360;
      const dh = ((imu.attitudeDeg!.heading[j]! - hTrue + 540) % 360) - 180;
      if (Math.abs(dh) > 3 * imu.attitudeSdDeg!.heading[j]!) outH++;
      const dr = imu.attitudeDeg!.roll[j]! - tr.att[0] / D, dp = imu.attitudeDeg!.pitch[j]! - tr.att[1] / D;
      if (Math.abs(dr) > 3 * imu.attitudeSdDeg!.roll[j]! || Math.abs(dp) > 3 * imu.attitudeSdDeg!.pitch[j]!) outRP++;
      s2 += dh * dh;
      n++;
    }
    console.log(`seed ${seed}: heading rms err ${Math.sqrt(s2 / n).toFixed(3)}°, outside 3σ: heading ${outH}/${n}, roll/pitch ${outRP}/${n}`);
    expect(outH / n).toBeLessThan(0.01);
    expect(outRP / n).toBeLessThan(0.01);
  });

  it('gates the simulated outlier bursts like the fixes-only path', () => {
    const truthOut = new Set(c.sc.fixes.flatMap((f, i) => (f.outlier && !f.invalid ? [i] : [])));
    let caught = 0, tot = 0;
    for (let j = 0; j < imu.N; j++) {
      const i = imu.fix[j]!;
      if (i < 0) continue;
      const bigMiss = truthOut.has(i);
      if (bigMiss) {
        tot++;
        if (imu.status[j] === 1) caught++;
      }
    }
    expect(caught).toBeGreaterThanOrEqual(Math.floor(0.8 * tot));
  });

  it('track.csv carries roll/pitch/heading and their sd', () => {
    const text = trackCsv(imu);
    const header = text.slice(0, text.indexOf('\n')).split(',');
    expect(header.slice(-6)).toEqual(['roll_deg', 'pitch_deg', 'heading_deg', 'sd_roll_deg', 'sd_pitch_deg', 'sd_heading_deg']);
    const row = text.split('\n')[100]!.split(',');
    expect(row.length).toBe(header.length);
    expect(Number(row[header.indexOf('heading_deg')])).toBeGreaterThanOrEqual(0);
  });
});
