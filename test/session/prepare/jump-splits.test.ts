/**
 * Splitting a session at impossible jumps that persist (src/session/prepare/segments.ts
 * splitAtJumps): a log joined from two places becomes two segments, with a warning naming the line;
 * a burst that comes back, fast motion, and a jump with too few fixes behind it are left alone.
 */
import { describe, expect, test } from 'vitest';
import { JUMP_MIN_M, JUMP_SPEED_MPS, splitAtJumps } from '../../../src/session/prepare/segments.js';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { gaussian, rng } from '../../helpers/park-miller.js';

/** Positions east (m) of n fixes at 1 s: offset(i) added to a 2 m s⁻¹ walk with 2 m noise (seeded). */
function series(n: number, offset: (i: number) => number, dtSec = 1) {
  const gauss = gaussian(7);
  const t = Float64Array.from({ length: n }, (_, i) => i * dtSec);
  const e = Float64Array.from({ length: n }, (_, i) => 2 * i * dtSec + offset(i) + 2 * gauss());
  const nn = Float64Array.from({ length: n }, () => 2 * gauss());
  return { t, e, n: nn, offered: new Uint8Array(n).fill(1) };
}

describe('splitAtJumps', () => {
  // the rule: a jump > max(JUMP_MIN_M, JUMP_SPEED_MPS · Δt) with both sides holding together
  test.each([
    { name: 'a persistent 5 km jump at fix 100 splits there', offset: (i: number) => (i >= 100 ? 5000 : 0), dt: 1, split: [100] },
    { name: 'two persistent jumps split twice', offset: (i: number) => (i >= 100 ? 5000 : 0) + (i >= 150 ? -2000 : 0), dt: 1, split: [100, 150] },
    { name: 'a 5 km burst of 3 fixes that comes back does not split', offset: (i: number) => (i >= 100 && i < 103 ? 5000 : 0), dt: 1, split: [] },
    { name: 'a 400 m jump (below JUMP_MIN_M) does not split', offset: (i: number) => (i >= 100 ? 400 : 0), dt: 1, split: [] },
    { name: 'a persistent jump with one outlier among the fixes after it still splits', offset: (i: number) => (i >= 100 ? 5000 : 0) + (i === 102 ? 3000 : 0), dt: 1, split: [100] },
    { name: 'a persistent jump 3 fixes before the end does not split (too few fixes behind it)', offset: (i: number) => (i >= 197 ? 5000 : 0), dt: 1, split: [] },
    { name: 'at 60 s a fix 6 km on (100 m/s, below JUMP_SPEED_MPS) does not split', offset: (i: number) => (i >= 100 ? 6000 - 120 : 0), dt: 60, split: [] },
  ])('$name', ({ offset, dt, split }) => {
    const s = series(200, offset, dt);
    const { segments, jumps } = splitAtJumps([[0, 199]], s.t, s.e, s.n, s.offered);
    expect(jumps.map((j) => j.fix)).toEqual(split);
    expect(segments.length).toBe(split.length + 1);
    // the segments cover the fixes in order, without overlap
    expect(segments[0]![0]).toBe(0);
    expect(segments[segments.length - 1]![1]).toBe(199);
    for (let k = 1; k < segments.length; k++) expect(segments[k]![0]).toBe(segments[k - 1]![1] + 1);
  });
  test('the thresholds are physical: faster than any platform the users carry, longer than any working fix error', () => {
    expect(JUMP_SPEED_MPS).toBeGreaterThanOrEqual(100);
    expect(JUMP_MIN_M).toBeGreaterThanOrEqual(200);
  });
});

describe('a log joined from two places (simulated: a static receiver, then 5.5 km north from line 303 on)', () => {
  const rows: string[] = ['time,lat,lon'];
  const r = rng(3);
  for (let i = 0; i < 600; i++) {
    const t = new Date(Date.UTC(2026, 4, 3, 10, 0, i)).toISOString();
    rows.push(`${t},${(-33.8688 + (i >= 301 ? 0.05 : 0) + (r() - 0.5) * 4e-5).toFixed(8)},${(151.2093 + (r() - 0.5) * 5e-5).toFixed(8)}`);
  }
  const cfg = loadConfig();
  const res = processSession(readFixCsv(rows.join('\n'), 'joined.csv', cfg), cfg, 'joined');
  test('two segments, no fix flagged, a warning naming the line of the first fix after the jump', () => {
    expect(res.metrics.segmentCount).toBe(2);
    expect(res.metrics.outlierCount).toBe(0);
    const w = res.warnings.filter((x) => x.code === 'jump');
    expect(w.length).toBe(1);
    expect(w[0]!.line).toBe(303);
    expect(w[0]!.message).toMatch(/jump 5\.\d km in 1\.0 s/);
    // the track does not slide between the two places: every epoch lies at one of them
    const north = res.posEnu[1];
    const mid = (north[0]! + north[res.N - 1]!) / 2;
    for (let j = 0; j < res.N; j++) expect(Math.abs(north[j]! - mid)).toBeGreaterThan(2000);
  });
});
