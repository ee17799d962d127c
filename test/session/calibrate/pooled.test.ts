/**
 * The pooled calibration of logs taken with one receiver (session/calibrate/pooled.ts,
 * session/process-pooled.ts), on seeded simulated logs with known noise:
 * - a static occupation in one log identifies the correlated error, which three moving logs alone
 *   cannot separate from their motion; pooled, the moving logs' 95% ellipses hold the truth at
 *   about their nominal rate (the purpose of pooling; common practice for coverage checks);
 * - the pooled search reaches the maximum of the joint objective: the exact gradient and difference
 *   gradients meet (joint log-likelihood within 0.01, every estimate within a tenth of its standard
 *   error: the acceptance bound of the fast calibration);
 * - the shared parameters' standard errors come from all the logs (smaller than any log's own);
 *   each log keeps its own process noise;
 * - one first round for a pool's moving logs (the longest one's; the others start from it);
 * - a log too short to calibrate takes the pool's noise; a group with fewer than two long logs is
 *   not pooled and says so.
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { K2_95 } from '../../../src/estimation/error-ellipse.js';
import { processSession, beginSession } from '../../../src/session/process-session.js';
import { processPooledSessions } from '../../../src/session/process-pooled.js';
import { calibrationFirstRound } from '../../../src/session/calibrate/calibration-rounds.js';
import { calibratePooled, type PoolMember } from '../../../src/session/calibrate/pooled.js';
import { DEFAULT_CALIBRATION, type CalibrationResult } from '../../../src/session/calibrate/calibrate.js';
import { defaultSpec, scenarioCsv, simulate, type Scenario } from '../../../src/simulate/scenario.js';
import type { TruthTrack } from '../../../src/simulate/truth.js';
import type { SessionResult } from '../../../src/session/result/result.js';

const cfg = loadConfig();

/** A receiver whose correlated error is twice the profile's (3 m for 1.5 m, τ 60 s), white 1 m. */
function receiverErrors(seed: number) {
  return { ...defaultSpec('vehicle', seed).errors, whiteSigmaHM: 1, gmSigmaHM: 3, gmSigmaVM: 4.5, gmTauSec: 60, burstsPer100: 0.3 };
}

/** A truth that stands still for durationSec. */
function stillTruth(durationSec: number): TruthTrack {
  const dt = 0.05, n = Math.round(durationSec / dt);
  return { dtSec: dt, e: new Float64Array(n), n: new Float64Array(n), u: new Float64Array(n), durationSec: (n - 1) * dt };
}

function cover95(sc: Scenario, r: SessionResult): { inside: number; n: number } {
  let inside = 0;
  for (let j = 0; j < r.N; j++) {
    const [te, tn] = sc.truthEnuAt(r.tSec[j]!);
    const [e, n] = sc.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, 0);
    const de = e - te, dn = n - tn;
    const ve = r.sdEnu[0][j]! ** 2, vn = r.sdEnu[1][j]! ** 2, c = r.covEN[j]!;
    if ((vn * de * de - 2 * c * de * dn + ve * dn * dn) / (ve * vn - c * c) <= K2_95) inside++;
  }
  return { inside, n: r.N };
}

type Est = Record<string, { value: number; se: number }>;
const est = (r: SessionResult): Est => (r.info.calibration as { estimates: Est }).estimates;

