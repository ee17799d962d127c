/**
 * Truth trajectories of the scenario family's invented kinds (simulate/family-spec.ts): walking
 * survey legs with corners and static occupations, a delivery van with a parked start and stops after
 * ~4 s decelerations, urban stop-and-go, survey-line drone flights, a tight circling walker, and
 * the slow motion of a degraded deep-urban log. Integrated on a fine grid from speed, heading-rate
 * and climb commands with bounded acceleration, so velocity and acceleration stay physical.
 */
import { Rng } from './rng.js';
import type { TruthTrack } from './truth.js';
import type { FamilyKind } from './family-spec.js';

interface Leg {
  dur: number;
  /** Target speed (m/s). */
  speed: number;
  /** Heading change (rad) over turnSec at the leg's start; with constantRate, a rate held over the leg. */
  turn: number;
  turnSec: number;
  constantRate?: boolean;
  climb: number;
  /** Acceleration and deceleration limits (m/s²). */
  accel: number;
  decel: number;
}

function legs(kind: Exclude<FamilyKind, 'real'>, rng: Rng, durationSec: number): Leg[] {
  const L: Leg[] = [];
  let t = 0;
  const push = (l: Leg) => {
    L.push(l);
    t += l.dur;
  };
  switch (kind) {
    case 'walk':
      // straight legs with sharp corners (2 s), static occupations of 20–90 s
      while (t < durationSec) {
        if (rng.next() < 0.3) push({ dur: rng.uniform(22, 90), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 0.8, decel: 1 });
        else push({ dur: rng.uniform(20, 80), speed: rng.uniform(0.9, 1.6), turn: (rng.next() < 0.5 ? -1 : 1) * (rng.next() < 0.6 ? Math.PI / 2 : rng.uniform(0.3, 2.5)), turnSec: 2, climb: rng.uniform(-0.05, 0.05), accel: 0.8, decel: 1 });
      }
      return L;
    case 'van': {
      // parked 20–40 s, then drives of 30–90 s and stops of 20–70 s reached by ~4 s decelerations
      push({ dur: rng.uniform(20, 40), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 1.5, decel: 2 });
      while (t < durationSec) {
        const v = rng.uniform(7, 14);
        push({ dur: rng.uniform(30, 90), speed: v, turn: pickTurn(rng), turnSec: 6, climb: rng.uniform(-0.1, 0.1), accel: rng.uniform(1.2, 2), decel: 2 });
        // the stop leg holds the deceleration (~4 s) and then 20–70 s standing still
        const decelSec = rng.uniform(3.5, 4.5);
        push({ dur: decelSec + rng.uniform(20, 70), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 1.5, decel: v / decelSec });
      }
      return L;
    }
    case 'urban':
      // stop-and-go: short drives, frequent short stops, turns at junctions, crawling
      while (t < durationSec) {
        const u = rng.next();
        if (u < 0.3) push({ dur: rng.uniform(5, 40), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 2, decel: rng.uniform(2, 3.5) });
        else if (u < 0.45) push({ dur: rng.uniform(10, 30), speed: rng.uniform(1, 3), turn: 0, turnSec: 1, climb: 0, accel: 1.5, decel: 2 });
        else push({ dur: rng.uniform(10, 45), speed: rng.uniform(5, 14), turn: pickTurn(rng), turnSec: rng.uniform(4, 7), climb: rng.uniform(-0.2, 0.2), accel: rng.uniform(1.5, 2.5), decel: rng.uniform(2, 3.5) });
      }
      return L;
    case 'drone': {
      // take-off, survey lines with 180° turns, return, landing
      push({ dur: rng.uniform(20, 35), speed: 0, turn: 0, turnSec: 1, climb: rng.uniform(1.5, 3), accel: 2, decel: 2.5 });
      let dir = rng.next() < 0.5 ? 1 : -1;
      while (t < durationSec - 40) {
        push({ dur: rng.uniform(30, 80), speed: rng.uniform(5, 10), turn: dir * Math.PI, turnSec: rng.uniform(5, 8), climb: rng.uniform(-0.2, 0.2), accel: 2.5, decel: 3 });
        if (rng.next() < 0.15) push({ dur: rng.uniform(5, 15), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 2.5, decel: 3 });
        dir = -dir;
      }
      push({ dur: 40, speed: 0, turn: 0, turnSec: 1, climb: -rng.uniform(1.5, 3), accel: 2.5, decel: 3 });
      return L;
    }
    case 'circle':
      // a walker circling small plots (radius 2–5 m) for minutes, walking between plots, short pauses
      while (t < durationSec) {
        const u = rng.next();
        if (u < 0.6) {
          const v = rng.uniform(0.8, 1.3);
          const r = rng.uniform(2, 5);
          const dur = rng.uniform(90, 300);
          push({ dur, speed: v, turn: (rng.next() < 0.5 ? -1 : 1) * (v / r), turnSec: dur, constantRate: true, climb: 0, accel: 0.6, decel: 0.8 });
        } else if (u < 0.85) push({ dur: rng.uniform(15, 40), speed: rng.uniform(1, 1.5), turn: rng.uniform(-1.5, 1.5), turnSec: 3, climb: rng.uniform(-0.03, 0.03), accel: 0.6, decel: 0.8 });
        else push({ dur: rng.uniform(10, 30), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 0.6, decel: 0.8 });
      }
      return L;
    case 'degraded':
      // between tall buildings: walking or crawling traffic with stops
      while (t < durationSec) {
        if (rng.next() < 0.3) push({ dur: rng.uniform(10, 60), speed: 0, turn: 0, turnSec: 1, climb: 0, accel: 1, decel: 1.5 });
        else push({ dur: rng.uniform(20, 80), speed: rng.uniform(1, 6), turn: pickTurn(rng), turnSec: 5, climb: 0, accel: 1, decel: 1.5 });
      }
      return L;
  }
}

