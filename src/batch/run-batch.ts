/**
 * A batch: discover sessions, process them with bounded concurrency, write each session's outputs
 * atomically, and write summary.json last. One session's failure never stops the others.
 */
import { realpath, mkdir, stat } from 'node:fs/promises';
import { join, resolve, sep } from 'node:path';
import pLimit from 'p-limit';
import type { HindcastConfig } from '../config/schema.js';
import { ConfigError, InputError, UsageError, NumericalError } from '../errors.js';
import { readFixLog } from '../input/read-log.js';
import { processSession } from '../session/process-session.js';
import type { SessionResult } from '../session/result.js';
import { trackCsvChunks } from '../output/track-csv.js';
import { outliersCsv } from '../output/outliers-csv.js';
import { sessionGeoJson } from '../output/geojson.js';
import { buildSummary, okEntry, toJson, type BatchSummary, type SessionSummary } from '../output/summary.js';
import { VERSION } from '../version.js';
import { cleanTemporaries, writeChunksAtomic, writeFileAtomic } from './atomic-write.js';
import { discoverSessions, type SessionInput } from './discover.js';

export interface BatchOptions {
  input: string;
  out: string;
  config: HindcastConfig;
  jobs?: number;
  /** Called after each session (for progress output). */
  onSession?: (s: SessionSummary, done: number, total: number) => void;
}

export interface BatchResult {
  summary: BatchSummary;
  exitCode: 0 | 1;
}

/** Refuse an output folder that is the input folder or inside it. */
export async function checkFolders(input: string, out: string): Promise<void> {
  let inReal: string;
  try {
    inReal = await realpath(input);
  } catch {
    throw new UsageError(`input not found: ${input}`);
  }
  const inStat = await stat(inReal);
  await mkdir(out, { recursive: true });
  const outReal = await realpath(out);
  if (inStat.isDirectory() && (outReal === inReal || outReal.startsWith(inReal + sep)))
    throw new UsageError(`the output folder ${out} is the input folder or inside it; choose a folder outside ${input}`);
}

/** Output file paths of a session. */
export function outputPaths(out: string, name: string): { track: string; outliers: string; geojson: string } {
  const base = join(out, ...name.split('/'));
  return { track: `${base}.track.csv`, outliers: `${base}.outliers.csv`, geojson: `${base}.geojson` };
}

export async function writeSessionOutputs(out: string, r: SessionResult, cfg: HindcastConfig): Promise<string[]> {
  const p = outputPaths(out, r.name);
  await writeChunksAtomic(p.track, trackCsvChunks(r));
  await writeFileAtomic(p.outliers, outliersCsv(r));
  await writeFileAtomic(p.geojson, JSON.stringify(sessionGeoJson(r, { decimals: cfg.output.geojsonDecimals })) + '\n');
  return [p.track, p.outliers, p.geojson];
}

/** A short reason for a failed session: input and config errors as they are, others named. */
export function failureReason(e: unknown): string {
  if (e instanceof InputError || e instanceof ConfigError) return e.message;
  if (e instanceof NumericalError) return `numerical failure: ${e.message}`;
  return `internal error: ${(e as Error)?.message ?? String(e)}`;
}

export async function processOne(si: SessionInput, out: string, cfg: HindcastConfig): Promise<SessionSummary> {
  const t0 = performance.now();
  try {
    const series = await readFixLog(si.path, si.relPath, cfg);
    const r = processSession(series, cfg, si.name);
    const outputs = await writeSessionOutputs(out, r, cfg);
    return okEntry(r, si.relPath, outputs.map((o) => o.slice(resolve(out).length + 1).split(sep).join('/')), (performance.now() - t0) / 1000);
  } catch (e) {
    return { name: si.name, input: si.relPath, status: 'failed', reason: failureReason(e), warnings: (e as { warnings?: [] }).warnings ?? [] };
  }
}

export async function runBatch(opt: BatchOptions): Promise<BatchResult> {
  await checkFolders(opt.input, opt.out);
  const out = resolve(opt.out);
  await cleanTemporaries(out);
  const sessions = await discoverSessions(opt.input);
  if (sessions.length === 0) throw new UsageError(`no fix logs (.csv) found in ${opt.input}`);
  const limit = pLimit(Math.max(1, opt.jobs ?? 1));
  let done = 0;
  const results = await Promise.all(
    sessions.map((si) =>
      limit(async () => {
        const s = await processOne(si, out, opt.config);
        done++;
        opt.onSession?.(s, done, sessions.length);
        return s;
      }),
    ),
  );
  const summary = buildSummary(VERSION, opt.input, opt.config.profile, results);
  await writeFileAtomic(join(out, 'summary.json'), toJson(summary));
  return { summary, exitCode: summary.totals.failed > 0 ? 1 : 0 };
}
