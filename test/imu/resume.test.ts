/**
 * Resumed passes of the IMU review loop (src/session/imu/imu-session.ts, IMU_REVIEW_RESUME;
 * src/estimation/ins/snapshot.ts, InsSnapshot): a pass starts from the previous pass's snapshot
 * before the first changed decision (after the gated first pass: before its first refused fix or
 * the first fix the review rejects). On a 15-minute drive at 10 Hz fixes (two passes, the second
 * resumed from the first) and on a seeded one-hour drive at 1 Hz fixes whose
 * review takes four passes (the IMU benchmark's log), with its fix times as simulated and shifted
 * between IMU samples, the result with resumed passes equals the one
 * with every pass run from the start, bit for bit: every array of the SessionResult (Object.is), the
 * outlier records, the warnings and the review's pass count.
 */
import { rmSync } from 'node:fs';
import { dirname } from 'node:path';
import { describe, expect, it } from 'vitest';
import { IMU_REVIEW_RESUME, newImuStageTimings, processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import type { SessionResult } from '../../src/session/result/result.js';
import { makeImuCase, type ImuCase } from './helpers.js';

function expectSameResult(a: SessionResult, b: SessionResult): number {
  let arrays = 0;
  for (const key of Object.keys(a) as Array<keyof SessionResult>) {
    const va = a[key], vb = b[key];
    const list = Array.isArray(va) && va.every((v) => v instanceof Float64Array) ? (va as Float64Array[]) : va instanceof Float64Array ? [va] : [];
    const other = Array.isArray(vb) ? (vb as Float64Array[]) : [vb as Float64Array];
    list.forEach((x, j) => {
      const y = other[j]!;
      expect(y.length).toBe(x.length);
      for (let i = 0; i < x.length; i++) if (!Object.is(x[i], y[i])) expect([String(key), j, i, y[i]]).toEqual([String(key), j, i, x[i]]);
      arrays++;
    });
  }
  expect(JSON.stringify(b.outliers)).toBe(JSON.stringify(a.outliers));
  expect(JSON.stringify(b.warnings)).toBe(JSON.stringify(a.warnings));
  return arrays;
}

/** The case processed with every pass from the start, then with resumed passes: both results and their timings. */
async function bothWays(c: ImuCase) {
  try {
    IMU_REVIEW_RESUME.enabled = false;
    const tmA = newImuStageTimings();
    const a = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x', undefined, tmA);
    IMU_REVIEW_RESUME.enabled = true;
    const tmB = newImuStageTimings();
    const b = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x', undefined, tmB);
    expect(tmA.resumedPasses).toBe(0);
    expect(tmB.passes).toBe(tmA.passes);
    return { a, b, tmA, tmB };
  } finally {
    IMU_REVIEW_RESUME.enabled = true;
    rmSync(dirname(c.imuPath), { recursive: true, force: true });
  }
}

describe('resumed IMU review passes', () => {
  it('15 minutes at 10 Hz fixes, two passes: the second resumes from the gated first, bit for bit', async () => {
    const { a, b, tmA, tmB } = await bothWays(makeImuCase(3, { durationSec: 900, fixRateHz: 10 }, {}, 'vehicle'));
    expect(tmA.passes).toBe(2);
    expect(tmB.resumedPasses).toBe(1);
    console.log(`10 Hz: epochs not run again ${tmB.resumedEpochs} of ${b.N}`);
    expect(expectSameResult(a, b)).toBeGreaterThan(10);
  }, 120_000);

  // fixes at the IMU's sample times (as simulated), and 3.7 ms after them: then the filter's epochs
  // fall between samples and a snapshot holds a partly accumulated covariance step
  it.each([0, 0.0037])('one hour at 1 Hz fixes, four passes, fix times shifted by %s s: resumed = every pass from the start, bit for bit', async (shiftSec) => {
    const c = makeImuCase(4242, { durationSec: 3600 }, {}, 'vehicle');
    for (let i = 0; i < c.series.n; i++) c.series.tSec[i] += shiftSec;
    const { a, b, tmA, tmB } = await bothWays(c);
    expect(tmA.passes).toBeGreaterThanOrEqual(3);
    expect(tmB.resumedPasses).toBeGreaterThanOrEqual(1);
    expect(tmB.resumedEpochs).toBeGreaterThan(0);
    console.log(`shift ${shiftSec} s: passes ${tmB.passes}, resumed ${tmB.resumedPasses}, epochs not run again ${tmB.resumedEpochs} of ${b.N * (tmB.passes - 1)}`);
    expect(expectSameResult(a, b)).toBeGreaterThan(10);
  }, 120_000);
});
