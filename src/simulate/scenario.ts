/**
 * The scenario simulator: an invented truth trajectory sampled at a fix rate and degraded with a
 * receiver-like error model (white noise scaled by a slowly varying HDOP, first-order Gauss–Markov
 * time-correlated error per axis, multipath-like outlier bursts, gaps, a few invalid rows).
 * Everything is seeded; the truth comes back with the fixes so tests can score the result.
 */
import { EnuFrame } from '../geodesy/ecef.js';
import { Rng } from './rng.js';
import { makeTruth, truthAt, type ScenarioKind, type TruthTrack } from './truth.js';
export type { ScenarioKind } from './truth.js';

export interface ErrorModel {
  whiteSigmaHM: number;
  whiteSigmaVM: number;
  gmSigmaHM: number;
  gmSigmaVM: number;
  gmTauSec: number;
  /** Time constant of the vertical correlated error (s); gmTauSec when absent. */
  gmTauVSec?: number;
  /** Mean number of outlier bursts per 100 fixes. */
  burstsPer100: number;
  burstMinM: number;
  burstMaxM: number;
  burstMaxEpochs: number;
  /** Gaps to cut: [start (s), length (s)]. */
  gaps: Array<[number, number]>;
  /** Number of (0, 0) rows to insert. */
  nullIslandRows: number;
  /** Scale the white noise by a varying HDOP (and write it). */
  varyHdop: boolean;
  /**
   * How strongly the white noise follows the written HDOP: its sigma is scaled by (hdop/1.1)^this
   * (1 when absent: proportional; 0: the column varies but says nothing about the error; the
   * satellite count follows HDOP either way).
   */
  hdopInfluence?: number;
}

export interface ScenarioSpec {
  kind: ScenarioKind;
  seed: number;
  durationSec: number;
  rateHz: number;
  /** Invented site of the scenario (geodetic origin of the truth frame). */
  origin: [number, number, number];
  startUnixSec: number;
  errors: ErrorModel;
}

export interface SimulatedFix {
  tSec: number;
  latDeg: number;
  lonDeg: number;
  heightM: number;
  hdop: number;
  sats: number;
  /** Truth ENU at this time (m, truth frame). */
  truthEnu: [number, number, number];
  outlier: boolean;
  invalid: boolean;
}

export interface Scenario {
  spec: ScenarioSpec;
  frame: EnuFrame;
  truth: TruthTrack;
  fixes: SimulatedFix[];
  /** Truth ENU at any UTC Unix time. */
  truthEnuAt(tSec: number): [number, number, number];
}

export const DEFAULT_ERRORS: Record<ScenarioKind, ErrorModel> = {
  walk: { whiteSigmaHM: 2.0, whiteSigmaVM: 3.5, gmSigmaHM: 1.5, gmSigmaVM: 2.5, gmTauSec: 60, burstsPer100: 1.0, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps: [[300, 20], [700, 90]], nullIslandRows: 2, varyHdop: true },
  vehicle: { whiteSigmaHM: 1.5, whiteSigmaVM: 3.0, gmSigmaHM: 1.5, gmSigmaVM: 2.5, gmTauSec: 45, burstsPer100: 1.0, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps: [[250, 25], [650, 90]], nullIslandRows: 2, varyHdop: true },
  model: { whiteSigmaHM: 1.5, whiteSigmaVM: 3.0, gmSigmaHM: 1.5, gmSigmaVM: 2.5, gmTauSec: 45, burstsPer100: 0, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps: [], nullIslandRows: 0, varyHdop: false },
  drone: { whiteSigmaHM: 1.2, whiteSigmaVM: 2.5, gmSigmaHM: 1.0, gmSigmaVM: 2.0, gmTauSec: 30, burstsPer100: 0.3, burstMinM: 15, burstMaxM: 80, burstMaxEpochs: 4, gaps: [[200, 8]], nullIslandRows: 1, varyHdop: true },
};

