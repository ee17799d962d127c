/**
 * Simulator of a ground vehicle carrying a consumer-grade MEMS IMU and a GNSS receiver, for tests,
 * the benchmark and sample data. The truth is analytic in time (speed by smoothstep transitions, yaw
 * by raised-cosine rate pulses, road grade and camber as functions of the distance driven, so the
 * vehicle is still when stopped), position integrated by Simpson's rule on a fine grid. The IMU
 * reads the exact specific force and angular rate of that motion (with Earth rotation and Coriolis in
 * the same flat local-level frame the mechanization uses, WGS84 normal gravity), plus constant biases
 * and white noise. The fixes use the scenario simulator's error model (src/simulate/scenario.ts:
 * HDOP-scaled white noise, Gauss–Markov error, outlier bursts, gaps, invalid rows) at the antenna.
 * The vehicle moves along its body x axis (no side slip), so the non-holonomic constraint holds.
 */
import { closeSync, openSync, writeSync } from 'node:fs';
import { EnuFrame } from '../geodesy/ecef.js';
import { WGS84_OMEGA_E } from '../geodesy/wgs84.js';
import { rotationZyx } from '../models/ins/attitude.js';
import { planDelivery, planDrive } from './imu-drive-plan.js';
import { DriveTruth } from './imu-kinematics.js';
import { emitImuSamples } from './imu-samples.js';
import { Rng } from './rng.js';
import type { ImuErrorSpec, ImuScenarioSpec } from './imu-spec.js';
import { DEFAULT_ERRORS, degradeAlong, type SimulatedFix } from './scenario.js';

export type { DeliveryDrive, EngineVibration, ImuErrorSpec, ImuScenarioSpec } from './imu-spec.js';


export interface TruthState {
  /** Body (IMU) position and velocity, ENU (m, m/s), truth frame. */
  pos: [number, number, number];
  vel: [number, number, number];
  /** Roll, pitch, yaw (rad): C_nb = Rz(yaw)·Ry(−pitch)·Rx(roll). */
  att: [number, number, number];
}

export interface ImuScenario {
  spec: ImuScenarioSpec;
  imu: ImuErrorSpec;
  frame: EnuFrame;
  fixes: SimulatedFix[];
  /** Truth at UTC Unix time t. */
  truthAt(tSec: number): TruthState;
  /** Antenna truth position (ENU, truth frame). */
  antennaAt(tSec: number): [number, number, number];
  /** Visit every IMU sample in time order (UTC Unix s, body specific force m/s², rate rad/s). */
  forEachSample(sink: (tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number) => void): void;
}

export function defaultImuSpec(seed: number, over: Partial<ImuScenarioSpec> = {}): ImuScenarioSpec {
  const dur = over.durationSec ?? 900;
  // outages of 25–40 s spread over the session
  const rng = new Rng(seed * 31 + 7);
  const gaps: Array<[number, number]> = [];
  for (let t = 150; t < dur - 100; t += 200) gaps.push([t + rng.uniform(0, 40), rng.uniform(25, 40)]);
  return {
    seed,
    durationSec: dur,
    imuRateHz: 100,
    fixRateHz: 1,
    origin: [52.52, 13.405, 40],
    startUnixSec: Date.UTC(2026, 4, 13, 9, 30, 0) / 1000,
    errors: { ...DEFAULT_ERRORS.vehicle, gaps, nullIslandRows: 2 },
    leverArmM: [0, 0, 0],
    earthRotation: true,
    gradeDeg: 1.5,
    camberDeg: 1,
    ...over,
  };
}


