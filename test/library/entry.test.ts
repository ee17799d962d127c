/**
 * The typed library entry point: the same pipeline as the command, from another Node program.
 */
import { describe, expect, test } from 'vitest';
import * as hindcast from '../../src/index.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

describe('library entry point', () => {
  test('exports the pipeline pieces a caller needs', () => {
    for (const name of ['loadConfig', 'readFixLog', 'readFixBytes', 'readFixCsv', 'processSession', 'processImuSession', 'runBatch', 'joinShards', 'trackCsv', 'outliersCsv', 'sessionGeoJson', 'sessionGpx', 'readDecisions'])
      expect(typeof (hindcast as Record<string, unknown>)[name], name).toBe('function');
    expect(hindcast.CAUTION).toMatch(/not for navigation or safety-of-life use/);
  });

  test('bytes in, smoothed track out', () => {
    const cfg = hindcast.loadConfig({ profile: 'pedestrian' });
    const csv = scenarioCsv(simulate(defaultSpec('walk', 77, { durationSec: 240 })));
    const series = hindcast.readFixBytes(new TextEncoder().encode(csv), 'walk.csv', cfg);
    const r = hindcast.processSession(series, cfg, 'walk');
    expect(r.N).toBeGreaterThanOrEqual(series.n - 2);
    expect(hindcast.trackCsv(r).split('\n')[0]).toContain('ell95_major_m');
    expect(r.metrics.medianSdHorizontalM).toBeGreaterThan(0);
  });
});
