/**
 * One session from log to outputs: read, user decisions (`<stem>.decisions.csv`), process (with
 * the IMU when `<stem>.imu.csv` lies beside the log), and write every output atomically; with the
 * report on, the session's page (report/<stem>.html) is drawn here too and staged with the other
 * outputs. Runs inside a worker thread (worker.ts) or in-process; it takes and returns only
 * structured-clone-safe data, and returns the summary entry and the overview's few kilobytes
 * instead of the SessionResult, so the batch's memory and its last step do not grow with its size.
 */
import { readFile, rm, stat } from 'node:fs/promises';
import { join } from 'node:path';
import type { HindcastConfig } from '../config/schema.js';
import { ConfigError, InputError, NumericalError } from '../errors.js';
import type { InputWarning } from '../errors.js';
import { readFixLog } from '../input/read-log.js';
import { readDecisions } from '../input/decisions-csv.js';
import { processSession } from '../session/process-session.js';
import { processPooledSessions } from '../session/process-pooled.js';
import type { FixSeries } from '../input/fix-series.js';
import { processImuSession } from '../session/imu/imu-session.js';
import { imuFileSource } from '../input/imu-source.js';
import type { SessionResult } from '../session/result/result.js';
import { trackCsvChunks } from '../output/track-csv.js';
import { outliersCsvChunks } from '../output/outliers-csv.js';
import { parseDecisionNotes } from '../input/decision-notes.js';
import { attachDecisionNotes } from '../session/products/products.js';
import { GEOJSON_LAYERS, layerChunks, layersFor } from '../output/geojson-layers.js';
import { geoJsonOptions, sessionGeoJsonChunks } from '../output/geojson.js';
import { sessionGpxChunks } from '../output/gpx.js';
import { pointsCsvChunks } from '../output/points-csv.js';
import { releasePosterior } from '../session/survey/posterior.js';
import { reportPayload } from '../output/report/payload.js';
import { overviewData, type OverviewData } from '../output/report/overview-data.js';
import { sessionPageName } from '../output/report/page-path.js';
import { okEntry, type SessionSummary } from '../output/summary.js';
import { VERSION } from '../version.js';
import { commitTemporaries, writeChunksToTemporary } from '../io/atomic-write.js';
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
  /** Draw the session's page and its overview data (the report is on). */
  withPayload: boolean;
}

export interface SessionOutcome {
  summary: SessionSummary;
  outputs: OutputFile[];
  /** The session's row data of report.html (with the report on, ok sessions). */
  overview?: OverviewData;
  /** The failure would repeat on the same inputs and configuration (bad input or settings). */
  settled: boolean;
}

export interface SessionFiles {
  track: string;
  outliers: string;
  geojson: string;
  /** One geometry type a file (geojson-layers.ts). */
  trackLayer: string;
  flagsLayer: string;
  occupationsLayer: string;
  epochsLayer: string;
  gpx: string;
  points: string;
  /** The session's report page (with the report on). */
  page: string;
}

/** Every output a session may have (the GPX only with output.gpx, the page only with the report), relative to the output folder ("/"-separated). */
export function outputNames(name: string): SessionFiles {
  return {
    track: `${name}.track.csv`, outliers: `${name}.outliers.csv`, geojson: `${name}.geojson`,
    trackLayer: `${name}.track.geojson`, flagsLayer: `${name}.flags.geojson`, occupationsLayer: `${name}.occupations.geojson`, epochsLayer: `${name}.epochs.geojson`,
    gpx: `${name}.gpx`, points: `${name}.points.csv`, page: sessionPageName(name),
  };
}

/** The same as absolute paths. */
export function outputPaths(out: string, name: string): SessionFiles {
  const n = outputNames(name);
  const abs = (rel: string): string => join(out, ...rel.split('/'));
  return {
    track: abs(n.track), outliers: abs(n.outliers), geojson: abs(n.geojson),
    trackLayer: abs(n.trackLayer), flagsLayer: abs(n.flagsLayer), occupationsLayer: abs(n.occupationsLayer), epochsLayer: abs(n.epochsLayer),
    gpx: abs(n.gpx), points: abs(n.points), page: abs(n.page),
  };
}

