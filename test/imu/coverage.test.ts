/**
 * Honest regions of IMU-aided smoothing, pooled over eight seeded urban drives (15 min, 1 Hz fixes,
 * four 25–40 s outages, consumer MEMS IMU at 100 Hz; half with the vehicle profile and no lever arm,
 * half with the default profile and a 1.4 m antenna lever arm). The figures printed here are the ones
 * quoted in docs/validation.md ("With an IMU").
 * Coverage is judged pooled, as for the fixes-only scenarios (test/session/accuracy.test.ts): a
 * 15-minute drive holds only some tens of independent samples of its correlated fix error, so one
 * log's share scatters widely (0.79–1.00 here).
 * The GNSS noise is the fixes-only calibration's, the regions get the correlated-error floor
 * (session/check/correlated-floor.ts): pooled 0.984 at fix epochs. Without the floor and with the
 * calibrated sigma it was 0.882 (0.735–0.990 per log), below the band; with the profile's sigma as
 * a floor instead, 0.957.
 */
import { rmSync } from 'node:fs';
import { dirname } from 'node:path';
import { afterAll, beforeAll, describe, expect, test } from 'vitest';
import { processImuSession } from '../../src/session/imu/imu-session.js';
import { imuFileSource } from '../../src/input/imu-source.js';
import { BRIDGED, KEPT, makeImuCase, score } from './helpers.js';

const CASES: Array<{ seed: number; profile: string; lever: [number, number, number] }> = [11, 23, 31, 47, 53, 61, 71, 83].map((seed, i) =>
  i % 2 === 0 ? { seed, profile: 'vehicle', lever: [0, 0, 0] } : { seed, profile: 'default', lever: [0.6, -0.2, 1.2] },
);

describe('IMU-aided drives, eight seeds: 95% regions pooled', () => {
  const kept = { inside: 0, n: 0 };
  const bridged = { inside: 0, n: 0 };
  const dirs: string[] = [];
  beforeAll(async () => {
    for (const { seed, profile, lever } of CASES) {
      const c = makeImuCase(seed, { leverArmM: lever }, { imu: { leverArmM: lever } }, profile);
      dirs.push(dirname(c.imuPath));
      const r = await processImuSession(c.series, imuFileSource(c.imuPath, c.cfg), c.cfg, 'drive');
      const k = score(r, c.sc, KEPT), b = score(r, c.sc, BRIDGED);
      console.log(`seed ${seed} (${profile}): fix epochs RMSE ${k.rmseH.toFixed(2)} m, 95% coverage ${k.coverage95.toFixed(3)}; bridged RMSE ${b.rmseH.toFixed(2)} m, coverage ${b.coverage95.toFixed(3)} (n ${b.n})`);
      kept.inside += k.coverage95 * k.n;
      kept.n += k.n;
      bridged.inside += b.coverage95 * b.n;
      bridged.n += b.n;
    }
    console.log(`pooled: fix epochs ${(kept.inside / kept.n).toFixed(3)} of ${kept.n}, bridged ${(bridged.inside / bridged.n).toFixed(3)} of ${bridged.n}`);
  }, 600_000);
  afterAll(() => {
    for (const d of dirs) rmSync(d, { recursive: true, force: true });
  });

  test('fix epochs: the 95% ellipse holds the truth 90–99% of the time', () => {
    const share = kept.inside / kept.n;
    expect(kept.n).toBeGreaterThan(6000);
    expect(share).toBeGreaterThanOrEqual(0.9);
    expect(share).toBeLessThanOrEqual(0.99);
  });

  test('bridged epochs (outages): at least 90% inside', () => {
    expect(bridged.n).toBeGreaterThan(800);
    expect(bridged.inside / bridged.n).toBeGreaterThanOrEqual(0.9);
  });

  // Known shortfall, kept as a test that must fail (vitest test.fails) so that a fix shows up: the
  // bridged regions are cautious (pooled 0.998). Not traced: with the simulated IMU's own noise
  // densities and (near) zero bias walks put in instead of the defaults (0.004 m/s²/√Hz, 4e-4 rad/√s,
  // 1.3× and 2.3× the simulated ones), seeds 11 and 23 still gave 1.000 (scratch run).
  test.fails('bridged epochs: at most 99% inside (known: cautious during outages)', () => {
    expect(bridged.inside / bridged.n).toBeLessThanOrEqual(0.99);
  });
});
