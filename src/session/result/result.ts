/**
 * SessionResult: everything the writers and the report need from one session. Plain data, typed
 * arrays inside; the writers only read it.
 */
import type { InputWarning } from '../../errors.js';
import type { DecidingTest } from './decision-log.js';
import type { SurveyProducts } from './survey-types.js';

export const STATUS = { kept: 0, outlier: 1, bridged: 2, userKept: 3, userRejected: 4 } as const;
export const STATUS_NAMES = ['kept', 'outlier', 'bridged', 'user-kept', 'user-rejected'] as const;
export type StatusName = (typeof STATUS_NAMES)[number];

/** Why a fix was flagged. */
export type OutlierReason = 'innovation' | 'review' | 'invalid' | 'user';

export interface OutlierRecord {
  /**
   * Stable id of the flagged fix: "L" and its source line ("L145"), with "-2", "-3", … for further
   * fixes of the same line; the same in outliers.csv, the GeoJSON flags layer and the report.
   */
  id: string;
  /** Index of the fix in the FixSeries. */
  fix: number;
  line: number;
  tSec: number;
  latDeg: number;
  lonDeg: number;
  heightM: number;
  reason: OutlierReason;
  /** The test that decided (session/result/decision-log.ts). */
  test: DecidingTest;
  /** That test's statistic and threshold (statistic > threshold); NaN for invalid and user-rejected fixes. */
  testStatistic: number;
  testThreshold: number;
  /** testStatistic / testThreshold − 1 (decisionMargin); NaN where there is no test. */
  margin: number;
  /**
   * Two-sided review statistic against the final smoothed track (χ²) and the re-admission threshold
   * it must not exceed for the fix to come back; NaN for invalid and user-rejected fixes.
   */
  statistic: number;
  threshold: number;
  readmitThreshold: number;
  dof: number;
  /** The user's note from the decisions file, when there is one. */
  note?: string;
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
  /** The user's notes from the decisions file, by fix index (attached by the batch; attachDecisionNotes). */
  decisionNotes?: Map<number, string>;
  metrics: SessionMetrics;
  warnings: InputWarning[];
  /** Facts about the processing (frame, model parameters used, …) for summary.json. */
  info: Record<string, unknown>;
  /** Occupied points and measured quantities with uncertainty (fixes-only sessions; session/survey/survey.ts). */
  survey?: SurveyProducts;
}
