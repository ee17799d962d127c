/**
 * Truth of a walker who circles small plots: at each plot the walker goes round and round a circle
 * of 2–5 m radius for one to a few minutes, then walks a straight leg to the next plot. Seeded; the
 * radius, walking speed and time per plot are drawn per plot. The motion is smooth (bounded
 * acceleration), but its centripetal acceleration v²/r (0.1–0.8 m/s²) never stops while circling,
 * which a stiff constant-velocity model cannot follow.
 */
import { Rng } from './rng.js';
import type { TruthTrack } from './truth.js';

export interface CirclingOptions {
  durationSec: number;
  /** Turn radius range (m). */
  radiusM?: [number, number];
  /** Walking speed range (m/s). */
  speedMps?: [number, number];
  /** Time spent circling one plot (s). */
  plotSec?: [number, number];
  /** Length of the straight leg between plots (m). */
  legM?: [number, number];
  dtSec?: number;
}

/** A circling walk on a fine time grid (dtSec), starting at the origin. */
export function makeCirclingTruth(seed: number, o: CirclingOptions): TruthTrack {
  const rng = new Rng(seed * 6151 + 29);
  const dtSec = o.dtSec ?? 0.05;
  const [r0, r1] = o.radiusM ?? [2, 5];
  const [s0, s1] = o.speedMps ?? [0.8, 1.4];
  const [p0, p1] = o.plotSec ?? [90, 240];
  const [l0, l1] = o.legM ?? [10, 40];
  const total = Math.ceil(o.durationSec / dtSec) + 1;
  const e = new Float64Array(total), n = new Float64Array(total), u = new Float64Array(total);
  let pe = 0, pn = 0, pu = rng.uniform(-2, 2);
  let heading = rng.uniform(0, 2 * Math.PI);
  let speed = 0;
  // phases: circle a plot (turn rate ±v/r), then a straight leg
  let circling = true;
  let left = rng.uniform(p0, p1);
  let radius = rng.uniform(r0, r1);
  let dir = rng.next() < 0.5 ? 1 : -1;
  let target = rng.uniform(s0, s1);
  for (let k = 0; k < total; k++) {
    e[k] = pe;
    n[k] = pn;
    u[k] = pu;
    const aMax = 0.5 * dtSec;
    speed += Math.max(-aMax, Math.min(aMax, target - speed));
    if (circling) heading += (dir * speed * dtSec) / radius;
    pe += speed * Math.sin(heading) * dtSec;
    pn += speed * Math.cos(heading) * dtSec;
    pu += 0.02 * Math.sin(k * dtSec * 0.01) * dtSec;
    left -= circling ? dtSec : speed * dtSec;
    if (left <= 0) {
      circling = !circling;
      if (circling) {
        left = rng.uniform(p0, p1);
        radius = rng.uniform(r0, r1);
        dir = rng.next() < 0.5 ? 1 : -1;
      } else left = rng.uniform(l0, l1);
      target = rng.uniform(s0, s1);
    }
  }
  return { dtSec, e, n, u, durationSec: o.durationSec };
}
