/**
 * Survey products against simulator truth, pooled over seeded logs of the walking survey with stops
 * (src/simulate: white noise 2 m, correlated error 1.5 m with τ = 60 s, bursts, gaps):
 * - every true stop of ≥ 20 s is found (recall ≥ 0.95 pooled); no occupation holds an epoch where
 *   the truth moves at walking speed (≥ 1 m/s);
 * - the 95% ellipses of the occupied points hold the true point (the truth averaged over the same
 *   epochs) 0.90–0.99 of the time, pooled (on the walk a measured shortfall on the cautious side,
 *   it.fails: 1.000, 41 of 41, from these logs' calibrated correlated error: docs/survey.md; on the
 *   loops 0.966);
 * - the horizontal length of each segment (on the measured polyline's vertices; the truth's polyline
 *   through the same vertices, each built from the truth at the same epochs: truthVertex) has a mean
 *   error within its mean sd; its 95% interval holds the truth 0.90–0.99 pooled (walk 0.917; on the
 *   loops a measured shortfall, it.fails: 0.875);
 * - on closed loops (a rectangle walked round, stops at its corners) every loop is found closed,
 *   corner-to-corner distances' intervals hold the truth 0.90–0.99, the area's mean error is within
 *   its sd, and its 95% interval's coverage is a measured shortfall (it.fails: 0.83; the corner
 *   points' errors along their bisectors, docs/survey.md).
 * The criteria are the product's own (uncertainty is a product: common practice for coverage checks).
 */
import { describe, expect, it } from 'vitest';
import { loadConfig } from '../../../src/config/load.js';
import { readFixCsv } from '../../../src/input/csv-fixes.js';
import { processSession } from '../../../src/session/process-session.js';
import { K2_95 } from '../../../src/estimation/error-ellipse.js';
import { defaultSpec, scenarioCsv, simulate, type Scenario } from '../../../src/simulate/scenario.js';
import { truthAt, type TruthTrack } from '../../../src/simulate/truth.js';
import type { SessionResult } from '../../../src/session/result/result.js';
import type { SurveyVertex } from '../../../src/session/survey/survey.js';
import { intersectLines, legSums, lineOfSums, type Line } from '../../../src/session/survey/leg-corners.js';

const cfg = loadConfig();

function run(sc: Scenario): SessionResult {
  const series = readFixCsv(scenarioCsv(sc), `${sc.spec.kind}-${sc.spec.seed}.csv`, cfg);
  return processSession(series, cfg, `${sc.spec.kind}-${sc.spec.seed}`);
}

/** True stops: runs of truth speed < 0.05 m/s (on the truth's fine grid), as [start, end] in s from the log start. */
function trueStops(tr: TruthTrack): Array<[number, number]> {
  const out: Array<[number, number]> = [];
  let a = -1;
  for (let k = 1; k < tr.e.length; k++) {
    const v = Math.hypot(tr.e[k]! - tr.e[k - 1]!, tr.n[k]! - tr.n[k - 1]!) / tr.dtSec;
    if (v < 0.05 && a < 0) a = k;
    if ((v >= 0.05 || k === tr.e.length - 1) && a >= 0) {
      out.push([a * tr.dtSec, k * tr.dtSec]);
      a = -1;
    }
  }
  return out;
}

function truthSpeed(tr: TruthTrack, t: number): number {
  const p = [0, 0, 0], q = [0, 0, 0];
  truthAt(tr, t - 0.5, p);
  truthAt(tr, t + 0.5, q);
  return Math.hypot(q[0]! - p[0]!, q[1]! - p[1]!);
}

/**
 * The truth at a vertex of the measured polyline, built as the vertex is: the truth averaged over an
 * occupied point's epochs, the truth at a single epoch, and at a corner rebuilt from its legs the
 * intersection of the truth's own lines fitted over the same two windows of epochs.
 */
function truthVertex(sc: Scenario, r: SessionResult, v: SurveyVertex): number[] {
  const m = [0, 0, 0];
  for (let j = v.first; j <= v.last; j++) {
    const t = sc.truthEnuAt(r.tSec[j]!);
    for (let a = 0; a < 3; a++) m[a] += t[a]! / (v.last - v.first + 1);
  }
  if (v.corner) {
    const line = (w: [number, number]): Line => {
      const e: number[] = [], n: number[] = [];
      for (let j = w[0]; j <= w[1]; j++) {
        const t = sc.truthEnuAt(r.tSec[j]!);
        e.push(t[0]!);
        n.push(t[1]!);
      }
      return lineOfSums(legSums(e, n, 0, e.length - 1, e[0]!, n[0]!), e[0]!, n[0]!);
    };
    const x = intersectLines(line(v.corner.legA), line(v.corner.legB));
    m[0] = x.e;
    m[1] = x.n;
  }
  return m;
}