export const DEFAULT_SPECS: Record<ScenarioKind, Omit<ScenarioSpec, 'seed' | 'errors'>> = {
  walk: { kind: 'walk', durationSec: 1200, rateHz: 1, origin: [47.3769, 8.5417, 420], startUnixSec: Date.UTC(2026, 4, 12, 8, 0, 0) / 1000 },
  vehicle: { kind: 'vehicle', durationSec: 1200, rateHz: 1, origin: [52.52, 13.405, 40], startUnixSec: Date.UTC(2026, 4, 13, 9, 30, 0) / 1000 },
  model: { kind: 'model', durationSec: 1200, rateHz: 1, origin: [-33.87, 151.21, 30], startUnixSec: Date.UTC(2026, 4, 15, 7, 0, 0) / 1000 },
  drone: { kind: 'drone', durationSec: 600, rateHz: 5, origin: [45.0, 7.6, 250], startUnixSec: Date.UTC(2026, 4, 14, 10, 15, 0) / 1000 },
};

export function defaultSpec(kind: ScenarioKind, seed: number, overrides: Partial<ScenarioSpec> = {}): ScenarioSpec {
  return { ...DEFAULT_SPECS[kind], seed, errors: { ...DEFAULT_ERRORS[kind], gaps: DEFAULT_ERRORS[kind].gaps.slice() }, ...overrides };
}

/**
 * Simulate fixes along the scenario's invented truth, or along a given truth track (e.g. a recorded
 * drive, simulate/recorded-truth.ts), whose frame origin is then spec.origin.
 */
export function simulate(spec: ScenarioSpec, givenTruth?: TruthTrack): Scenario {
  const rng = new Rng(spec.seed);
  const truth = givenTruth ?? makeTruth(spec.kind, spec.seed, spec.durationSec);
  const frame = new EnuFrame(...spec.origin);
  const fixes = degradeAlong(rng, spec.errors, {
    count: Math.floor(spec.durationSec * spec.rateHz),
    dtSec: 1 / spec.rateHz,
    startUnixSec: spec.startUnixSec,
    frame,
    burstProbability: spec.errors.burstsPer100 / 100,
    truthEnuAt: (tRel) => {
      const tr = [0, 0, 0];
      truthAt(truth, tRel, tr);
      return [tr[0]!, tr[1]!, tr[2]!];
    },
  });
  return {
    spec,
    frame,
    truth,
    fixes,
    truthEnuAt(t: number) {
      const o = [0, 0, 0];
      truthAt(truth, t - spec.startUnixSec, o);
      return [o[0]!, o[1]!, o[2]!];
    },
  };
}

export interface DegradeOptions {
  /** Fix epochs (before gaps are cut) and their interval (s). */
  count: number;
  dtSec: number;
  startUnixSec: number;
  /** Frame of the truth, for the conversion of degraded positions to geodetic. */
  frame: EnuFrame;
  /** Probability that a burst starts at an epoch. */
  burstProbability: number;
  /** Truth ENU (m) at a time relative to the start (s). */
  truthEnuAt: (tRelSec: number) => [number, number, number];
}

/**
 * The receiver-like error model along a truth: HDOP-scaled white noise, a first-order Gauss–Markov
 * error per axis (evolving through gaps too), multipath-like bursts, gaps and (0, 0) rows. Shared by
 * this simulator and the IMU one (simulate/imu.ts), drawing from the caller's generator.
 */
