/**
 * The IMU simulator's delivery rounds: the readings agree with the truth they claim (an error-free
 * IMU mechanized from the true initial state follows the true track), stops last as asked, braking
 * is a nearly constant deceleration, engine vibration has the asked sd, and a mounting rotation turns
 * the readings into the sensor axes.
 */
import { describe, expect, it } from 'vitest';
import { defaultImuSpec, simulateImuScenario, type ImuScenarioSpec } from '../../src/simulate/imu.js';
import { earthRateEnu } from '../../src/models/ins/gravity.js';
import { makeMechParams, makeMechScratch, mechanize, NAV_LEN, NAV_P, NAV_Q, NAV_V } from '../../src/models/ins/mechanization.js';
import { quatFromEuler } from '../../src/models/ins/attitude.js';

const D = Math.PI / 180;
const quiet = { accelBias: [0, 0, 0] as [number, number, number], gyroBias: [0, 0, 0] as [number, number, number], accelNoiseSd: 0, gyroNoiseSd: 0 };
const delivery = (over: Partial<ImuScenarioSpec> = {}): ImuScenarioSpec =>
  defaultImuSpec(3, {
    durationSec: 150,
    imu: quiet,
    drive: { kind: 'delivery', parkedStartSec: 10, stopSec: [20, 30], brakeSec: 4, pullAwaySec: 6, legSec: [25, 35] },
    ...over,
  });

describe('IMU simulator: delivery rounds', () => {
  it('an error-free IMU mechanized from the true start follows the true track through a parked start, brakings, stops and pull-aways (150 s, within 0.3 m)', () => {
    const sc = simulateImuScenario(delivery());
    const t0 = sc.spec.startUnixSec;
    const tr = sc.truthAt(t0);
    const we = earthRateEnu(sc.spec.origin[0], new Float64Array(3));
    const mp = makeMechParams(sc.spec.origin[0], sc.spec.origin[2], true, we);
    const x = new Float64Array(NAV_LEN);
    quatFromEuler(tr.att[0], tr.att[1], tr.att[2], x, NAV_Q);
    for (let i = 0; i < 3; i++) {
      x[NAV_P + i] = tr.pos[i]!;
      x[NAV_V + i] = tr.vel[i]!;
    }
    const s = makeMechScratch();
    let prev: number[] | null = null;
    let worst = 0;
    sc.forEachSample((t, fx, fy, fz, wx, wy, wz) => {
      if (prev) {
        // trapezoid mean of the two samples over the interval
        mechanize(x, 0.5 * (prev[1]! + fx), 0.5 * (prev[2]! + fy), 0.5 * (prev[3]! + fz), 0.5 * (prev[4]! + wx), 0.5 * (prev[5]! + wy), 0.5 * (prev[6]! + wz), t - prev[0]!, mp, s);
        const p = sc.truthAt(t).pos;
        worst = Math.max(worst, Math.hypot(x[NAV_P]! - p[0], x[NAV_P + 1]! - p[1]));
      }
      prev = [t, fx, fy, fz, wx, wy, wz];
    });
    expect(worst).toBeLessThan(0.3);
  });

  it('parked at the start, stops of the asked length, braking at nearly constant deceleration', () => {
    const sc = simulateImuScenario(delivery({ durationSec: 400 }));
    const t0 = sc.spec.startUnixSec;
    const speed = (t: number) => Math.hypot(...sc.truthAt(t0 + t).vel);
    for (let t = 0; t < 10; t += 0.5) expect(speed(t)).toBe(0);
    // stop runs (speed exactly 0) after the parked start: each 20–30 s long
    const runs: number[] = [];
    let start = -1;
    for (let t = 10.05; t < 380; t += 0.1) {
      const still = speed(t) === 0;
      if (still && start < 0) start = t;
      if (!still && start >= 0) {
        runs.push(t - start);
        start = -1;
      }
    }
    expect(runs.length).toBeGreaterThanOrEqual(3);
    for (const r of runs) {
      expect(r).toBeGreaterThan(20 - 0.2);
      expect(r).toBeLessThan(30 + 0.2);
    }
    // braking into the first stop (4 s, 0.5 s jerk at each end): constant deceleration in between,
    // where a smoothstep speed change would go from 0 to 1.5 × its mean
    let tStop = 10;
    while (speed(tStop) === 0) tStop += 0.01; // leave the parked start
    while (speed(tStop) > 0) tStop += 0.01; // reach the first stop
    const acc: number[] = [];
    for (let t = tStop - 3.4; t < tStop - 0.6; t += 0.1) acc.push((speed(t + 0.005) - speed(t - 0.005)) / 0.01);
    const mean = acc.reduce((a, b) => a + b, 0) / acc.length;
    expect(mean).toBeLessThan(-1);
    for (const a of acc) expect(Math.abs(a / mean - 1)).toBeLessThan(0.01);
  });

  it('engine vibration: the accelerometer sd while parked is the asked one (within 10%)', () => {
    const sc = simulateImuScenario(delivery({ vibration: { accelSdMps2: 0.15, gyroSdRadps: 0.003, freqHz: 27 } }));
    const fx: number[] = [], wz: number[] = [];
    sc.forEachSample((t, ax, _ay, _az, _wx, _wy, gz) => {
      if (t - sc.spec.startUnixSec < 9) {
        fx.push(ax);
        wz.push(gz);
      }
    });
    const sd = (v: number[]) => {
      const m = v.reduce((a, b) => a + b, 0) / v.length;
      return Math.sqrt(v.reduce((a, b) => a + (b - m) ** 2, 0) / (v.length - 1));
    };
    expect(sd(fx)).toBeGreaterThan(0.135);
    expect(sd(fx)).toBeLessThan(0.165);
    expect(sd(wz)).toBeGreaterThan(0.0027);
    expect(sd(wz)).toBeLessThan(0.0033);
  });

  it('mounting rotation: parked, the sensor sees gravity tilted by the mount (roll 2°, pitch −1.5°) on top of the road', () => {
    const flat = simulateImuScenario(delivery({ gradeDeg: 0, camberDeg: 0 }));
    const mounted = simulateImuScenario(delivery({ gradeDeg: 0, camberDeg: 0, mountDeg: [2, -1.5, 3] }));
    const mean = (sc: typeof flat) => {
      const m = [0, 0, 0];
      let n = 0;
      sc.forEachSample((t, ax, ay, az) => {
        if (t - sc.spec.startUnixSec < 5) {
          m[0] += ax;
          m[1] += ay;
          m[2] += az;
          n++;
        }
      });
      return m.map((v) => v / n);
    };
    const f = mean(flat), g = mean(mounted);
    // levelled: φ = atan2(f_y, f_z), θ = atan2(f_x, √(f_y² + f_z²)) (as the filter's alignment)
    const lev = (v: number[]) => [Math.atan2(v[1]!, v[2]!), Math.atan2(v[0]!, Math.hypot(v[1]!, v[2]!))];
    expect(lev(f)[0]! / D).toBeCloseTo(0, 6);
    expect(lev(f)[1]! / D).toBeCloseTo(0, 6);
    // sensor = vehicle rotated by Rz(3°)·Ry(−1.5°)·Rx(2°): levelling gives its roll and pitch to 0.05°
    const [r, p] = lev(g);
    expect(Math.abs(r! / D - 2)).toBeLessThan(0.05);
    expect(Math.abs(p! / D - 1.5)).toBeLessThan(0.05);
  });
});