interface Pool {
  stops: number;
  found: number;
  occupations: number;
  movingOcc: number;
  inEll: number;
  inLen: number;
  lenErr: number;
  lenSd: number;
  nLen: number;
  rawExcess: number;
  rawExpected: number;
}

function scoreWalk(sc: Scenario, r: SessionResult, p: Pool): void {
  const t0 = sc.spec.startUnixSec;
  const sv = r.survey!;
  const occ = sv.occupations;
  for (const [a, b] of trueStops(sc.truth)) {
    // a stop with at least 20 s of the log's epochs inside it (the simulator cuts gaps)
    let inside = 0;
    for (let j = 0; j < r.N; j++) if (r.tSec[j]! - t0 >= a && r.tSec[j]! - t0 <= b) inside++;
    if (inside < 20) continue;
    p.stops++;
    if (occ.some((o) => o.startSec - t0 <= b && o.endSec - t0 >= a)) p.found++;
  }
  for (const o of occ) {
    p.occupations++;
    let vmax = 0;
    const m = [0, 0, 0];
    for (let j = o.first; j <= o.last; j++) {
      vmax = Math.max(vmax, truthSpeed(sc.truth, r.tSec[j]! - t0));
      const t = sc.truthEnuAt(r.tSec[j]!);
      for (let a = 0; a < 3; a++) m[a] += t[a]! / (o.last - o.first + 1);
    }
    if (vmax >= 1) p.movingOcc++;
    const [e, n] = sc.frame.geodeticToEnu(o.latDeg, o.lonDeg, o.heightM);
    const de = e - m[0]!, dn = n - m[1]!;
    if (de * de / o.sdEnu[0] ** 2 + dn * dn / o.sdEnu[1] ** 2 <= K2_95) p.inEll++;
  }
  const vt = sv.vertices.map((v) => truthVertex(sc, r, v));
  for (const L of sv.lengths) {
    if (L.segment < 0 || !L.horizontalM) continue;
    // the truth's polyline through the same vertices
    let truth = 0;
    for (let i = 1; i < sv.vertices.length; i++)
      if (sv.vertices[i]!.segment === L.segment && sv.vertices[i - 1]!.segment === L.segment) truth += Math.hypot(vt[i]![0]! - vt[i - 1]![0]!, vt[i]![1]! - vt[i - 1]![1]!);
    if (truth < 50) continue;
    p.nLen++;
    if (truth >= L.horizontalM.lo95 && truth <= L.horizontalM.hi95) p.inLen++;
    p.lenErr += L.horizontalM.estimate - truth;
    p.lenSd += L.horizontalM.sd;
  }
}

const newPool = (): Pool => ({ stops: 0, found: 0, occupations: 0, movingOcc: 0, inEll: 0, inLen: 0, lenErr: 0, lenSd: 0, nLen: 0, rawExcess: 0, rawExpected: 0 });

describe('survey products on the walking survey with stops (pooled over seeds)', () => {
  const SEEDS = [1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12];
  const p = newPool();
  for (const seed of SEEDS) {
    const sc = simulate(defaultSpec('walk', seed));
    scoreWalk(sc, run(sc), p);
  }
  console.log(
    `walk survey, ${SEEDS.length} seeds: true stops ≥ 20 s ${p.stops}, found ${p.found} (recall ${(p.found / p.stops).toFixed(3)}); ` +
      `occupations ${p.occupations}, while moving ${p.movingOcc}; ellipse coverage ${(p.inEll / p.occupations).toFixed(3)}; ` +
      `length intervals ${p.inLen}/${p.nLen} (${(p.inLen / p.nLen).toFixed(3)}), mean error ${(p.lenErr / p.nLen).toFixed(2)} m, mean sd ${(p.lenSd / p.nLen).toFixed(2)} m`,
  );
  it('finds every true stop of 20 s or more (recall ≥ 0.95)', () => {
    expect(p.stops).toBeGreaterThan(30);
    expect(p.found / p.stops).toBeGreaterThanOrEqual(0.95);
  });
  it('reports no occupation while the truth moves at walking speed', () => {
    expect(p.movingOcc).toBe(0);
  });
  // measured: 41/41 here, 37/39 on seeds 201–212; with the correlated error at its true σ and τ
  // 40/41: the over-coverage follows these logs' calibration (docs/survey.md)
  it.fails('95% ellipses of occupied points hold the true point 0.90–0.99 pooled', () => {
    expect(p.occupations).toBeGreaterThan(30);
    const c = p.inEll / p.occupations;
    expect(c).toBeGreaterThanOrEqual(0.9);
    expect(c).toBeLessThanOrEqual(0.99);
  });
  it('the length estimate’s mean error is within its mean sd', () => {
    expect(p.nLen).toBeGreaterThanOrEqual(20);
    expect(Math.abs(p.lenErr / p.nLen)).toBeLessThanOrEqual(p.lenSd / p.nLen);
  });
  // with corners rebuilt from their legs (session/survey/leg-corners.ts): 22/24, mean error −0.1 m against
  // a mean sd of 3.7 m (before: 21/24, −2.2 m, the smoothed track cutting the turns)
  it('length 95% intervals hold the truth 0.90–0.99 pooled', () => {
    const c = p.inLen / p.nLen;
    expect(c).toBeGreaterThanOrEqual(0.9);
    expect(c).toBeLessThanOrEqual(0.99);
  });
});

