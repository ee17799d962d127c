/**
 * The typed library entry point: the same pipeline as the command, from another Node program.
 */
import { describe, expect, test } from 'vitest';
import * as hindcast from '../../src/index.js';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

describe('library entry point', () => {
  test('exports the pipeline pieces a caller needs', () => {
    for (const name of ['loadConfig', 'readFixLog', 'readFixBytes', 'readFixCsv', 'processSession', 'processImuSession', 'runBatch', 'joinShards', 'trackCsv', 'outliersCsv', 'sessionGeoJson', 'sessionGpx', 'readDecisions', 'sampleTracks', 'measure', 'releasePosterior', 'pointsCsv'])
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

describe('library: survey products and posterior draws', () => {
  test('sampleTracks and measure from the package entry; occupied points and lengths on the result', () => {
    const cfg = hindcast.loadConfig({ profile: 'pedestrian' });
    const csv = scenarioCsv(simulate(defaultSpec('walk', 77, { durationSec: 240 })));
    const r = hindcast.processSession(hindcast.readFixBytes(new TextEncoder().encode(csv), 'walk.csv', cfg), cfg, 'walk');
    const td = hindcast.sampleTracks(r, 4, 11);
    expect(td.draws).toHaveLength(4);
    expect(td.draws[0]!.latDeg).toHaveLength(r.N);
    // a user's own quantity: the net displacement east over the log, with its uncertainty
    const q = hindcast.measure(r, (t) => t.posEnu[0][r.N - 1]! - t.posEnu[0][0]!, 100, 2);
    expect(q.sd).toBeGreaterThan(0);
    expect(q.lo95).toBeLessThan(q.hi95);
    expect(r.survey!.lengths.at(-1)!.segment).toBe(-1);
    expect(hindcast.pointsCsv(r).split('\n')[0]).toBe('id,start_time,end_time,duration_s,fixes,lat,lon,height,sd_east_m,sd_north_m,sd_up_m,ell95_major_m,ell95_minor_m,ell95_azimuth_deg,effective_fixes');
  });
});
