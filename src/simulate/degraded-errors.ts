/**
 * A deep-urban single-point error model: fixes computed from reflected and blocked signals wander by
 * tens of metres. Per axis the error is a slowly varying bias (a first-order Gauss–Markov process of
 * 15–40 m with a time constant of one to several minutes), plus steps where the set of satellites in
 * use changes (every 20–120 s, a jump of a few to ~20 m that then persists), plus white noise of a few
 * metres scaled by a varying HDOP. Horizontal errors of 20–60 m are then common, and no part of them
 * is an outlier burst: the whole log is outside what a receiver profile of a few metres describes.
 * Seeded; the truth comes back with the fixes in the simulator's Scenario form, so the same scoring
 * applies (test/helpers/score.ts).
 */
import { EnuFrame } from '../geodesy/ecef.js';
import { Rng } from './rng.js';
import { truthAt, type TruthTrack } from './truth.js';
import type { Scenario, ScenarioSpec, SimulatedFix } from './scenario.js';

export interface DegradedErrors {
  /** 1-sigma of the slowly varying bias per horizontal axis (m) and vertically. */
  biasSigmaHM: number;
  biasSigmaVM: number;
  /** Its correlation time (s). */
  biasTauSec: number;
  /** Mean time between satellite-set changes (s) and the 1-sigma of the step each one adds (m). */
  stepEverySec: number;
  stepSigmaM: number;
  /** White noise per horizontal axis and vertically (m), at HDOP 1.1. */
  whiteSigmaHM: number;
  whiteSigmaVM: number;
}

/** Draw a degraded error model from the ranges of deep-urban single-point fixes. */
export function drawDegradedErrors(rng: Rng): DegradedErrors {
  return {
    biasSigmaHM: rng.uniform(15, 30),
    biasSigmaVM: rng.uniform(25, 45),
    biasTauSec: rng.uniform(60, 300),
    stepEverySec: rng.uniform(20, 120),
    stepSigmaM: rng.uniform(5, 20),
    whiteSigmaHM: rng.uniform(3, 8),
    whiteSigmaVM: rng.uniform(6, 14),
  };
}

/**
 * Fixes along a truth track under the degraded model; spec gives rate, duration, origin, start time
 * and seed (spec.errors is not used; the ErrorModel fields of the result's spec are informational).
 */
export function simulateDegraded(spec: ScenarioSpec, truth: TruthTrack, E: DegradedErrors): Scenario {
  const rng = new Rng(spec.seed * 48271 + 11);
  const frame = new EnuFrame(...spec.origin);
  const dt = 1 / spec.rateHz;
  const count = Math.floor(spec.durationSec * spec.rateHz);
  const phi = Math.exp(-dt / E.biasTauSec);
  const sig = (a: number) => (a < 2 ? E.biasSigmaHM : E.biasSigmaVM);
  const bias = [0, 1, 2].map((a) => rng.normal() * sig(a));
  const step = [0, 0, 0];
  let hdop = 1.8;
  const fixes: SimulatedFix[] = [];
  const tr = [0, 0, 0];
  for (let k = 0; k < count; k++) {
    const tRel = k * dt;
    for (let a = 0; a < 3; a++) bias[a] = phi * bias[a]! + Math.sqrt(1 - phi * phi) * sig(a) * rng.normal();
    // a change of the satellites in use moves the solution by a step that persists
    if (rng.next() < dt / E.stepEverySec) for (let a = 0; a < 3; a++) step[a] = 0.7 * step[a]! + rng.normal() * E.stepSigmaM * (a < 2 ? 1 : 1.5);
    hdop = Math.min(6, Math.max(1, hdop + 0.05 * rng.normal() * Math.sqrt(dt) + 0.01 * (2 - hdop) * dt));
    truthAt(truth, tRel, tr);
    const wf = hdop / 1.1;
    const eM = tr[0]! + bias[0]! + step[0]! + wf * E.whiteSigmaHM * rng.normal();
    const nM = tr[1]! + bias[1]! + step[1]! + wf * E.whiteSigmaHM * rng.normal();
    const uM = tr[2]! + bias[2]! + step[2]! + wf * E.whiteSigmaVM * rng.normal();
    const [lat, lon, h] = frame.enuToGeodetic(eM, nM, uM);
    fixes.push({
      tSec: spec.startUnixSec + tRel,
      latDeg: lat,
      lonDeg: lon,
      heightM: h,
      hdop: Math.round(hdop * 10) / 10,
      sats: Math.max(4, Math.round(11 - hdop + rng.uniform(-1, 1))),
      truthEnu: [tr[0]!, tr[1]!, tr[2]!],
      outlier: false,
      invalid: false,
    });
  }
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
