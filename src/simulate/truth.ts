/**
 * Invented truth trajectories for the simulator: a walking survey with stops, a delivery vehicle in
 * a street grid, a small survey drone flying lines. Generated on a fine time grid in a local ENU
 * frame by integrating speed and heading commands, so velocity and acceleration stay physical.
 */
import { Rng } from './rng.js';

export type ScenarioKind = 'walk' | 'vehicle' | 'drone' | 'model';

export interface TruthTrack {
  dtSec: number;
  /** ENU position (m) on the fine grid starting at t = 0. */
  e: Float64Array;
  n: Float64Array;
  u: Float64Array;
  durationSec: number;
}

/** Linear interpolation of the truth at time t (s from start). */
export function truthAt(tr: TruthTrack, t: number, out: number[]): void {
  const x = Math.min(Math.max(t / tr.dtSec, 0), tr.e.length - 1);
  const i = Math.min(Math.floor(x), tr.e.length - 2);
  const f = x - i;
  out[0] = tr.e[i]! + f * (tr.e[i + 1]! - tr.e[i]!);
  out[1] = tr.n[i]! + f * (tr.n[i + 1]! - tr.n[i]!);
  out[2] = tr.u[i]! + f * (tr.u[i + 1]! - tr.u[i]!);
}

interface Leg {
  /** duration (s) */
  dur: number;
  /** target speed (m/s) */
  speed: number;
  /** heading change over the leg (rad), spread over turnSec at its start */
  turn: number;
  turnSec: number;
  /** vertical speed (m/s) */
  climb: number;
}

function legsFor(kind: ScenarioKind, rng: Rng, durationSec: number): { legs: Leg[]; accel: number; decel: number } {
  const legs: Leg[] = [];
  let t = 0;
  if (kind === 'walk') {
    while (t < durationSec) {
      const stop = rng.next() < 0.2;
      const dur = stop ? rng.uniform(15, 50) : rng.uniform(25, 90);
      legs.push({ dur, speed: stop ? 0 : rng.uniform(1.1, 1.6), turn: stop ? 0 : rng.uniform(-1, 1) * (rng.next() < 0.5 ? Math.PI / 2 : 0.4), turnSec: 3, climb: stop ? 0 : rng.uniform(-0.05, 0.05) });
      t += dur;
    }
    return { legs, accel: 0.6, decel: 0.8 };
  }
  if (kind === 'vehicle') {
    while (t < durationSec) {
      const stop = rng.next() < 0.25;
      const dur = stop ? rng.uniform(10, 40) : rng.uniform(20, 70);
      const turn = stop ? 0 : [0, Math.PI / 2, -Math.PI / 2, 0.3, -0.3][rng.int(0, 4)]!;
      legs.push({ dur, speed: stop ? 0 : rng.uniform(8, 16), turn, turnSec: 6, climb: stop ? 0 : rng.uniform(-0.15, 0.15) });
      t += dur;
    }
    return { legs, accel: 1.8, decel: 2.5 };
  }
  // drone: climb, survey lines with 180° turns, descend
  legs.push({ dur: 30, speed: 0, turn: 0, turnSec: 1, climb: 2 });
  t = 30;
  let dir = 1;
  while (t < durationSec - 40) {
    legs.push({ dur: rng.uniform(35, 50), speed: rng.uniform(6, 9), turn: dir * Math.PI, turnSec: 5, climb: rng.uniform(-0.3, 0.3) });
    dir = -dir;
    t += legs[legs.length - 1]!.dur;
  }
  legs.push({ dur: 30, speed: 0, turn: 0, turnSec: 1, climb: -2 });
  return { legs, accel: 2.5, decel: 3 };
}

/**
 * Truth that follows the filter's own model exactly: per axis, position and velocity driven by
 * continuous white acceleration of density q (exact discretization, Bar-Shalom et al. 2001 §6.2),
 * for consistency (NEES) and calibration-recovery tests.
 */
export function makeModelTruth(seed: number, durationSec: number, qHorizontal: number, qVertical: number, dtSec = 0.05): TruthTrack {
  const rng = new Rng(seed * 104729 + 3);
  const total = Math.ceil(durationSec / dtSec) + 1;
  const out = [new Float64Array(total), new Float64Array(total), new Float64Array(total)];
  for (let a = 0; a < 3; a++) {
    const q = a < 2 ? qHorizontal : qVertical;
    const t = dtSec;
    // Q = q [[t³/3, t²/2], [t²/2, t]]; sample w = L ξ with L the Cholesky factor
    const q11 = (q * t ** 3) / 3, q12 = (q * t * t) / 2, q22 = q * t;
    const l11 = Math.sqrt(q11), l21 = q12 / l11, l22 = Math.sqrt(Math.max(q22 - l21 * l21, 0));
    let p = 0, v = a < 2 ? rng.normal() * 3 : 0;
    for (let k = 0; k < total; k++) {
      out[a]![k] = p;
      const x1 = rng.normal(), x2 = rng.normal();
      p += v * t + l11 * x1;
      v += l21 * x1 + l22 * x2;
    }
  }
  return { dtSec, e: out[0]!, n: out[1]!, u: out[2]!, durationSec };
}

export function makeTruth(kind: ScenarioKind, seed: number, durationSec: number, dtSec = 0.05): TruthTrack {
  if (kind === 'model') return makeModelTruth(seed, durationSec, 0.5, 0.05, dtSec);
  const rng = new Rng(seed * 7919 + 17);
  const { legs, accel, decel } = legsFor(kind, rng, durationSec);
  const total = Math.ceil(durationSec / dtSec) + 1;
  const e = new Float64Array(total), n = new Float64Array(total), u = new Float64Array(total);
  let heading = rng.uniform(0, 2 * Math.PI);
  let speed = 0;
  let vu = 0;
  let pe = 0, pn = 0, pu = kind === 'drone' ? 0 : rng.uniform(-5, 5);
  let li = 0;
  let legT = 0;
  for (let k = 0; k < total; k++) {
    e[k] = pe;
    n[k] = pn;
    u[k] = pu;
    const leg = legs[Math.min(li, legs.length - 1)]!;
    // speed toward target with bounded acceleration
    const dv = leg.speed - speed;
    const aMax = (dv >= 0 ? accel : decel) * dtSec;
    speed += Math.max(-aMax, Math.min(aMax, dv));
    // heading turns smoothly (raised-cosine rate profile) during the first turnSec of the leg
    if (legT < leg.turnSec && speed > 0.05) {
      const rate = (leg.turn / leg.turnSec) * (1 - Math.cos((2 * Math.PI * legT) / leg.turnSec));
      heading += rate * dtSec;
    }
    const dvu = leg.climb - vu;
    vu += Math.max(-0.5 * dtSec, Math.min(0.5 * dtSec, dvu));
    pe += speed * Math.sin(heading) * dtSec;
    pn += speed * Math.cos(heading) * dtSec;
    pu += vu * dtSec;
    legT += dtSec;
    if (legT >= leg.dur) {
      li++;
      legT = 0;
    }
  }
  return { dtSec, e, n, u, durationSec };
}
