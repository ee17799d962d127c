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
import { gravityAtHeightMps2 } from '../models/ins/gravity.js';
import { rotationZyx } from '../models/ins/attitude.js';
import { Rng } from './rng.js';
import { DEFAULT_ERRORS, degradeAlong, type ErrorModel, type SimulatedFix } from './scenario.js';

interface SpeedPiece {
  t0: number;
  dur: number;
  s0: number;
  s1: number;
  /** distance driven before t0 */
  d0: number;
  /** Jerk time as a share of dur (0 < r < ½): trapezoidal acceleration; absent: smoothstep speed. */
  r?: number;
}
interface TurnPiece {
  t0: number;
  dur: number;
  angle: number;
  /** yaw before t0 */
  y0: number;
}

export interface ImuErrorSpec {
  /** Constant biases (body axes): m/s² and rad/s. */
  accelBias: [number, number, number];
  gyroBias: [number, number, number];
  /** White noise 1-sigma per sample. */
  accelNoiseSd: number;
  gyroNoiseSd: number;
}

export interface ImuScenarioSpec {
  seed: number;
  durationSec: number;
  imuRateHz: number;
  fixRateHz: number;
  origin: [number, number, number];
  startUnixSec: number;
  /** GNSS errors; `gaps` are the outages [start s, length s]. */
  errors: ErrorModel;
  /** IMU errors; drawn from the seed when absent (accelerometer bias 0.02–0.05 m/s², gyro 0.1–0.2 °/s). */
  imu?: ImuErrorSpec;
  leverArmM: [number, number, number];
  earthRotation: boolean;
  /** Amplitudes of road grade and camber (degrees). */
  gradeDeg: number;
  camberDeg: number;
  /** Driving pattern: `urban` (default: corners, bends, short stops) or a delivery round (parked start, long stops after short braking). */
  drive?: DeliveryDrive;
  /** Engine vibration added to the IMU readings at all times (also parked, engine idling). */
  vibration?: EngineVibration;
  /**
   * Mounting of the IMU in the vehicle (degrees): the rotation from the sensor axes to the vehicle's
   * (x forward, y left, z up), C_vs = Rz(yaw)·Ry(pitch)·Rx(roll), as `imu.sensorToBodyDeg` takes it.
   * The lever arm is given in the sensor axes.
   */
  mountDeg?: [number, number, number];
}

/** A delivery round: parked at the start, then legs of driving, each ending in a stop. */
export interface DeliveryDrive {
  kind: 'delivery';
  parkedStartSec: number;
  /** Range of the stop lengths (s). */
  stopSec: [number, number];
  /** Braking into a stop and pulling away (s). */
  brakeSec: number;
  pullAwaySec: number;
  /** Range of the driving time between stops (s). */
  legSec: [number, number];
}

/**
 * Vibration of a running engine: per axis a sinusoid at `freqHz` (slowly wandering phase) plus
 * broadband jitter; `accelSdMps2` and `gyroSdRadps` are the total 1-sigma per axis. The vibration's
 * displacement (sub-millimetre) is not added to the truth.
 */
export interface EngineVibration {
  accelSdMps2: number;
  gyroSdRadps: number;
  freqHz: number;
}

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

/** smoothstep u ↦ 3u² − 2u³ and its integral u³ − u⁴/2 */
const sstep = (u: number) => u * u * (3 - 2 * u);
const sstepInt = (u: number) => u * u * u - 0.5 * u * u * u * u;
/**
 * Trapezoidal acceleration (ramps of share r at both ends, flat between), normalised to a unit speed
 * change: g(u) the speed share, g′(u) its derivative, G(u) = ∫₀ᵘ g. A braking car: nearly constant
 * deceleration that ends with a short jerk at the stop.
 */
const trapG = (u: number, r: number) => {
  const k = 1 / (1 - r);
  if (u < r) return (k * u * u) / (2 * r);
  if (u <= 1 - r) return k * (r / 2 + (u - r));
  const v = 1 - u;
  return k * (1 - r - (v * v) / (2 * r));
};
const trapDg = (u: number, r: number) => (u < r ? u / r : u <= 1 - r ? 1 : (1 - u) / r) / (1 - r);
const trapInt = (u: number, r: number) => {
  const k = 1 / (1 - r);
  if (u < r) return (k * u * u * u) / (6 * r);
  if (u <= 1 - r) return k * ((r * r) / 6 + (r / 2) * (u - r) + ((u - r) * (u - r)) / 2);
  const v = 1 - u;
  // ∫₀¹ G1 = (1 − r)/2 by symmetry of the shape
  return k * ((1 - r) / 2 - (1 - r) * v + (v * v * v) / (6 * r));
};