export function simulateImuScenario(spec: ImuScenarioSpec): ImuScenario {
  const rng = new Rng(spec.seed);
  const planRng = new Rng(spec.seed * 7919 + 17);
  const plan = spec.drive?.kind === 'delivery' ? planDelivery(planRng, spec.durationSec, spec.drive) : planDrive(planRng, spec.durationSec);
  // sensor → vehicle rotation of the mounting (identity when absent)
  const mount = new Float64Array(9);
  const md = spec.mountDeg ?? [0, 0, 0];
  rotationZyx((md[0] * Math.PI) / 180, (md[1] * Math.PI) / 180, (md[2] * Math.PI) / 180, mount);
  const mounted = spec.mountDeg !== undefined && md.some((v) => v !== 0);
  const frame = new EnuFrame(...spec.origin);
  const d2r = Math.PI / 180;
  const imu: ImuErrorSpec = spec.imu ?? drawImuErrors(rng);
  const lat0 = spec.origin[0] * d2r;
  const earthRateEnu: [number, number, number] = spec.earthRotation ? [0, WGS84_OMEGA_E * Math.cos(lat0), WGS84_OMEGA_E * Math.sin(lat0)] : [0, 0, 0];
  const truth = new DriveTruth(plan, spec.gradeDeg * d2r, spec.camberDeg * d2r, spec.imuRateHz, spec.durationSec, rng.uniform(-3, 3));
  const truthAt = (tSec: number): TruthState => {
    const tau = Math.min(Math.max(tSec - spec.startUnixSec, 0), (truth.M - 1) * truth.h);
    const vv = [0, 0, 0];
    truth.velAt(tau, vv);
    const a = new Float64Array(8);
    truth.attAt(tau, a);
    return { pos: truth.positionAt(tau), vel: [vv[0]!, vv[1]!, vv[2]!], att: [a[0]!, a[1]!, a[2]!] };
  };
  const C = new Float64Array(9);
  const antennaAt = (tSec: number): [number, number, number] => {
    const tr = truthAt(tSec);
    rotationZyx(tr.att[0], -tr.att[1], tr.att[2], C);
    const ls = spec.leverArmM;
    // lever arm in the sensor axes → vehicle axes
    const l = [0, 1, 2].map((r) => mount[r * 3]! * ls[0] + mount[r * 3 + 1]! * ls[1] + mount[r * 3 + 2]! * ls[2]) as [number, number, number];
    return [0, 1, 2].map((r) => tr.pos[r]! + C[r * 3]! * l[0] + C[r * 3 + 1]! * l[1] + C[r * 3 + 2]! * l[2]) as [number, number, number];
  };

  // GNSS fixes: the scenario error model at the antenna (bursts at a rate per second)
  const fixes = degradeAlong(rng, spec.errors, {
    count: Math.floor(spec.durationSec * spec.fixRateHz),
    dtSec: 1 / spec.fixRateHz,
    startUnixSec: spec.startUnixSec,
    frame,
    burstProbability: (spec.errors.burstsPer100 / 100) / spec.fixRateHz,
    truthEnuAt: (tRel) => antennaAt(spec.startUnixSec + tRel),
  });
  const forEachSample = (sink: Parameters<ImuScenario['forEachSample']>[0]) => emitImuSamples({ spec, imu, truth, mount, mounted, earthRateEnu }, sink);
  return { spec, imu, frame, fixes, truthAt, antennaAt, forEachSample };
}

/** IMU errors drawn from the scenario's stream: accelerometer bias 0.02–0.05 m/s², gyro 0.1–0.2 °/s, random signs. */
function drawImuErrors(rng: Rng): ImuErrorSpec {
  const sgn = () => (rng.next() < 0.5 ? -1 : 1);
  const d2r = Math.PI / 180;
  return {
    accelBias: [sgn() * rng.uniform(0.02, 0.05), sgn() * rng.uniform(0.02, 0.05), sgn() * rng.uniform(0.02, 0.05)],
    gyroBias: [sgn() * rng.uniform(0.1, 0.2) * d2r, sgn() * rng.uniform(0.1, 0.2) * d2r, sgn() * rng.uniform(0.1, 0.2) * d2r],
    accelNoiseSd: 0.03,
    gyroNoiseSd: 0.1 * d2r,
  };
}

/** Write the IMU samples as `<stem>.imu.csv` (Unix seconds, m/s², rad/s), in chunks. */
export function writeImuCsv(sc: ImuScenario, path: string): number {
  const fd = openSync(path, 'w');
  let buf: string[] = ['time,ax,ay,az,gx,gy,gz'];
  let n = 0;
  try {
    sc.forEachSample((t, fx, fy, fz, wx, wy, wz) => {
      buf.push(`${t.toFixed(3)},${fx.toFixed(5)},${fy.toFixed(5)},${fz.toFixed(5)},${wx.toFixed(7)},${wy.toFixed(7)},${wz.toFixed(7)}`);
      n++;
      if (buf.length >= 20000) {
        writeSync(fd, buf.join('\n') + '\n');
        buf = [];
      }
    });
    if (buf.length) writeSync(fd, buf.join('\n') + '\n');
  } finally {
    closeSync(fd);
  }
  return n;
}

/** The fixes as a fix CSV (ISO times, degrees, ellipsoidal height, hdop, sats). */
export function imuScenarioFixCsv(sc: ImuScenario): string {
  const rows = ['time,lat,lon,height,hdop,sats'];
  for (const f of sc.fixes) rows.push(`${new Date(Math.round(f.tSec * 1000)).toISOString()},${f.latDeg.toFixed(9)},${f.lonDeg.toFixed(9)},${f.heightM.toFixed(3)},${f.hdop.toFixed(1)},${f.sats}`);
  return rows.join('\n') + '\n';
}