export interface WriteOptions {
  /**
   * Draw the session's page (report/<stem>.html), given the names of all the session's outputs
   * (the page's own included); it is staged with the others. Without it, a page of an earlier
   * run is removed.
   */
  page?: (outputs: string[]) => Promise<string>;
}

/**
 * Write the outputs of one session (streamed in chunks of about a megabyte so no output is held
 * whole in memory): every file goes to a temporary first, and only when all are complete are they
 * renamed into place, so a failure while writing (or drawing the page) leaves the earlier outputs
 * as they were. Returns them relative to `out` with sizes.
 */
export async function writeSessionOutputs(out: string, r: SessionResult, cfg: HindcastConfig, opt: WriteOptions = {}): Promise<OutputFile[]> {
  const n = outputNames(r.name);
  const p = outputPaths(out, r.name);
  const written: Array<keyof SessionFiles> = ['track', 'outliers', 'geojson'];
  const layerKey = { track: 'trackLayer', flags: 'flagsLayer', occupations: 'occupationsLayer', epochs: 'epochsLayer' } as const;
  const layers = layersFor(cfg, (r.survey?.occupations.length ?? 0) > 0);
  const absent: Array<keyof SessionFiles> = [];
  for (const l of GEOJSON_LAYERS) (layers.includes(l) ? written : absent).push(layerKey[l.layer]);
  if (cfg.output.gpx) written.push('gpx');
  else absent.push('gpx');
  // occupied points (fixes-only sessions: the IMU path has no joint posterior yet)
  if (r.survey) written.push('points');
  else absent.push('points');
  if (opt.page) written.push('page');
  else absent.push('page');
  let pageHtml = '';
  const chunksOf = (k: keyof SessionFiles) => {
    if (k === 'page') return [pageHtml];
    if (k === 'track') return trackCsvChunks(r);
    if (k === 'outliers') return outliersCsvChunks(r);
    if (k === 'geojson') return sessionGeoJsonChunks(r, geoJsonOptions(cfg));
    if (k === 'gpx') return sessionGpxChunks(r, { decimals: cfg.output.geojsonDecimals });
    if (k === 'points') return pointsCsvChunks(r);
    return layerChunks(r, cfg, k === 'trackLayer' ? 'track' : k === 'flagsLayer' ? 'flags' : k === 'occupationsLayer' ? 'occupations' : 'epochs');
  };
  // every output is staged under a temporary name first and all are renamed together, so a failure
  // while writing leaves the earlier run's files untouched
  const staged: Array<{ tmp: string; path: string }> = [];
  try {
    if (opt.page) pageHtml = await opt.page(written.map((k) => n[k]));
    for (const k of written) staged.push({ tmp: await writeChunksToTemporary(p[k], chunksOf(k)), path: p[k] });
  } catch (e) {
    for (const s of staged) await rm(s.tmp, { force: true });
    throw e;
  }
  await commitTemporaries(staged);
  for (const k of absent) await rm(p[k], { force: true }); // from an earlier run with output.points / output.gpx
  const files: OutputFile[] = [];
  for (const k of written) files.push({ file: n[k], size: (await stat(p[k])).size });
  return files;
}

/**
 * The outputs of a session that are on disk (relative to `out`, with sizes): after a failed run
 * these are the outputs of an earlier good run, kept in place and marked stale, never deleted.
 */
export async function existingSessionOutputs(out: string, name: string): Promise<OutputFile[]> {
  const n = outputNames(name);
  const p = outputPaths(out, name);
  const found: OutputFile[] = [];
  for (const k of Object.keys(n) as Array<keyof SessionFiles>) {
    try {
      const st = await stat(p[k]);
      if (st.isFile()) found.push({ file: n[k], size: st.size });
    } catch {
      /* not there */
    }
  }
  return found;
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
    const decisions = t.decisionsPath ? readDecisions(t.decisionsPath, series, t.config.input) : undefined;
    const r = t.imuPath
      ? await processImuSession(series, imuFileSource(t.imuPath, t.config), t.config, t.name, decisions)
      : processSession(series, t.config, t.name, decisions);
    return await completeTask(t, series, decisions, r, t0);
  } catch (e) {
    return failedOutcome(t, e);
  }
}

/** A group of sessions of one receiver, calibrated together (batch.pool; session/process-pooled.ts). */
export interface PoolTask {
  pool: string;
  tasks: SessionTask[];
}