/**
 * A closed loop: a rectangle of a × b m walked round at 1.3 m/s from one corner back to it, with a
 * 25 s stop at every corner (accelerating and braking at 0.6 m/s²), on the truth's fine grid.
 */
function loopTruth(aM: number, bM: number, headingRad: number, dtSec = 0.05): TruthTrack {
  const v = 1.3, acc = 0.6, stopSec = 25;
  const e: number[] = [], n: number[] = [], u: number[] = [];
  let pe = 0, pn = 0;
  const push = (): void => {
    e.push(pe);
    n.push(pn);
    u.push(0);
  };
  const stop = (): void => {
    for (let t = 0; t < stopSec; t += dtSec) push();
  };
  stop();
  const edges = [aM, bM, aM, bM];
  let h = headingRad;
  for (const L of edges) {
    // trapezoidal speed profile over the edge
    let s = 0, speed = 0;
    while (s < L) {
      const brake = (speed * speed) / (2 * acc) >= L - s;
      speed = brake ? Math.max(speed - acc * dtSec, 0.05) : Math.min(speed + acc * dtSec, v);
      const ds = Math.min(speed * dtSec, L - s);
      s += ds;
      pe += ds * Math.sin(h);
      pn += ds * Math.cos(h);
      push();
    }
    h += Math.PI / 2;
    stop();
  }
  return { dtSec, e: Float64Array.from(e), n: Float64Array.from(n), u: Float64Array.from(u), durationSec: (e.length - 1) * dtSec };
}

