/**
 * Hindcast as a library: the same pipeline the command runs, callable from other Node programs.
 */
export { loadConfig, validateConfig } from './config/load.js';
export { configSchema, type HindcastConfig, type ConfigOverrides } from './config/schema.js';
export { readFixLog } from './input/read-log.js';
export { readFixCsv } from './input/csv-fixes.js';
export { FixSeriesBuilder, type FixSeries } from './input/fix-series.js';
export { processSession } from './session/process-session.js';
export type { SessionResult, OutlierRecord, SessionMetrics } from './session/result.js';
export { runBatch, type BatchOptions, type BatchResult } from './batch/run-batch.js';
export { trackCsv } from './output/track-csv.js';
export { outliersCsv } from './output/outliers-csv.js';
export { sessionGeoJson } from './output/geojson.js';
export { InputError, ConfigError, UsageError, NumericalError } from './errors.js';
export { CAUTION } from './output/caution.js';