describe('three moving logs and a static occupation of one receiver', () => {
  const moving = [1, 2, 3].map((s) => simulate({ ...defaultSpec('vehicle', s), errors: receiverErrors(s) }));
  const still = simulate({ ...defaultSpec('vehicle', 9, { durationSec: 2400 }), errors: { ...receiverErrors(9), gaps: [] } }, stillTruth(2400));
  const scs = [...moving, still];
  const inputs = scs.map((sc, i) => ({ series: readFixCsv(scenarioCsv(sc), `rx/log${i}.csv`, cfg), name: `rx/log${i}` }));
  const alone = inputs.map((x) => processSession(x.series, cfg, x.name));
  const pooled = processPooledSessions(inputs, cfg, 'rx') as SessionResult[];
  const pool = (c: Array<{ inside: number; n: number }>) => c.reduce((a, x) => a + x.inside, 0) / c.reduce((a, x) => a + x.n, 0);
  const aloneCover = pool(moving.map((sc, i) => cover95(sc, alone[i]!)));
  const pooledCover = pool(moving.map((sc, i) => cover95(sc, pooled[i]!)));
  console.log(
    `moving logs' 95% coverage alone ${aloneCover.toFixed(3)} (correlated sigma ${alone.slice(0, 3).map((r) => est(r).gmHorizontalSigmaM!.value.toFixed(2)).join(', ')} m), ` +
      `pooled ${pooledCover.toFixed(3)} (${est(pooled[0]!).gmHorizontalSigmaM!.value.toFixed(2)} ± ${est(pooled[0]!).gmHorizontalSigmaM!.se.toFixed(2)} m; truth 3)`,
  );

  it('every log processed, each recording the pool and its members', () => {
    for (const r of pooled) {
      expect(r).not.toBeInstanceOf(Error);
      const p = (r.info.calibration as { pool: { group: string; members: string[] } }).pool;
      expect(p.group).toBe('rx');
      expect(p.members).toEqual(inputs.map((x) => x.name));
    }
  });
  it('one first round for the moving logs: the first of them (the longest) runs it, the others start from it; the static log runs its own', () => {
    const ev = pooled.map((r) => (r.info.calibration as { evaluations: number }).evaluations);
    // the joint round's evaluations are every log's; a first round's only its own log's
    expect(ev[1]).toBe(ev[2]);
    for (const i of [0, 3]) expect(ev[i]! - ev[1]!).toBeGreaterThan(100);
  });
  it('alone, the moving logs cannot tell the correlated error from their motion (measured 0.41–0.47)', () => {
    expect(aloneCover).toBeLessThan(0.6);
  });
  it('pooled, the static log identifies it for all: correlated sigma within 25% of the truth, coverage of the moving logs 0.90–0.99', () => {
    expect(Math.abs(est(pooled[0]!).gmHorizontalSigmaM!.value / 3 - 1)).toBeLessThan(0.25);
    expect(pooledCover).toBeGreaterThanOrEqual(0.9);
    expect(pooledCover).toBeLessThanOrEqual(0.99);
  });
  it('shared parameters: one value, with a relative standard error below every log’s own', () => {
    const rel = (e: { value: number; se: number }) => e.se / e.value;
    for (const nm of ['sigmaHorizontalM', 'gmHorizontalSigmaM', 'gmTauSec']) {
      const v = pooled.map((r) => est(r)[nm]!.value);
      expect(new Set(v).size).toBe(1);
      const seAlone = Math.min(...alone.map((r) => rel(est(r)[nm]!)));
      expect(rel(est(pooled[0]!)[nm]!), nm).toBeLessThan(seAlone);
    }
    // the white sigma is seen by every log: about √(2400 / 6000) = 0.63 of the longest log's (measured 0.70)
    expect(rel(est(pooled[0]!).sigmaHorizontalM!)).toBeLessThan(0.75 * Math.min(...alone.map((r) => rel(est(r).sigmaHorizontalM!))));
  });
  it('each log keeps its own process noise', () => {
    const q = pooled.map((r) => est(r).qHorizontal!.value);
    expect(new Set(q.map((v) => v.toPrecision(6))).size).toBe(q.length);
    // the static log's stays near its lower bound, the moving ones' near their own single-log values
    expect(q[3]!).toBeLessThan(1e-3);
    for (let i = 0; i < 3; i++) expect(Math.abs(Math.log(q[i]! / est(alone[i]!).qHorizontal!.value))).toBeLessThan(0.3);
  });
});

/** The members of a pool as processPooledSessions builds them (first rounds run). */
function members(scs: Scenario[]): PoolMember[] {
  return scs.map((sc, i) => {
    const b = beginSession(readFixCsv(scenarioCsv(sc), `m${i}.csv`, cfg), cfg, `m${i}`);
    const first = calibrationFirstRound(b.ps, cfg, b.prior, b.ro);
    return { name: b.name, ps: b.ps, prior: b.prior, start: first.cal1.params, uses: first.uses! };
  });
}

