/**
 * Drive plans of the IMU scenario simulator (simulate/imu.ts): the speed changes and turns of an
 * urban drive or a delivery round, drawn from a seeded random stream, as pieces in time.
 */
import type { Rng } from './rng.js';
import type { DeliveryDrive } from './imu-spec.js';

export interface SpeedPiece {
  t0: number;
  dur: number;
  s0: number;
  s1: number;
  /** distance driven before t0 */
  d0: number;
  /** Jerk time as a share of dur (0 < r < ½): trapezoidal acceleration; absent: smoothstep speed. */
  r?: number;
}
export interface TurnPiece {
  t0: number;
  dur: number;
  angle: number;
  /** yaw before t0 */
  y0: number;
}

/** The speed pieces and turns in time order, and the yaw (rad) before the first turn. */
export interface DrivePlan {
  speed: SpeedPiece[];
  turns: TurnPiece[];
  y0: number;
}

/** Plan a delivery round: parked start, legs with corners and bends, each ending in a braked stop. */
export function planDelivery(rng: Rng, durationSec: number, dd: DeliveryDrive): DrivePlan {
  const speed: SpeedPiece[] = [];
  const turns: TurnPiece[] = [];
  let t = dd.parkedStartSec;
  let s = 0;
  let d = 0;
  let yaw = rng.uniform(-Math.PI, Math.PI);
  const y0 = yaw;
  const change = (target: number, dur: number) => {
    // jerk-limited (0.5 s ramps): nearly constant acceleration, as a driver brakes and pulls away
    speed.push({ t0: t, dur, s0: s, s1: target, d0: d, r: Math.min(0.25, 0.5 / dur) });
    d += dur * (s + (target - s) * 0.5);
    t += dur;
    s = target;
  };
  const cruise = (dur: number) => {
    d += s * dur;
    t += dur;
  };
  const turn = (angle: number, dur: number) => {
    turns.push({ t0: t, dur, angle, y0: yaw });
    yaw += angle;
    cruise(dur);
  };
  while (t < durationSec) {
    change(rng.uniform(8, 14), dd.pullAwaySec);
    const legEnd = t + rng.uniform(dd.legSec[0], dd.legSec[1]);
    while (t < legEnd) {
      const r = rng.next();
      if (r < 0.35) {
        change(rng.uniform(5, 7), 4);
        turn(rng.next() < 0.5 ? Math.PI / 2 : -Math.PI / 2, 8);
        change(rng.uniform(8, 14), 6);
      } else if (r < 0.65) turn(rng.uniform(-0.4, 0.4), 8);
      cruise(rng.uniform(5, 15));
    }
    change(0, dd.brakeSec);
    cruise(rng.uniform(dd.stopSec[0], dd.stopSec[1]));
  }
  return { speed, turns, y0 };
}

/** Plan an urban drive: static start, accelerations, cruises, slow 90° corners, gentle bends, stops. */
export function planDrive(rng: Rng, durationSec: number): DrivePlan {
  const speed: SpeedPiece[] = [];
  const turns: TurnPiece[] = [];
  let t = 20; // static start
  let s = 0;
  let d = 0;
  let yaw = rng.uniform(-Math.PI, Math.PI);
  const y0 = yaw;
  const change = (target: number, dur: number) => {
    speed.push({ t0: t, dur, s0: s, s1: target, d0: d });
    d += dur * (s + (target - s) * 0.5);
    t += dur;
    s = target;
  };
  const cruise = (dur: number) => {
    d += s * dur;
    t += dur;
  };
  const turn = (angle: number, dur: number) => {
    turns.push({ t0: t, dur, angle, y0: yaw });
    yaw += angle;
    cruise(dur);
  };
  // first motion: straight
  change(rng.uniform(9, 13), 7);
  cruise(rng.uniform(10, 20));
  while (t < durationSec) {
    const r = rng.next();
    if (r < 0.45) {
      // corner: slow down, turn 90°, speed up
      change(rng.uniform(5, 7), 5);
      turn(rng.next() < 0.5 ? Math.PI / 2 : -Math.PI / 2, 9);
      change(rng.uniform(9, 14), 7);
      cruise(rng.uniform(8, 30));
    } else if (r < 0.75) {
      // gentle bend at speed
      turn(rng.uniform(-0.4, 0.4), 8);
      cruise(rng.uniform(8, 25));
    } else {
      // stop and go
      change(0, 7);
      cruise(rng.uniform(8, 25));
      change(rng.uniform(9, 13), 7);
      cruise(rng.uniform(8, 25));
    }
  }
  return { speed, turns, y0 };
}
