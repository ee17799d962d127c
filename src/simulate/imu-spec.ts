/**
 * The IMU scenario's specification: the sensor errors, the drive pattern and the engine vibration a
 * simulated vehicle log is drawn with (src/simulate/imu.ts simulates it).
 */
import type { ErrorModel } from './scenario.js';

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
