/**
 * Hindcast as a library: the same pipeline the command runs, callable from other Node programs.
 */
export { loadConfig, validateConfig } from './config/load.js';
export { configSchema, type HindcastConfig, type ConfigOverrides } from './config/schema.js';
export { readFixLog, readFixBytes } from './input/read-log.js';
export { readDecisions } from './input/decisions-csv.js';
export { parseDecisionNotes } from './input/decision-notes.js';
export { attachDecisionNotes } from './session/products/products.js';
export { DECIDING_TESTS, type DecidingTest } from './session/result/decision-log.js';
export { readFixCsv } from './input/csv-fixes.js';
export { FixSeriesBuilder, type FixSeries } from './input/fix-series.js';
export { processSession } from './session/process-session.js';
export { processPooledSessions, type PoolInput } from './session/process-pooled.js';
export { processImuSession } from './session/imu/imu-session.js';
export { imuFileSource, imuArraySource, IMU_SAMPLE_STRIDE, type ImuSampleSource, type ImuSampleTarget } from './input/imu-source.js';
export type { SessionResult, OutlierRecord, SessionMetrics } from './session/result/result.js';
export { sampleTracks, measure, type DrawnTrack, type TrackDraws, type Quantity } from './session/survey/draws.js';
export { releasePosterior } from './session/survey/posterior.js';
export type { SurveyProducts, LengthEntry, DistanceEntry, SurveyVertex } from './session/survey/survey.js';
export type { Occupation } from './session/survey/occupations.js';
export { pointsCsv } from './output/points-csv.js';
export { runBatch, type BatchOptions, type BatchResult, type BatchEvent } from './batch/run-batch.js';
export { joinShards } from './batch/join.js';
export { parseShard, type Shard } from './batch/shard.js';
export { trackCsv } from './output/track-csv.js';
export { outliersCsv } from './output/outliers-csv.js';
export { sessionGeoJson, type GeoJsonLayer } from './output/geojson.js';
export { GEOJSON_LAYERS } from './output/geojson-layers.js';
export { sessionGpx } from './output/gpx.js';
export { InputError, InputErrorList, ConfigError, UsageError, NumericalError } from './errors.js';
export { CAUTION } from './output/caution.js';
export type { AdequacyCheck } from './session/check/adequacy.js';
export type { SessionVerdict } from './session/check/verdict.js';
export type { SessionQuality } from './output/summary.js';