/**
 * The sessions of a pool: each read (a file that cannot be read fails alone), processed together
 * with one noise calibration, and each one's outputs written as runSessionTask writes them.
 */
export async function runPoolTask(p: PoolTask): Promise<SessionOutcome[]> {
  const t0 = performance.now();
  const cfg = p.tasks[0]!.config;
  const read: Array<{ series: FixSeries; decisions?: Map<number, 'keep' | 'reject'> } | { error: unknown }> = [];
  for (const t of p.tasks) {
    try {
      const series = await readFixLog(t.path, t.relPath, t.config);
      const decisions = t.decisionsPath ? readDecisions(t.decisionsPath, series, t.config.input) : undefined;
      read.push({ series, ...(decisions ? { decisions } : {}) });
    } catch (error) {
      read.push({ error });
    }
  }
  const okIdx = read.flatMap((x, i) => ('error' in x ? [] : [i]));
  const results = processPooledSessions(
    okIdx.map((i) => {
      const x = read[i] as { series: FixSeries; decisions?: Map<number, 'keep' | 'reject'> };
      return { series: x.series, name: p.tasks[i]!.name, ...(x.decisions ? { userDecisions: x.decisions } : {}) };
    }),
    cfg,
    p.pool,
  );
  // every ok member records the members that failed (so a rerun compares the same group)
  const failed = p.tasks.filter((_, i) => 'error' in read[i]! || results[okIdx.indexOf(i)] instanceof Error).map((t) => t.name);
  for (const r of results) {
    const pool = r instanceof Error ? undefined : (r.info.calibration as { pool?: { failed?: string[] } } | undefined)?.pool;
    if (pool && failed.length) pool.failed = failed;
  }
  const out: SessionOutcome[] = [];
  for (let i = 0; i < p.tasks.length; i++) {
    const t = p.tasks[i]!, x = read[i]!;
    if ('error' in x) {
      out.push(failedOutcome(t, x.error));
      continue;
    }
    const r = results[okIdx.indexOf(i)]!;
    if (r instanceof Error) {
      out.push(failedOutcome(t, r));
      continue;
    }
    try {
      out.push(await completeTask(t, x.series, x.decisions, r, t0));
    } catch (e) {
      out.push(failedOutcome(t, e));
    }
  }
  return out;
}

/** A processed session's notes attached, its posterior released, its page drawn and its outputs written. */
async function completeTask(t: SessionTask, series: FixSeries, decisions: Map<number, 'keep' | 'reject'> | undefined, r: SessionResult, t0: number): Promise<SessionOutcome> {
  if (t.decisionsPath && decisions) attachDecisionNotes(r, parseDecisionNotes(await readFile(t.decisionsPath, 'utf8'), series));
  // the survey products are computed: the joint posterior's arrays can go before the writes
  releasePosterior(r);
  const payload = t.withPayload ? reportPayload(r, { maxPoints: t.config.output.reportMaxPoints }) : undefined;
  let entry: SessionSummary | undefined;
  const page = payload
    ? async (names: string[]) => {
        // the chart library is large: loaded only where a page is drawn
        const { sessionPageHtml } = await import('../output/report/session-page.js');
        entry = okEntry(r, t.relPath, names, 0);
        return sessionPageHtml(entry, payload, { tool: 'hindcast', version: VERSION, profile: t.config.profile });
      }
    : undefined;
  const outputs = await writeSessionOutputs(t.out, r, t.config, { page });
  const elapsedSec = round3((performance.now() - t0) / 1000);
  const summary = entry ? { ...entry, elapsedSec } : okEntry(r, t.relPath, outputs.map((o) => o.file), elapsedSec);
  return { summary, outputs, ...(payload ? { overview: overviewData(payload) } : {}), settled: false };
}

/** A failed session's outcome: the outputs of an earlier run stay where they are (the batch marks them stale). */
function failedOutcome(t: SessionTask, e: unknown): SessionOutcome {
  const warnings = (e as { warnings?: InputWarning[] }).warnings ?? [];
  return { summary: failedEntry(t.name, t.relPath, failureReason(e), warnings), outputs: [], settled: e instanceof InputError || e instanceof ConfigError };
}

function round3(v: number): number {
  return Math.round(v * 1000) / 1000;
}
