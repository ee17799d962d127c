/**
 * Sources of IMU samples (src/input/imu-source.ts): a session handed the samples in memory
 * (imuArraySource) gives the same result as one handed the CSV they were read from (imuFileSource),
 * bit for bit; a file source replays on its later passes; bad sources fail with the source's name.
 */
import { rmSync } from 'node:fs';
import { dirname } from 'node:path';
import { describe, expect, it } from 'vitest';
import { streamImuCsv } from '../../src/input/imu-csv.js';
import { IMU_SAMPLE_STRIDE, imuArraySource, imuFileSource } from '../../src/input/imu-source.js';
import { newImuStageTimings, processImuSession } from '../../src/session/imu/imu-session.js';
import { InputError } from '../../src/errors.js';
import { makeImuCase } from '../imu/helpers.js';

describe('IMU sample sources', () => {
  it('samples in memory give the same result as the CSV they were read from', async () => {
    // seed 11 takes two review passes (the second resumes from a snapshot)
    const c = makeImuCase(11, {}, {}, 'vehicle');
    try {
      const rows: number[] = [];
      await streamImuCsv(c.imuPath, 'x.imu.csv', c.cfg, (...v) => rows.push(...v));
      const tmFile = newImuStageTimings();
      const a = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x', undefined, tmFile);
      const b = await processImuSession(c.series, imuArraySource('x.imu', Float64Array.from(rows)), c.cfg, 'x');
      expect(tmFile.passes).toBeGreaterThan(1);
      expect(tmFile.replayPasses).toBe(tmFile.passes - 1);
      for (let ax = 0; ax < 3; ax++)
        for (let j = 0; j < a.N; j++) if (!Object.is(a.posEnu[ax]![j], b.posEnu[ax]![j])) expect([ax, j, b.posEnu[ax]![j]]).toEqual([ax, j, a.posEnu[ax]![j]]);
      expect(JSON.stringify(b.outliers)).toBe(JSON.stringify(a.outliers));
      expect(b.info.imu).toEqual(a.info.imu);
    } finally {
      rmSync(dirname(c.imuPath), { recursive: true, force: true });
    }
  });

  it('an array that is not whole samples, or empty, fails with the name', () => {
    expect(() => imuArraySource('short.imu', new Float64Array(IMU_SAMPLE_STRIDE + 3))).toThrow(/short\.imu.*whole number of samples of 7/);
    expect(() => imuArraySource('empty.imu', new Float64Array(0))).toThrow(InputError);
  });

  it('a file source cannot be read after close', async () => {
    const c = makeImuCase(3, {}, {}, 'vehicle');
    try {
      const src = imuFileSource(c.imuPath, c.cfg);
      src.close();
      await expect(src.pass({ addSample() {}, addSampleAt() {} }, 0)).rejects.toThrow(/used after close/);
    } finally {
      rmSync(dirname(c.imuPath), { recursive: true, force: true });
    }
  });
});
