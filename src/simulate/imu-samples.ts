/**
 * The IMU readings of the scenario simulator (simulate/imu.ts): the exact specific force and angular
 * rate of the vehicle's motion in the flat local-level frame the mechanization uses (Earth rotation
 * and Coriolis, WGS84 normal gravity), rotated into the sensor axes of the mounting, plus engine
 * vibration, constant biases and white noise.
 */
import { gravityAtHeightMps2 } from '../models/ins/gravity.js';
import { rotationZyx } from '../models/ins/attitude.js';
import type { DriveTruth } from './imu-kinematics.js';
import type { EngineVibration, ImuErrorSpec, ImuScenarioSpec } from './imu-spec.js';
import { Rng } from './rng.js';

export type ImuSampleSink = (tSec: number, fx: number, fy: number, fz: number, wx: number, wy: number, wz: number) => void;

export interface ImuSampleSource {
  spec: ImuScenarioSpec;
  imu: ImuErrorSpec;
  truth: DriveTruth;
  /** Sensor → vehicle rotation (row-major 3×3); `mounted`: not the identity. */
  mount: Float64Array;
  mounted: boolean;
  /** Earth rate in the local frame (rad/s, ENU). */
  earthRateEnu: [number, number, number];
}

/** Visit every IMU sample in time order (UTC Unix s, sensor specific force m/s², rate rad/s). */
export function emitImuSamples(src: ImuSampleSource, sink: ImuSampleSink): void {
  const { spec, imu, truth } = src;
  const nr = new Rng(spec.seed * 104729 + 3);
  const a = new Float64Array(8);
  const C = new Float64Array(9);
  const reading = new Float64Array(6);
  const n = Math.floor(spec.durationSec * spec.imuRateHz);
  const h = truth.h;
  const vibration = new VibrationNoise(spec.seed, spec.vibration, h);
  for (let i = 0; i <= n; i++) {
    vibration.step();
    const tau = i * h;
    truth.attAt(tau, a);
    trueReading(src, a, truth.upAt(tau), C, reading);
    const vf = vibration.value;
    for (let c = 0; c < 6; c++) reading[c] = reading[c]! + vf[c]!;
    if (src.mounted) toSensorAxes(src.mount, reading);
    sink(
      spec.startUnixSec + tau,
      reading[0]! + imu.accelBias[0] + imu.accelNoiseSd * nr.normal(),
      reading[1]! + imu.accelBias[1] + imu.accelNoiseSd * nr.normal(),
      reading[2]! + imu.accelBias[2] + imu.accelNoiseSd * nr.normal(),
      reading[3]! + imu.gyroBias[0] + imu.gyroNoiseSd * nr.normal(),
      reading[4]! + imu.gyroBias[1] + imu.gyroNoiseSd * nr.normal(),
      reading[5]! + imu.gyroBias[2] + imu.gyroNoiseSd * nr.normal(),
    );
  }
}

/**
 * Vibration of a running engine per axis (3 accelerometer, 3 gyro): a sinusoid with share 0.8 of the
 * variance, jitter 0.2; phases wander slowly. Zero without `vib`.
 */
class VibrationNoise {
  readonly value = new Float64Array(6);
  private readonly vr: Rng;
  private readonly ph: number[];

  constructor(seed: number, private readonly vib: EngineVibration | undefined, private readonly h: number) {
    this.vr = new Rng(seed * 7727 + 11);
    this.ph = [0, 0, 0, 0, 0, 0].map(() => this.vr.uniform(0, 2 * Math.PI));
  }

  /** The vibration of the next sample into `value`. */
  step(): void {
    const vib = this.vib;
    if (!vib) return;
    const { ph, vr, value } = this;
    for (let c = 0; c < 6; c++) {
      const sd = c < 3 ? vib.accelSdMps2 : vib.gyroSdRadps;
      ph[c] = ph[c]! + 2 * Math.PI * vib.freqHz * (1 + 0.02 * c) * this.h + 0.05 * vr.normal();
      value[c] = sd * (Math.sqrt(2 * 0.8) * Math.sin(ph[c]!) + Math.sqrt(0.2) * vr.normal());
    }
  }
}

