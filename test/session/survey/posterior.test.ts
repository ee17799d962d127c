/**
 * The joint posterior of a processed session (session/survey/posterior.ts) and the library's draws
 * (session/survey/draws.ts) on a seeded walking log: the draws reproduce the smoother's per-epoch
 * variances and the exact variance of a time average (meanPositionVariance) within Monte-Carlo
 * error, a seed gives the same draws, and geodetic coordinates follow the local frame.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { measure, sampleTracks, summarize } from '../../../src/session/survey/draws.js';
import { meanPositionVariance, posteriorOf, releasePosterior } from '../../../src/session/survey/posterior.js';
import { defaultSpec, scenarioCsv, simulate } from '../../../src/simulate/scenario.js';

// the simulation smoother against the smoother itself: without the correlated-error floor, which the
// draws add as an offset of their own (session/check/correlated-floor.ts; its test checks that part)
const NO_FLOOR = { noise: { correlatedFloorRatio: { horizontal: 0, vertical: 0 } } };
const cfg = loadConfig({ overrides: NO_FLOOR });
const sc = simulate(defaultSpec('walk', 3, { durationSec: 400 }));
const r = processSession(readFixCsv(scenarioCsv(sc), 'walk-3.csv', cfg), cfg, 'walk-3');
const M = 1000;
const td = sampleTracks(r, M, 7);

describe('draws from the joint smoothing posterior of a walking log', () => {
  it.each([0, 1, 2])('axis %d: per-epoch variance within 3 standard errors of the smoother’s, at 8 epochs', (a) => {
    for (const j of [0, 37, 90, 150, 222, 280, 333, r.N - 1]) {
      if (a === 2 && !r.hasHeight) continue;
      let m = 0, v = 0;
      for (const d of td.draws) m += d.posEnu[a]![j]! / M;
      for (const d of td.draws) v += (d.posEnu[a]![j]! - m) ** 2 / (M - 1);
      const P = r.sdEnu[a]![j]! ** 2;
      // SE of a Gaussian sample variance: P √(2 / (M − 1)); of the mean: √(P / M)
      expect(Math.abs(v - P)).toBeLessThan(3 * P * Math.sqrt(2 / (M - 1)));
      expect(Math.abs(m - r.posEnu[a]![j]!)).toBeLessThan(3 * Math.sqrt(P / M));
    }
  });
  it('the variance of a 30-epoch time average matches the exact one (cross-covariances from the RTS gains) within 3 SE', () => {
    const post = posteriorOf(r)!;
    const sp = post.segments[0]!;
    for (const k0 of [20, 100]) {
      const k1 = k0 + 29;
      const exact = meanPositionVariance(sp, k0, k1);
      for (let a = 0; a < 2; a++) {
        const avg = new Float64Array(M);
        td.draws.forEach((d, i) => {
          let s = 0;
          for (let k = k0; k <= k1; k++) s += d.posEnu[a]![sp.epoch0 + k]!;
          avg[i] = s / 30;
        });
        const q = summarize(avg);
        expect(Math.abs(q.sd ** 2 - exact[a]!)).toBeLessThan(3 * exact[a]! * Math.sqrt(2 / (M - 1)));
        // far less than independent epochs would give (the correlated error): the average of 30
        // epochs keeps most of one epoch's variance
        expect(exact[a]!).toBeGreaterThan(0.3 * r.sdEnu[a]![sp.epoch0 + k0]! ** 2);
      }
    }
  });
  it('is reproducible: the same seed and count give the same draws, another seed others', () => {
    const a = sampleTracks(r, 5, 7), b = sampleTracks(r, 5, 7), c = sampleTracks(r, 5, 8);
    for (let d = 0; d < 5; d++) for (let ax = 0; ax < 3; ax++) expect(Array.from(b.draws[d]!.posEnu[ax])).toEqual(Array.from(a.draws[d]!.posEnu[ax]));
    expect(c.draws[0]!.posEnu[0][10]).not.toBe(a.draws[0]!.posEnu[0][10]);
  });
  it('gives geodetic coordinates of the local positions (through the frame: at the mean, the result’s lat/lon within 1e-9°)', () => {
    // the draws' mean position converts to the result's own coordinates (the frame is shared)
    const j = 123;
    let lat = 0, lon = 0;
    for (const d of td.draws) {
      lat += d.latDeg[j]! / M;
      lon += d.lonDeg[j]! / M;
    }
    const sdDeg = (3 * r.sdEnu[1]![j]!) / Math.sqrt(M) / 111000;
    expect(Math.abs(lat - r.latDeg[j]!)).toBeLessThan(sdDeg);
    expect(Math.abs(lon - r.lonDeg[j]!)).toBeLessThan(sdDeg / Math.cos((r.latDeg[j]! * Math.PI) / 180));
    if (r.hasHeight) expect(Math.abs(td.draws[0]!.heightM[j]! - td.draws[0]!.posEnu[2][j]! - (r.heightM[j]! - r.posEnu[2][j]!))).toBeLessThan(1e-9);
  });
  it('measure: the posterior of a function of the track (the east coordinate at one epoch: the smoother’s mean and sd within 3 SE)', () => {
    const j = 200;
    const q = measure(r, (t) => t.posEnu[0][j]!, 800, 3);
    const sd = r.sdEnu[0][j]!;
    expect(Math.abs(q.estimate - r.posEnu[0][j]!)).toBeLessThan(3 * sd / Math.sqrt(800));
    expect(Math.abs(q.sd - sd)).toBeLessThan(3 * sd / Math.sqrt(2 * 799));
    expect(q.lo95).toBeLessThan(q.estimate);
    expect(q.hi95).toBeGreaterThan(q.estimate);
  });
  it('says clearly when no posterior is held', () => {
    const r2 = processSession(readFixCsv(scenarioCsv(sc), 'walk-3b.csv', cfg), cfg, 'walk-3b');
    releasePosterior(r2);
    expect(() => sampleTracks(r2, 2, 1)).toThrow(/no joint posterior/);
  });
});

describe('draws under the constant-acceleration model (4 states per axis: the general backward step)', () => {
  const cfgCa = loadConfig({ overrides: { ...NO_FLOOR, model: { motion: 'ca' } } });
  const scD = simulate(defaultSpec('drone', 4, { durationSec: 120 }));
  const rc = processSession(readFixCsv(scenarioCsv(scD), 'drone-4.csv', cfgCa), cfgCa, 'drone-4');
  const Mc = 600;
  const tdc = sampleTracks(rc, Mc, 5);
  it.each([0, 1, 2])('axis %d: per-epoch variance within 3 standard errors of the smoother’s, at 5 epochs', (a) => {
    for (const j of [0, 101, 250, 433, rc.N - 1]) {
      let m = 0, v = 0;
      for (const d of tdc.draws) m += d.posEnu[a]![j]! / Mc;
      for (const d of tdc.draws) v += (d.posEnu[a]![j]! - m) ** 2 / (Mc - 1);
      const P = rc.sdEnu[a]![j]! ** 2;
      expect(Math.abs(v - P)).toBeLessThan(3 * P * Math.sqrt(2 / (Mc - 1)));
    }
  });
  it('survey products exist for the drone log (occupations while hovering, lengths with intervals)', () => {
    const sv = rc.survey!;
    expect(sv.draws).toBe(200);
    const total = sv.lengths.at(-1)!.horizontalM!;
    expect(total.sd).toBeGreaterThan(0);
    expect(total.lo95).toBeLessThanOrEqual(total.estimate);
    expect(total.hi95).toBeGreaterThanOrEqual(total.estimate);
  });
});