function pickTurn(rng: Rng): number {
  return [0, 0, Math.PI / 2, -Math.PI / 2, 0.3, -0.3][rng.int(0, 5)]!;
}

/** The truth of an invented kind, on a grid of dtSec from t = 0. */
export function familyTruth(kind: Exclude<FamilyKind, 'real'>, seed: number, durationSec: number, dtSec = 0.05): TruthTrack {
  const rng = new Rng((seed ^ 0x5bd1e995) >>> 0);
  const L = legs(kind, rng, durationSec);
  const total = Math.ceil(durationSec / dtSec) + 2;
  const e = new Float64Array(total), n = new Float64Array(total), u = new Float64Array(total);
  let heading = rng.uniform(0, 2 * Math.PI);
  let speed = 0, vu = 0;
  let pe = 0, pn = 0, pu = kind === 'drone' ? 0 : rng.uniform(-5, 5);
  let li = 0, legT = 0;
  for (let k = 0; k < total; k++) {
    e[k] = pe;
    n[k] = pn;
    u[k] = pu;
    const leg = L[Math.min(li, L.length - 1)]!;
    const dv = leg.speed - speed;
    const aMax = (dv >= 0 ? leg.accel : leg.decel) * dtSec;
    speed += Math.max(-aMax, Math.min(aMax, dv));
    if (speed > 0.05) {
      if (leg.constantRate) heading += leg.turn * dtSec;
      else if (legT < leg.turnSec) heading += (leg.turn / leg.turnSec) * (1 - Math.cos((2 * Math.PI * legT) / leg.turnSec)) * dtSec;
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

/** A window [startSec, startSec + durationSec] of a recorded truth, re-based to t = 0. */
export function truthWindow(tr: TruthTrack, startSec: number, durationSec: number): TruthTrack {
  const i0 = Math.max(0, Math.floor(startSec / tr.dtSec));
  const i1 = Math.min(tr.e.length, i0 + Math.ceil(durationSec / tr.dtSec) + 2);
  return { dtSec: tr.dtSec, e: tr.e.slice(i0, i1), n: tr.n.slice(i0, i1), u: tr.u.slice(i0, i1), durationSec: (i1 - i0 - 1) * tr.dtSec };
}