/** Plan a delivery round: parked start, legs with corners and bends, each ending in a braked stop. */
function planDelivery(rng: Rng, durationSec: number, dd: DeliveryDrive): { speed: SpeedPiece[]; turns: TurnPiece[]; y0: number } {
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
function planDrive(rng: Rng, durationSec: number): { speed: SpeedPiece[]; turns: TurnPiece[]; y0: number } {
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
  const sgn = () => (rng.next() < 0.5 ? -1 : 1);
  const d2r = Math.PI / 180;
  const imu: ImuErrorSpec = spec.imu ?? {
    accelBias: [sgn() * rng.uniform(0.02, 0.05), sgn() * rng.uniform(0.02, 0.05), sgn() * rng.uniform(0.02, 0.05)],
    gyroBias: [sgn() * rng.uniform(0.1, 0.2) * d2r, sgn() * rng.uniform(0.1, 0.2) * d2r, sgn() * rng.uniform(0.1, 0.2) * d2r],
    accelNoiseSd: 0.03,
    gyroNoiseSd: 0.1 * d2r,
  };
  const lat0 = spec.origin[0] * d2r;
  const we: [number, number, number] = spec.earthRotation ? [0, WGS84_OMEGA_E * Math.cos(lat0), WGS84_OMEGA_E * Math.sin(lat0)] : [0, 0, 0];
  const gradeA = spec.gradeDeg * d2r, camberA = spec.camberDeg * d2r;
  const LG = 400, LC = 250; // wavelengths (m) of grade and camber

  // ---- analytic kinematics at time τ (s from start) ----
  const kin = { s: 0, sd: 0, d: 0, yaw: 0, yawd: 0 };
  const kinAt = (tau: number) => {
    // speed pieces (sorted, non-overlapping): last piece starting before τ
    let lo = 0, hi = plan.speed.length - 1, idx = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (plan.speed[mid]!.t0 <= tau) {
        idx = mid;
        lo = mid + 1;
      } else hi = mid - 1;
    }
    if (idx < 0) {
      kin.s = 0; kin.sd = 0; kin.d = 0;
    } else {
      const p = plan.speed[idx]!;
      const u = Math.min(1, (tau - p.t0) / p.dur);
      const ds = p.s1 - p.s0;
      const r = p.r;
      kin.s = p.s0 + ds * (r ? trapG(u, r) : sstep(u));
      kin.sd = u < 1 ? (ds * (r ? trapDg(u, r) : 6 * u * (1 - u))) / p.dur : 0;
      kin.d = p.d0 + p.s0 * Math.min(tau - p.t0, p.dur) + ds * p.dur * (r ? trapInt(u, r) : sstepInt(u)) + (u >= 1 ? p.s1 * (tau - p.t0 - p.dur) : 0);
    }
    lo = 0; hi = plan.turns.length - 1; idx = -1;
    while (lo <= hi) {
      const mid = (lo + hi) >> 1;
      if (plan.turns[mid]!.t0 <= tau) {
        idx = mid;
        lo = mid + 1;
      } else hi = mid - 1;
    }
    if (idx < 0) {
      kin.yaw = plan.y0; kin.yawd = 0;
    } else {
      const p = plan.turns[idx]!;
      const u = Math.min(1, (tau - p.t0) / p.dur);
      // raised-cosine rate: ψ̇ = (A/T)(1 − cos 2πu), ψ = ψ0 + A (u − sin(2πu)/2π)
      kin.yaw = p.y0 + p.angle * (u - Math.sin(2 * Math.PI * u) / (2 * Math.PI));
      kin.yawd = u < 1 ? (p.angle / p.dur) * (1 - Math.cos(2 * Math.PI * u)) : 0;
    }
  };
  const attAt = (tau: number, out: Float64Array) => {
    kinAt(tau);
    const ag = (2 * Math.PI) / LG, ac = (2 * Math.PI) / LC;
    // pitch = grade(d), roll = camber(d); their rates through ḋ = s
    out[0] = camberA * Math.sin(ac * kin.d);
    out[1] = gradeA * Math.sin(ag * kin.d);
    out[2] = kin.yaw;
    out[3] = camberA * ac * Math.cos(ac * kin.d) * kin.s;
    out[4] = gradeA * ag * Math.cos(ag * kin.d) * kin.s;
    out[5] = kin.yawd;
    out[6] = kin.s;
    out[7] = kin.sd;
  };
  // ---- position on a fine grid (Simpson over half steps) ----
  const h = 1 / spec.imuRateHz;
  const M = Math.ceil(spec.durationSec / h) + 2;
  const pe = new Float64Array(M), pn = new Float64Array(M), pu = new Float64Array(M);
  const a8 = new Float64Array(8);
  const velN = (tau: number, o: number[]) => {
    attAt(tau, a8);
    const s = a8[6]!, th = a8[1]!, y = a8[2]!;
    o[0] = s * Math.cos(th) * Math.cos(y);
    o[1] = s * Math.cos(th) * Math.sin(y);
    o[2] = s * Math.sin(th);
  };
  const v0 = [0, 0, 0], v1 = [0, 0, 0], v2 = [0, 0, 0];
  pu[0] = rng.uniform(-3, 3);
  velN(0, v0);
  for (let i = 1; i < M; i++) {
    const t0 = (i - 1) * h;
    velN(t0 + 0.5 * h, v1);
    velN(t0 + h, v2);
    // Simpson: ∫v = h/6 (v0 + 4 v½ + v1)
    pe[i] = pe[i - 1]! + (h / 6) * (v0[0]! + 4 * v1[0]! + v2[0]!);
    pn[i] = pn[i - 1]! + (h / 6) * (v0[1]! + 4 * v1[1]! + v2[1]!);
    pu[i] = pu[i - 1]! + (h / 6) * (v0[2]! + 4 * v1[2]! + v2[2]!);
    v0[0] = v2[0]!; v0[1] = v2[1]!; v0[2] = v2[2]!;
  }
  const C = new Float64Array(9);
  const truthAt = (tSec: number): TruthState => {
    const tau = Math.min(Math.max(tSec - spec.startUnixSec, 0), (M - 1) * h);
    const x = Math.min(tau / h, M - 1);
    const i = Math.min(Math.floor(x), M - 2);
    const f = x - i;
    const vv = [0, 0, 0];
    velN(tau, vv);
    const a = new Float64Array(8);
    attAt(tau, a);
    return {
      pos: [pe[i]! + f * (pe[i + 1]! - pe[i]!), pn[i]! + f * (pn[i + 1]! - pn[i]!), pu[i]! + f * (pu[i + 1]! - pu[i]!)],
      vel: [vv[0]!, vv[1]!, vv[2]!],
      att: [a[0]!, a[1]!, a[2]!],
    };
  };
  const antennaAt = (tSec: number): [number, number, number] => {
    const tr = truthAt(tSec);
    rotationZyx(tr.att[0], -tr.att[1], tr.att[2], C);
    const ls = spec.leverArmM;
    // lever arm in the sensor axes → vehicle axes
    const l = [0, 1, 2].map((r) => mount[r * 3]! * ls[0] + mount[r * 3 + 1]! * ls[1] + mount[r * 3 + 2]! * ls[2]) as [number, number, number];
    return [0, 1, 2].map((r) => tr.pos[r]! + C[r * 3]! * l[0] + C[r * 3 + 1]! * l[1] + C[r * 3 + 2]! * l[2]) as [number, number, number];
  };

  // ---- GNSS fixes: the scenario error model at the antenna (bursts at a rate per second) ----
  const fixes = degradeAlong(rng, spec.errors, {
    count: Math.floor(spec.durationSec * spec.fixRateHz),
    dtSec: 1 / spec.fixRateHz,
    startUnixSec: spec.startUnixSec,
    frame,
    burstProbability: (spec.errors.burstsPer100 / 100) / spec.fixRateHz,
    truthEnuAt: (tRel) => antennaAt(spec.startUnixSec + tRel),
  });

  const forEachSample = (sink: (t: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number) => void) => {
    const nr = new Rng(spec.seed * 104729 + 3);
    const a = new Float64Array(8);
    const n = Math.floor(spec.durationSec * spec.imuRateHz);
    const vib = spec.vibration;
    const vr = new Rng(spec.seed * 7727 + 11);
    // vibration: sinusoid share 0.8 of the variance, jitter 0.2; phases wander slowly
    const ph = [0, 0, 0, 0, 0, 0].map(() => vr.uniform(0, 2 * Math.PI));
    const vf = new Float64Array(6);
    for (let i = 0; i <= n; i++) {
      if (vib) {
        for (let c = 0; c < 6; c++) {
          const sd = c < 3 ? vib.accelSdMps2 : vib.gyroSdRadps;
          ph[c] = ph[c]! + 2 * Math.PI * vib.freqHz * (1 + 0.02 * c) * h + 0.05 * vr.normal();
          vf[c] = sd * (Math.sqrt(2 * 0.8) * Math.sin(ph[c]!) + Math.sqrt(0.2) * vr.normal());
        }
      }
      const tau = i * h;
      attAt(tau, a);
      const roll = a[0]!, pitch = a[1]!, yaw = a[2]!, rolld = a[3]!, pitchd = a[4]!, yawd = a[5]!, s = a[6]!, sd = a[7]!;
      // ω_nb^b = Rx(φ)ᵀ [Ry(−θ)ᵀ (ψ̇ ẑ) + (−θ̇) ŷ] + φ̇ x̂
      const cth = Math.cos(pitch), sth = Math.sin(pitch), cph = Math.cos(roll), sph = Math.sin(roll);
      // Ry(−θ)ᵀ = Ry(θ): Ry(θ)·[0,0,ψ̇] = [ψ̇ sin θ, 0, ψ̇ cos θ]
      const ux = yawd * sth, uy = -pitchd, uz = yawd * cth;
      // Rx(φ)ᵀ·[ux, uy, uz] = [ux, c uy + s uz, −s uy + c uz]
      const wbx = ux + rolld, wby = cph * uy + sph * uz, wbz = -sph * uy + cph * uz;
      rotationZyx(roll, -pitch, yaw, C);
      const ve = s * cth * Math.cos(yaw), vn = s * cth * Math.sin(yaw), vu = s * sth;
      const x = Math.min(tau / h, M - 1);
      const j = Math.min(Math.floor(x), M - 2);
      const up = pu[j]! + (x - j) * (pu[j + 1]! - pu[j]!);
      const g = gravityAtHeightMps2(spec.origin[0], spec.origin[2] + up);
      // f^n-part: −g^n + 2 ω_ie × v = [0, 0, γ] + 2 ω × v
      const qe = 2 * (we[1] * vu - we[2] * vn), qn = 2 * (we[2] * ve - we[0] * vu), qu = 2 * (we[0] * vn - we[1] * ve) + g;
      // f^b = ṡ x̂ + ω_nb × (s x̂) + C_bn (…):  ω × [s,0,0] = [0, ω_z s, −ω_y s]
      const fx = sd + C[0]! * qe + C[3]! * qn + C[6]! * qu;
      const fy = wbz * s + C[1]! * qe + C[4]! * qn + C[7]! * qu;
      const fz = -wby * s + C[2]! * qe + C[5]! * qn + C[8]! * qu;
      // gyro: ω_ib^b = ω_nb^b + C_bn ω_ie
      const gx = wbx + C[0]! * we[0] + C[3]! * we[1] + C[6]! * we[2];
      const gy = wby + C[1]! * we[0] + C[4]! * we[1] + C[7]! * we[2];
      const gz = wbz + C[2]! * we[0] + C[5]! * we[1] + C[8]! * we[2];
      let sx = fx + vf[0]!, sy = fy + vf[1]!, sz = fz + vf[2]!, rx = gx + vf[3]!, ry = gy + vf[4]!, rz = gz + vf[5]!;
      if (mounted) {
        // sensor axes: f^s = Mᵀ f^v
        const ax = sx, ay = sy, az = sz, bx = rx, by = ry, bz = rz;
        sx = mount[0]! * ax + mount[3]! * ay + mount[6]! * az;
        sy = mount[1]! * ax + mount[4]! * ay + mount[7]! * az;
        sz = mount[2]! * ax + mount[5]! * ay + mount[8]! * az;
        rx = mount[0]! * bx + mount[3]! * by + mount[6]! * bz;
        ry = mount[1]! * bx + mount[4]! * by + mount[7]! * bz;
        rz = mount[2]! * bx + mount[5]! * by + mount[8]! * bz;
      }
      sink(
        spec.startUnixSec + tau,
        sx + imu.accelBias[0] + imu.accelNoiseSd * nr.normal(),
        sy + imu.accelBias[1] + imu.accelNoiseSd * nr.normal(),
        sz + imu.accelBias[2] + imu.accelNoiseSd * nr.normal(),
        rx + imu.gyroBias[0] + imu.gyroNoiseSd * nr.normal(),
        ry + imu.gyroBias[1] + imu.gyroNoiseSd * nr.normal(),
        rz + imu.gyroBias[2] + imu.gyroNoiseSd * nr.normal(),
      );
    }
  };
  return { spec, imu, frame, fixes, truthAt, antennaAt, forEachSample };
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
