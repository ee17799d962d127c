/**
 * Optional per-stage wall-clock accounting of one session (for `npm run bench`). Callers that pass
 * no object pay nothing; the pipeline's results do not depend on it.
 */
export interface StageTimings {
  /** Validity, local frame, per-fix noise, segments (ms). */
  project: number;
  /** Both noise calibrations (ms). */
  calibrate: number;
  /** Forward (and time-reversed) filter passes outside calibration (ms). */
  filter: number;
  /** RTS smoother passes (ms). */
  smooth: number;
  /** Review statistics, decisions and segment data (ms). */
  review: number;
  /** Products: inverse projection, ellipses, length, metrics, outlier records (ms). */
  products: number;
  /** Filter and smoother passes run (outside calibration). */
  filterPasses: number;
  smoothPasses: number;
  /** Epochs run through a filter pass (outside calibration), summed over passes. */
  filterEpochs: number;
  /** Epochs run through a smoother pass (outside calibration), summed over passes. */
  smoothEpochs: number;
}

export function newStageTimings(): StageTimings {
  return { project: 0, calibrate: 0, filter: 0, smooth: 0, review: 0, products: 0, filterPasses: 0, smoothPasses: 0, filterEpochs: 0, smoothEpochs: 0 };
}