describe('the pooled search reaches the joint maximum', () => {
  const scs = [4, 5, 6].map((s) => simulate(defaultSpec('walk', s, { durationSec: 900 })));
  const m = members(scs);
  const exact = calibratePooled(m, cfg, 'g') as CalibrationResult[];
  const diff = calibratePooled(m, cfg, 'g', { ...DEFAULT_CALIBRATION, gradient: 'difference' }) as CalibrationResult[];
  it('exact and difference gradients: joint log-likelihood within 0.01, estimates within a tenth of their standard error', () => {
    expect(exact[0]!.info.method).toContain('exact gradient');
    expect(diff[0]!.info.method).not.toContain('exact gradient');
    expect(Math.abs(exact[0]!.info.pool!.logLikelihood - diff[0]!.info.pool!.logLikelihood)).toBeLessThan(0.01);
    for (let i = 0; i < m.length; i++)
      for (const [nm, e] of Object.entries(exact[i]!.info.estimates)) {
        const d = diff[i]!.info.estimates[nm as keyof typeof exact[0]['info']['estimates']]!;
        const tol = e!.atBound || !Number.isFinite(e!.se) ? 0.01 * Math.max(Math.abs(e!.value), 1) : 0.1 * e!.se;
        expect(Math.abs(e!.value - d.value), `${nm} of log ${i}`).toBeLessThanOrEqual(tol);
      }
  });
  it('standard errors from the structured Hessian of exact gradients agree with second differences of the objective (within 10%)', () => {
    let compared = 0;
    for (let i = 0; i < m.length; i++)
      for (const [nm, e] of Object.entries(exact[i]!.info.estimates)) {
        const d = diff[i]!.info.estimates[nm as keyof typeof exact[0]['info']['estimates']]!;
        if (e!.atBound || !Number.isFinite(e!.se) || !Number.isFinite(d.se)) continue;
        compared++;
        expect(Math.abs(e!.se / d.se - 1), `${nm} of log ${i}`).toBeLessThan(0.1);
      }
    expect(compared).toBeGreaterThanOrEqual(3 * 6);
  });
});

describe('groups that cannot be pooled whole', () => {
  it('a log too short to calibrate takes the pool’s noise and the profile’s process noise', () => {
    const scs = [7, 8].map((s) => simulate(defaultSpec('walk', s, { durationSec: 900 })));
    scs.push(simulate(defaultSpec('walk', 10, { durationSec: 100 })));
    const r = processPooledSessions(scs.map((sc, i) => ({ series: readFixCsv(scenarioCsv(sc), `s${i}.csv`, cfg), name: `s${i}` })), cfg, 'g') as SessionResult[];
    const p = (r[2]!.info.calibration as { pool: { members: string[]; given: string[] } }).pool;
    expect(p.members).toEqual(['s0', 's1']);
    expect(p.given).toEqual(['s2']);
    expect(est(r[2]!).gmHorizontalSigmaM!.value).toBe(est(r[0]!).gmHorizontalSigmaM!.value);
    expect(r[2]!.warnings.some((w) => w.code === 'calibration' && w.message.includes('the noise estimated on the other logs of "g"'))).toBe(true);
  });
  it('fewer than two long logs: each calibrated alone, with a warning naming why', () => {
    const scs = [simulate(defaultSpec('walk', 11, { durationSec: 900 })), simulate(defaultSpec('walk', 12, { durationSec: 100 }))];
    const inputs = scs.map((sc, i) => ({ series: readFixCsv(scenarioCsv(sc), `t${i}.csv`, cfg), name: `t${i}` }));
    const r = processPooledSessions(inputs, cfg, 'g') as SessionResult[];
    const alone = processSession(inputs[0]!.series, cfg, 't0');
    expect(est(r[0]!).gmHorizontalSigmaM!.value).toBe(est(alone).gmHorizontalSigmaM!.value);
    expect((r[0]!.info.calibration as { pool: { refused: string } }).pool.refused).toMatch(/fewer than two logs/);
    expect(r[0]!.warnings.some((w) => w.message.startsWith('noise not pooled over "g"'))).toBe(true);
  });
});