describe('survey products on closed loops (a rectangle walked round, pooled over seeds)', () => {
  const SEEDS = Array.from({ length: 24 }, (_, i) => 101 + i);
  let inArea = 0, nArea = 0, areaErr = 0, areaSd = 0, closedCount = 0, inDist = 0, nDist = 0;
  const p = newPool();
  for (const seed of SEEDS) {
    const aM = 60 + ((seed * 37) % 60), bM = 40 + ((seed * 53) % 50), hd = (seed * 0.7) % (2 * Math.PI);
    const truth = loopTruth(aM, bM, hd);
    const spec = defaultSpec('walk', seed, { durationSec: Math.floor(truth.durationSec) });
    spec.errors.gaps = [];
    const sc = simulate(spec, truth);
    const r = run(sc);
    scoreWalk(sc, r, p);
    const sv = r.survey!;
    if (sv.closed) closedCount++;
    // distances between consecutive occupied points against the truth averaged over their epochs
    const tm = sv.occupations.map((o) => {
      const m = [0, 0];
      for (let j = o.first; j <= o.last; j++) {
        const t = sc.truthEnuAt(r.tSec[j]!);
        m[0] += t[0] / (o.last - o.first + 1);
        m[1] += t[1] / (o.last - o.first + 1);
      }
      return m;
    });
    for (const d of sv.distances) {
      const a = Number(d.from.slice(1)) - 1, b = Number(d.to.slice(1)) - 1;
      if (b !== a + 1) continue;
      const truthD = Math.hypot(tm[a]![0]! - tm[b]![0]!, tm[a]![1]! - tm[b]![1]!);
      nDist++;
      if (truthD >= d.horizontalM.lo95 && truthD <= d.horizontalM.hi95) inDist++;
    }
    if (!sv.areaM2) continue;
    // the truth polygon through the same epochs
    let a2 = 0;
    for (let j = 0; j < r.N; j++) {
      const k = j + 1 < r.N ? j + 1 : 0;
      const tj = sc.truthEnuAt(r.tSec[j]!), tk = sc.truthEnuAt(r.tSec[k]!);
      a2 += tj[0] * tk[1] - tk[0] * tj[1];
    }
    const A = Math.abs(a2) / 2;
    nArea++;
    if (A >= sv.areaM2.lo95 && A <= sv.areaM2.hi95) inArea++;
    areaErr += sv.areaM2.estimate - A;
    areaSd += sv.areaM2.sd;
  }
  console.log(
    `closed loops, ${SEEDS.length} seeds: closed ${closedCount}; area intervals ${inArea}/${nArea} (${(inArea / nArea).toFixed(3)}), mean error ${(areaErr / nArea).toFixed(1)} m², mean sd ${(areaSd / nArea).toFixed(1)} m²; ` +
      `distances between consecutive points ${inDist}/${nDist} (${(inDist / nDist).toFixed(3)}); stops ${p.stops}, found ${p.found}; occupations ${p.occupations}, ellipse coverage ${(p.inEll / p.occupations).toFixed(3)}; length intervals ${p.inLen}/${p.nLen}, mean error ${(p.lenErr / p.nLen).toFixed(2)} m, mean sd ${(p.lenSd / p.nLen).toFixed(2)} m`,
  );
  it('every loop is found closed', () => {
    expect(closedCount).toBe(SEEDS.length);
  });
  it('the area estimate’s mean error is within its mean sd', () => {
    expect(nArea).toBe(SEEDS.length);
    expect(Math.abs(areaErr / nArea)).toBeLessThanOrEqual(areaSd / nArea);
  });
  // measured shortfall: 20/24 (0.83; at a true 0.95, 20 or fewer of 24 has probability 0.03; on
  // seeds 301–324: 23/24); the same outward corners (docs/survey.md)
  it.fails('area 95% intervals hold the true area 0.90–0.99 pooled', () => {
    const c = inArea / nArea;
    expect(c).toBeGreaterThanOrEqual(0.9);
    expect(c).toBeLessThanOrEqual(0.99);
  });
  // measured shortfall: 21 of 24 (0.875), mean error 1.16 m against a mean sd of 3.54 m; the corner
  // points sit outward along their bisectors by 0.14–0.35 sd and scatter 1.01–1.17 sd there (the
  // model's braking into a stop; docs/survey.md); on seeds 301–324: 20 of 24
  it.fails('loop length 95% intervals hold the truth 0.90–0.99 pooled, mean error within the mean sd', () => {
    const c = p.inLen / p.nLen;
    expect(c).toBeGreaterThanOrEqual(0.9);
    expect(c).toBeLessThanOrEqual(0.99);
    expect(Math.abs(p.lenErr / p.nLen)).toBeLessThanOrEqual(p.lenSd / p.nLen);
  });
  it('distances between consecutive occupied points: 95% intervals hold the truth 0.90–0.99 pooled', () => {
    expect(nDist).toBeGreaterThan(80);
    const c = inDist / nDist;
    expect(c).toBeGreaterThanOrEqual(0.9);
    expect(c).toBeLessThanOrEqual(0.99);
  });
  it('finds the corner stops and their 95% ellipses hold the true corner at least 90% of the time pooled', () => {
    expect(p.found / p.stops).toBeGreaterThanOrEqual(0.95);
    expect(p.movingOcc).toBe(0);
    const c = p.inEll / p.occupations;
    console.log(`corner stops: ${p.found}/${p.stops} found, 95% ellipses hold the true corner ${c.toFixed(3)} (${p.inEll}/${p.occupations})`);
    expect(c).toBeGreaterThanOrEqual(0.9);
  });
  /**
   * Known shortfall, kept as a test that must fail (vitest test.fails): the regions are cautious.
   * This simulated receiver's white noise (2 m) is larger than its correlated error (1.5 m), and
   * the correlated-error floor (session/check/correlated-floor.ts) assumes a correlated error of
   * at least 1.25 × the white sigma, so each occupied point's average carries an offset of about
   * 2 m sd it does not have: every ellipse holds its corner (1.00; 0.966 without the floor).
   */
  it.fails('the corner stops’ 95% ellipses hold the true corner at most 99% of the time pooled', () => {
    expect(p.inEll / p.occupations).toBeLessThanOrEqual(0.99);
  });
});

/**
 * Truth that follows the filter's own model (simulator kind "model": constant velocity driven by
 * white acceleration, the Gauss–Markov fix error, no bursts or gaps): here the posterior is the
 * right one, so the length intervals must hold the truth at their nominal rate. This separates the
 * draws' arithmetic from the walks' model mismatch (their shortfall above).
 */
