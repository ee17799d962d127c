/**
 * One session from log to outputs: read, user decisions (`<stem>.decisions.csv`), process (with
 * the IMU when `<stem>.imu.csv` lies beside the log), write every output atomically, and compute
 * the report payload. Runs inside a worker thread (worker.ts) or in-process; it takes and returns
 * only structured-clone-safe data, and returns the summary entry and the small payload instead of
 * the SessionResult, so the batch's memory does not grow with its size.
 */
import { rm, stat } from 'node:fs/promises';
import { join } from 'node:path';
import type { HindcastConfig } from '../config/schema.js';
import { ConfigError, InputError, NumericalError } from '../errors.js';
import type { InputWarning } from '../errors.js';
import { readFixLog } from '../input/read-log.js';
import { readDecisions } from '../input/decisions-csv.js';
import { processSession } from '../session/process-session.js';
import { processImuSession } from '../session/imu-session.js';
import type { SessionResult } from '../session/result.js';
import { trackCsvChunks } from '../output/track-csv.js';
import { outliersCsvChunks } from '../output/outliers-csv.js';
import { geoJsonOptions, sessionGeoJsonChunks } from '../output/geojson.js';
import { sessionGpxChunks } from '../output/gpx.js';
import { pointsCsvChunks } from '../output/points-csv.js';
import { releasePosterior } from '../session/posterior.js';
import { reportPayload } from '../output/report/payload.js';
import { okEntry, type SessionSummary } from '../output/summary.js';
import { writeChunksAtomic } from './atomic-write.js';
import type { OutputFile } from './manifest.js';

export interface SessionTask {
  name: string;
  /** Absolute path of the log. */
  path: string;
  /** "/"-separated path relative to the input root. */
  relPath: string;
  /** Absolute path of `<stem>.decisions.csv`, when there is one. */
  decisionsPath?: string;
  /** Absolute path of `<stem>.imu.csv`, when there is one. */
  imuPath?: string;
  /** Absolute output folder. */
  out: string;
  config: HindcastConfig;
  /** Compute a report payload (the report is on). */
  withPayload: boolean;
}

export interface SessionOutcome {
  summary: SessionSummary;
  outputs: OutputFile[];
  payload?: unknown;
  /** The failure would repeat on the same inputs and configuration (bad input or settings). */
  settled: boolean;
}

export interface SessionFiles {
  track: string;
  outliers: string;
  geojson: string;
  gpx: string;
  points: string;
}

/** Every output a session may have (the GPX only with output.gpx), relative to the output folder ("/"-separated). */
export function outputNames(name: string): SessionFiles {
  return { track: `${name}.track.csv`, outliers: `${name}.outliers.csv`, geojson: `${name}.geojson`, gpx: `${name}.gpx`, points: `${name}.points.csv` };
}

/** The same as absolute paths. */
export function outputPaths(out: string, name: string): SessionFiles {
  const n = outputNames(name);
  const abs = (rel: string): string => join(out, ...rel.split('/'));
  return { track: abs(n.track), outliers: abs(n.outliers), geojson: abs(n.geojson), gpx: abs(n.gpx), points: abs(n.points) };
}

/**
 * Write the outputs of one session (each atomically, streamed in chunks of about a megabyte so no
 * output is held whole in memory); returns them relative to `out` with sizes.
 */
export async function writeSessionOutputs(out: string, r: SessionResult, cfg: HindcastConfig): Promise<OutputFile[]> {
  const n = outputNames(r.name);
  const p = outputPaths(out, r.name);
  await writeChunksAtomic(p.track, trackCsvChunks(r));
  await writeChunksAtomic(p.outliers, outliersCsvChunks(r));
  await writeChunksAtomic(p.geojson, sessionGeoJsonChunks(r, geoJsonOptions(cfg)));
  const written: Array<keyof SessionFiles> = ['track', 'outliers', 'geojson'];
  if (cfg.output.gpx) {
    await writeChunksAtomic(p.gpx, sessionGpxChunks(r, { decimals: cfg.output.geojsonDecimals }));
    written.push('gpx');
  } else await rm(p.gpx, { force: true }); // from an earlier run with output.gpx
  // occupied points (fixes-only sessions: the IMU path has no joint posterior yet)
  if (r.survey) {
    await writeChunksAtomic(p.points, pointsCsvChunks(r));
    written.push('points');
  } else await rm(p.points, { force: true });
  const files: OutputFile[] = [];
  for (const k of written) files.push({ file: n[k], size: (await stat(p[k])).size });
  return files;
}

/** Remove the outputs of a session (after a failure, so none is left that does not match its input). */
export async function removeSessionOutputs(out: string, name: string): Promise<void> {
  for (const p of Object.values(outputPaths(out, name))) await rm(p, { force: true });
}

/** A short reason for a failed session: input and config errors as they are, others named. */
export function failureReason(e: unknown): string {
  if (e instanceof InputError || e instanceof ConfigError) return e.message;
  if (e instanceof NumericalError) return `numerical failure: ${e.message}`;
  return `internal error: ${(e as Error)?.message ?? String(e)}`;
}

export function failedEntry(name: string, input: string, reason: string, warnings: InputWarning[] = []): SessionSummary {
  return { name, input, status: 'failed', reason, warnings };
}

export async function runSessionTask(t: SessionTask): Promise<SessionOutcome> {
  const t0 = performance.now();
  try {
    const series = await readFixLog(t.path, t.relPath, t.config);
    const decisions = t.decisionsPath ? readDecisions(t.decisionsPath, series) : undefined;
    const r = t.imuPath
      ? await processImuSession(series, t.imuPath, t.config, t.name, decisions)
      : processSession(series, t.config, t.name, decisions);
    // the survey products are computed: the joint posterior's arrays can go before the writes
    releasePosterior(r);
    const payload = t.withPayload ? reportPayload(r, { maxPoints: t.config.output.reportMaxPoints }) : undefined;
    const outputs = await writeSessionOutputs(t.out, r, t.config);
    const summary = okEntry(r, t.relPath, outputs.map((o) => o.file), round3((performance.now() - t0) / 1000));
    return { summary, outputs, payload, settled: false };
  } catch (e) {
    await removeSessionOutputs(t.out, t.name).catch(() => undefined);
    const warnings = (e as { warnings?: InputWarning[] }).warnings ?? [];
    return { summary: failedEntry(t.name, t.relPath, failureReason(e), warnings), outputs: [], settled: e instanceof InputError || e instanceof ConfigError };
  }
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}
