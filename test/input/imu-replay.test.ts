/**
 * The IMU replay file (src/input/imu-replay.ts): the later passes of the IMU review replay
 * the samples the first pass parsed. Checked: the replay hands the sink exactly the recorded numbers
 * (Object.is, so -0, subnormals and the last bits survive) in the recorded order, any number of
 * times, for counts below, at and across the write chunk; the recording sink passes every sample on
 * unchanged; the temporary file has no name while in use (POSIX) and nothing is left after close or
 * discard; where no temporary file can
 * be made, a session reads the CSV in every pass and its result is the same, bit for bit, as with the
 * replay.
 */
import { readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { streamImuCsv } from '../../src/input/imu-csv.js';
import { ImuReplayWriter } from '../../src/input/imu-replay.js';
import { newImuStageTimings, processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { Rng } from '../../src/simulate/rng.js';
import { makeImuCase } from '../imu/helpers.js';

const CHUNK = 8192;

function replayDirs(): Set<string> {
  return new Set(readdirSync(tmpdir()).filter((d) => d.startsWith('hindcast-replay-')));
}

/** Seeded awkward samples: ordinary rates, signed zeros, subnormals, huge and tiny magnitudes. */
function samples(seed: number, n: number): number[][] {
  const rng = new Rng(seed);
  const odd = [-0, 0, 5e-324, -2.2250738585072014e-308, 1.7976931348623157e308, 0.1 + 0.2];
  const rows: number[][] = [];
  for (let i = 0; i < n; i++) {
    const row = [i * 0.01 + 1.7e9];
    for (let j = 0; j < 6; j++) row.push(rng.uniform(0, 1) < 0.05 ? odd[Math.floor(rng.uniform(0, odd.length))]! : rng.normal() * 10);
    rows.push(row);
  }
  return rows;
}

describe('IMU replay file', () => {
  it.each([0, 1, CHUNK - 1, CHUNK, CHUNK + 1, 3 * CHUNK + 17])('%i samples: replayed twice, bit for bit and in order', (n) => {
    const rows = samples(n + 1, n);
    const before = replayDirs();
    const w = new ImuReplayWriter();
    const passed: number[][] = [];
    const sink = w.tee((...v) => passed.push(v));
    for (const r of rows) sink(r[0]!, r[1]!, r[2]!, r[3]!, r[4]!, r[5]!, r[6]!);
    const replay = w.finish();
    expect(replay).toBeDefined();
    expect(replay!.samples).toBe(n);
    for (let rep = 0; rep < 2; rep++) {
      const got: number[][] = [];
      replay!.replay((...v) => got.push(v));
      expect(got.length).toBe(n);
      for (let i = 0; i < n; i++)
        for (let j = 0; j < 7; j++) {
          if (!Object.is(got[i]![j], rows[i]![j])) expect([rep, i, j, got[i]![j]]).toEqual([rep, i, j, rows[i]![j]]);
          if (!Object.is(passed[i]![j], rows[i]![j])) expect([i, j, passed[i]![j]]).toEqual([i, j, rows[i]![j]]);
        }
    }
    replay!.close();
    expect(() => replay!.replay(() => {})).toThrow(/after close/);
    const after = replayDirs();
    for (const d of after) expect(before.has(d)).toBe(true);
  });

  it('the file has no name while in use (POSIX), and discard leaves nothing', () => {
    const before = replayDirs();
    const w = new ImuReplayWriter();
    for (let i = 0; i < CHUNK + 5; i++) w.add(i, 1, 2, 3, 4, 5, 6);
    const made = [...replayDirs()].filter((d) => !before.has(d));
    if (process.platform !== 'win32') expect(made).toEqual([]);
    w.discard();
    for (const d of replayDirs()) expect(before.has(d)).toBe(true);
  });

  it('the sample data IMU log: replay = what the CSV reader parsed, bit for bit', async () => {
    const cfg = loadConfig({ profile: 'vehicle' });
    const path = join(import.meta.dirname, '../../sample-data/urban-test-car.imu.csv');
    const direct: number[][] = [];
    const w = new ImuReplayWriter();
    const stats = await streamImuCsv(path, 'urban-test-car.imu.csv', cfg, w.tee((...v) => direct.push(v)));
    const replay = w.finish()!;
    expect(replay.samples).toBe(stats.samples);
    expect(direct.length).toBe(stats.samples);
    let i = 0;
    replay.replay((...v) => {
      for (let j = 0; j < 7; j++) if (!Object.is(v[j], direct[i]![j])) expect([i, j, v[j]]).toEqual([i, j, direct[i]![j]]);
      i++;
    });
    expect(i).toBe(direct.length);
    replay.close();
  });
});

describe('IMU replay where no temporary file can be made', () => {
  const withTmp = async <T>(dir: string, f: () => Promise<T> | T): Promise<T> => {
    const prev = process.env.TMPDIR;
    process.env.TMPDIR = dir;
    try {
      return await f();
    } finally {
      if (prev === undefined) delete process.env.TMPDIR;
      else process.env.TMPDIR = prev;
    }
  };

  it('tryCreate gives undefined instead of failing', async () => {
    expect(await withTmp(join(tmpdir(), 'hindcast-no-such-dir', 'x'), () => ImuReplayWriter.tryCreate())).toBeUndefined();
  });

  it('a session then reads the CSV in every pass, with the same result as with the replay', async () => {
    // seed 11 takes two passes (the second replays)
    const c = makeImuCase(11, {}, {}, 'vehicle');
    const tmA = newImuStageTimings(), tmB = newImuStageTimings();
    const a = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x', undefined, tmA);
    const b = await withTmp(join(tmpdir(), 'hindcast-no-such-dir', 'x'), () => processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'x', undefined, tmB));
    expect(tmA.passes).toBeGreaterThan(1);
    expect(tmA.replayPasses).toBe(tmA.passes - 1);
    expect(tmB.passes).toBe(tmA.passes);
    expect(tmB.replayPasses).toBe(0);
    let arrays = 0;
    for (const key of Object.keys(a) as Array<keyof typeof a>) {
      const va = a[key], vb = b[key];
      if (va instanceof Float64Array) {
        const wb = vb as Float64Array;
        for (let i = 0; i < va.length; i++) if (!Object.is(va[i], wb[i])) expect([String(key), i, wb[i]]).toEqual([String(key), i, va[i]]);
        arrays++;
      }
    }
    expect(arrays).toBeGreaterThan(5);
    expect(JSON.stringify(b.outliers)).toBe(JSON.stringify(a.outliers));
    rmSync(dirname(c.imuPath), { recursive: true, force: true });
  }, 60_000);
});