export function degradeAlong(rng: Rng, E: ErrorModel, o: DegradeOptions): SimulatedFix[] {
  const gm = [0, 0, 0].map((_, a) => rng.normal() * (a < 2 ? E.gmSigmaHM : E.gmSigmaVM));
  let hdop = 1.0;
  let burstLeft = 0;
  let burst: [number, number, number] = [0, 0, 0];
  const fixes: SimulatedFix[] = [];
  const dt = o.dtSec;
  const phiH = Math.exp(-dt / E.gmTauSec);
  const phiV = Math.exp(-dt / (E.gmTauVSec ?? E.gmTauSec));
  const influence = E.hdopInfluence ?? 1;
  for (let k = 0; k < o.count; k++) {
    const tRel = k * dt;
    // time-correlated error evolves every epoch, also through gaps
    for (let a = 0; a < 3; a++) {
      const s = a < 2 ? E.gmSigmaHM : E.gmSigmaVM;
      const phi = a < 2 ? phiH : phiV;
      gm[a] = phi * gm[a]! + Math.sqrt(1 - phi * phi) * s * rng.normal();
    }
    if (E.varyHdop) hdop = Math.min(3, Math.max(0.7, hdop + 0.03 * rng.normal() * Math.sqrt(dt) + 0.01 * (1.1 - hdop) * dt));
    const inGap = E.gaps.some(([g0, len]) => tRel >= g0 && tRel < g0 + len);
    if (burstLeft === 0 && rng.next() < o.burstProbability) {
      burstLeft = rng.int(1, E.burstMaxEpochs);
      const mag = rng.uniform(E.burstMinM, E.burstMaxM);
      const az = rng.uniform(0, 2 * Math.PI);
      burst = [mag * Math.sin(az), mag * Math.cos(az), rng.uniform(-0.5, 0.5) * mag];
    }
    const isOutlier = burstLeft > 0;
    if (burstLeft > 0) burstLeft--;
    if (inGap) continue;
    const tr = o.truthEnuAt(tRel);
    // the white sigma follows HDOP to the power `influence` (1: exactly, as written to the column)
    const wf = E.varyHdop ? (influence === 1 ? hdop / 1.1 : Math.pow(hdop / 1.1, influence)) : 1;
    const eM = tr[0] + gm[0]! + wf * E.whiteSigmaHM * rng.normal() + (isOutlier ? burst[0] : 0);
    const nM = tr[1] + gm[1]! + wf * E.whiteSigmaHM * rng.normal() + (isOutlier ? burst[1] : 0);
    const uM = tr[2] + gm[2]! + wf * E.whiteSigmaVM * rng.normal() + (isOutlier ? burst[2] : 0);
    const [lat, lon, h] = o.frame.enuToGeodetic(eM, nM, uM);
    fixes.push({
      tSec: o.startUnixSec + tRel,
      latDeg: lat,
      lonDeg: lon,
      heightM: h,
      hdop: Math.round(hdop * 10) / 10,
      sats: Math.max(4, Math.round(14 - 3 * hdop + rng.uniform(-1, 1))),
      truthEnu: tr,
      outlier: isOutlier,
      invalid: false,
    });
  }
  // invalid placeholder rows at random epochs (receivers write 0,0 when they have no fix)
  for (let i = 0; i < E.nullIslandRows && fixes.length > 10; i++) {
    const f = fixes[rng.int(5, fixes.length - 5)]!;
    f.latDeg = 0;
    f.lonDeg = 0;
    f.heightM = 0;
    f.invalid = true;
    f.outlier = false;
  }
  return fixes;
}

/** The fixes as a fix CSV (ISO times, degrees, ellipsoidal height, hdop, sats). */
export function scenarioCsv(sc: Scenario, opts: { hdop?: boolean } = {}): string {
  const withHdop = opts.hdop ?? sc.spec.errors.varyHdop;
  const rows = [withHdop ? 'time,lat,lon,height,hdop,sats' : 'time,lat,lon,height'];
  for (const f of sc.fixes) {
    const base = `${new Date(Math.round(f.tSec * 1000)).toISOString()},${f.latDeg.toFixed(9)},${f.lonDeg.toFixed(9)},${f.heightM.toFixed(3)}`;
    rows.push(withHdop ? `${base},${f.hdop.toFixed(1)},${f.sats}` : base);
  }
  return rows.join('\n') + '\n';
}
