/**
 * SessionResult: everything the writers and the report need from one session. Plain data, typed
 * arrays inside; the writers only read it.
 */
import type { InputWarning } from '../errors.js';
import type { SurveyProducts } from './survey.js';

export const STATUS = { kept: 0, outlier: 1, bridged: 2, userKept: 3, userRejected: 4 } as const;
export const STATUS_NAMES = ['kept', 'outlier', 'bridged', 'user-kept', 'user-rejected'] as const;
export type StatusName = (typeof STATUS_NAMES)[number];

/** Why a fix was flagged. */
export type OutlierReason = 'innovation' | 'review' | 'invalid' | 'user';

export interface OutlierRecord {
  /** Index of the fix in the FixSeries. */
  fix: number;
  line: number;
  tSec: number;
  latDeg: number;
  lonDeg: number;
  heightM: number;
  reason: OutlierReason;
  /** Test statistic (NIS, χ²) and its threshold; NaN for invalid fixes. */
  statistic: number;
  threshold: number;
  dof: number;
  /** Horizontal distance from the smoothed track (m); NaN where there is none. */
  offsetM: number;
  /** Vertical offset raw − smoothed (m). */
  offsetUpM: number;
  detail: string;
}

export interface SessionMetrics {
  fixCount: number;
  epochCount: number;
  keptCount: number;
  outlierCount: number;
  invalidCount: number;
  bridgedCount: number;
  segmentCount: number;
  durationSec: number;
  nominalIntervalSec: number;
  lengthM: number;
  medianSdHorizontalM: number;
  worstEll95MajorM: number;
  medianEll95MajorM: number;
  rmsResidualHorizontalM: number;
  rmsResidualUpM: number;
  reacquisitions: number;
}

export interface SessionResult {
  name: string;
  file: string;
  /** Epochs of the track (fix epochs and bridged epochs), in time order. */
  N: number;
  tSec: Float64Array;
  latDeg: Float64Array;
  lonDeg: Float64Array;
  heightM: Float64Array;
  /** Local frame (m): east, north, up relative to the frame origin / reference height. */
  posEnu: [Float64Array, Float64Array, Float64Array];
  velEnu: [Float64Array, Float64Array, Float64Array];
  /** 1-sigma (m). */
  sdEnu: [Float64Array, Float64Array, Float64Array];
  covEN: Float64Array;
  ell95MajorM: Float64Array;
  ell95MinorM: Float64Array;
  ell95AzimuthDeg: Float64Array;
  /** STATUS code per epoch. */
  status: Uint8Array;
  /** Segment index per epoch. */
  segment: Int32Array;
  /** Fix index of each epoch (−1 for bridged). */
  fix: Int32Array;
  /**
   * Two-sided review statistic of the fix at each epoch against the smoothed track (χ², dof = measured
   * axes; estimation/review.ts) and its threshold (NaN where there is no fix).
   */
  nis: Float64Array;
  nisThreshold: Float64Array;
  /**
   * Raw fix position per epoch in the same local frame as posEnu (m): east, north, up; NaN at
   * bridged epochs and invalid fixes (up NaN without height). For residual plots in the report.
   */
  rawEnu?: [Float64Array, Float64Array, Float64Array];
  /** IMU-aided sessions: smoothed roll, pitch (body x forward, y left, z up) and heading clockwise from grid north, degrees. */
  attitudeDeg?: { roll: Float64Array; pitch: Float64Array; heading: Float64Array };
  /** IMU-aided sessions: their 1-sigma (degrees). */
  attitudeSdDeg?: { roll: Float64Array; pitch: Float64Array; heading: Float64Array };
  /** IMU-aided sessions: smoothed sensor biases per epoch (body axes) and their 1-sigma. */
  biasEstimates?: {
    accelMps2: [Float64Array, Float64Array, Float64Array];
    accelSdMps2: [Float64Array, Float64Array, Float64Array];
    gyroRadps: [Float64Array, Float64Array, Float64Array];
    gyroSdRadps: [Float64Array, Float64Array, Float64Array];
  };
  hasHeight: boolean;
  outliers: OutlierRecord[];
  metrics: SessionMetrics;
  warnings: InputWarning[];
  /** Facts about the processing (frame, model parameters used, …) for summary.json. */
  info: Record<string, unknown>;
  /** Occupied points and measured quantities with uncertainty (fixes-only sessions; session/survey.ts). */
  survey?: SurveyProducts;
}