describe('lengths on logs whose truth follows the model (pooled over seeds)', () => {
  const SEEDS = Array.from({ length: 32 }, (_, i) => i + 1);
  let n = 0, inI = 0, err = 0, sd = 0;
  for (const seed of SEEDS) {
    const sc = simulate(defaultSpec('model', seed, { durationSec: 600 }));
    const r = run(sc);
    const sv = r.survey!;
    const vt = sv.vertices.map((v) => truthVertex(sc, r, v));
    for (const L of sv.lengths) {
      if (L.segment < 0 || !L.horizontalM) continue;
      let T = 0;
      for (let k = 1; k < sv.vertices.length; k++)
        if (sv.vertices[k]!.segment === L.segment && sv.vertices[k - 1]!.segment === L.segment) T += Math.hypot(vt[k]![0] - vt[k - 1]![0], vt[k]![1] - vt[k - 1]![1]);
      if (T < 50) continue;
      n++;
      if (T >= L.horizontalM.lo95 && T <= L.horizontalM.hi95) inI++;
      err += L.horizontalM.estimate - T;
      sd += L.horizontalM.sd;
    }
  }
  console.log(`model-following truth, ${SEEDS.length} seeds: length intervals ${inI}/${n} (${(inI / n).toFixed(3)}), mean error ${(err / n).toFixed(2)} m, mean sd ${(sd / n).toFixed(2)} m`);
  it('length 95% intervals hold the truth 0.90–0.99 pooled, mean error within the mean sd', () => {
    expect(n).toBeGreaterThanOrEqual(30);
    expect(inI / n).toBeGreaterThanOrEqual(0.9);
    expect(inI / n).toBeLessThanOrEqual(0.99);
    expect(Math.abs(err / n)).toBeLessThanOrEqual(sd / n);
  });
});

/** Vehicles (stop-and-go in a street grid) and drones (climb, lines, descent). */
describe('vehicle and drone logs: stops found, none while moving', () => {
  const veh = newPool(), dr = newPool();
  for (const [kind, seed] of [['vehicle', 1], ['vehicle', 2], ['vehicle', 3], ['vehicle', 4], ['vehicle', 5], ['vehicle', 6], ['drone', 1], ['drone', 2], ['drone', 3]] as const) {
    const sc = simulate(defaultSpec(kind, seed));
    const r = run(sc);
    scoreWalk(sc, r, kind === 'vehicle' ? veh : dr);
    // 3D: a drone climbing on the spot moves
    const t0 = sc.spec.startUnixSec;
    for (const o of r.survey!.occupations) {
      let vmax = 0;
      for (let j = o.first; j <= o.last; j++) {
        const p = [0, 0, 0], q = [0, 0, 0];
        truthAt(sc.truth, r.tSec[j]! - t0 - 0.5, p);
        truthAt(sc.truth, r.tSec[j]! - t0 + 0.5, q);
        vmax = Math.max(vmax, Math.hypot(q[0]! - p[0]!, q[1]! - p[1]!, q[2]! - p[2]!));
      }
      if (vmax >= 1) (kind === 'vehicle' ? veh : dr).movingOcc++;
    }
  }
  console.log(
    `vehicle, 6 seeds: stops ≥ 20 s ${veh.stops}, found ${veh.found}; occupations ${veh.occupations}, while moving ${veh.movingOcc}; ellipse coverage ${(veh.inEll / veh.occupations).toFixed(3)}; ` +
      `drone, 3 seeds: occupations ${dr.occupations}, while moving (3D) ${dr.movingOcc}`,
  );
  it('reports none while the truth moves at 1 m/s or faster (3D)', () => {
    expect(veh.movingOcc).toBe(0);
    expect(dr.movingOcc).toBe(0);
  });
  // 19 of 22 found (0.86): a stop starts where the smoothed track's mean speed over 8 s and 4 s
  // centred on an epoch is below the still speed (session/survey/occupations.ts CENTRED_WINDOW_SEC);
  // 17 of 22 with the smoothed velocity alone. The 0.8 is this project's floor for vehicles, whose
  // smoothed velocity at a stop wanders with their large process noise.
  it('finds most vehicle stops of 20 s or more (at least 0.8 of them with the centred and displacement windows)', () => {
    expect(veh.stops).toBeGreaterThan(15);
    expect(veh.found / veh.stops).toBeGreaterThanOrEqual(0.8);
  });
});