/**
 * The exact specific force f^b (m/s²) and rate ω_ib^b (rad/s) in the vehicle axes for the attitude
 * state `a` (DriveTruth.attAt) at height `up` (m, truth frame) into `out`; `C` is scratch.
 */
function trueReading(src: ImuSampleSource, a: Float64Array, up: number, C: Float64Array, out: Float64Array): void {
  const we = src.earthRateEnu;
  const origin = src.spec.origin;
  const roll = a[0]!, pitch = a[1]!, yaw = a[2]!, rolld = a[3]!, pitchd = a[4]!, yawd = a[5]!, s = a[6]!, sd = a[7]!;
  // ω_nb^b = Rx(φ)ᵀ [Ry(−θ)ᵀ (ψ̇ ẑ) + (−θ̇) ŷ] + φ̇ x̂
  const cth = Math.cos(pitch), sth = Math.sin(pitch), cph = Math.cos(roll), sph = Math.sin(roll);
  // Ry(−θ)ᵀ = Ry(θ): Ry(θ)·[0,0,ψ̇] = [ψ̇ sin θ, 0, ψ̇ cos θ]
  const ux = yawd * sth, uy = -pitchd, uz = yawd * cth;
  // Rx(φ)ᵀ·[ux, uy, uz] = [ux, c uy + s uz, −s uy + c uz]
  const wbx = ux + rolld, wby = cph * uy + sph * uz, wbz = -sph * uy + cph * uz;
  rotationZyx(roll, -pitch, yaw, C);
  const ve = s * cth * Math.cos(yaw), vn = s * cth * Math.sin(yaw), vu = s * sth;
  const g = gravityAtHeightMps2(origin[0], origin[2] + up);
  // f^n-part: −g^n + 2 ω_ie × v = [0, 0, γ] + 2 ω × v
  const qe = 2 * (we[1] * vu - we[2] * vn), qn = 2 * (we[2] * ve - we[0] * vu), qu = 2 * (we[0] * vn - we[1] * ve) + g;
  // f^b = ṡ x̂ + ω_nb × (s x̂) + C_bn (…):  ω × [s,0,0] = [0, ω_z s, −ω_y s]
  out[0] = sd + C[0]! * qe + C[3]! * qn + C[6]! * qu;
  out[1] = wbz * s + C[1]! * qe + C[4]! * qn + C[7]! * qu;
  out[2] = -wby * s + C[2]! * qe + C[5]! * qn + C[8]! * qu;
  // gyro: ω_ib^b = ω_nb^b + C_bn ω_ie
  out[3] = wbx + C[0]! * we[0] + C[3]! * we[1] + C[6]! * we[2];
  out[4] = wby + C[1]! * we[0] + C[4]! * we[1] + C[7]! * we[2];
  out[5] = wbz + C[2]! * we[0] + C[5]! * we[1] + C[8]! * we[2];
}

/** Vehicle axes → sensor axes in place: f^s = Mᵀ f^v for both the force and the rate. */
function toSensorAxes(mount: Float64Array, r: Float64Array): void {
  const ax = r[0]!, ay = r[1]!, az = r[2]!, bx = r[3]!, by = r[4]!, bz = r[5]!;
  r[0] = mount[0]! * ax + mount[3]! * ay + mount[6]! * az;
  r[1] = mount[1]! * ax + mount[4]! * ay + mount[7]! * az;
  r[2] = mount[2]! * ax + mount[5]! * ay + mount[8]! * az;
  r[3] = mount[0]! * bx + mount[3]! * by + mount[6]! * bz;
  r[4] = mount[1]! * bx + mount[4]! * by + mount[7]! * bz;
  r[5] = mount[2]! * bx + mount[5]! * by + mount[8]! * bz;
}
