/**
 * A batch: discover sessions, keep those whose outputs are current (resume manifest), process the
 * rest in parallel (worker threads) with each output written atomically (each session's report
 * page is drawn in its worker, as one of its outputs), and write summary.json last, then the
 * overview report.html from the summary and the saved overview data. One session's failure, or its worker's crash, never stops the others;
 * a kill at any moment leaves only complete outputs plus temporaries that the next run removes.
 *
 * Order of writes for one session: manifest entry and overview data removed → outputs, the
 * session's page among them with the report on (all to temporaries, then renamed) → overview data
 * → manifest entry. So an entry exists only for outputs that are
 * complete and belong to the inputs it names. A session that fails leaves the outputs of an
 * earlier run in place: its summary entry says so (`stale`, `staleOutputs`) and its manifest entry
 * lists them, so a later run redoes the session when they are changed or gone.
 */
import { mkdir, realpath, rm, stat } from 'node:fs/promises';
import { dirname, join, resolve, sep } from 'node:path';
import pLimit from 'p-limit';
import type { HindcastConfig } from '../config/schema.js';
import { UsageError } from '../errors.js';
import { buildSummary, markStale, toJson, type BatchSummary, type SessionSummary } from '../output/summary.js';
import type { OverviewData } from '../output/report/overview-data.js';
import { pageOwner, REPORT_FILE } from '../output/report/page-path.js';
import { VERSION } from '../version.js';
import { cleanTemporaries, writeFileAtomic } from './atomic-write.js';
import { discover, type SessionInput } from './discover.js';
import {
  configHash,
  hashFile,
  readEntry,
  readOverviewData,
  removeEntry,
  removeOverviewData,
  staleReason,
  writeEntry,
  writeOverviewData,
  MANIFEST_SCHEMA,
  STATE_DIR,
  type InputHash,
  type ManifestEntry,
} from './manifest.js';
import { inProcessRunner, threadRunner, type SessionRunner } from './runner.js';
import { existingSessionOutputs, failedEntry, outputNames, outputPaths, type SessionTask } from './session-task.js';
import { inShard, shardOf, shardSummaryName, SHARD_SUMMARY_RE, type Shard } from './shard.js';

export { outputPaths, writeSessionOutputs, failureReason } from './session-task.js';

export type BatchEvent =
  /** After discovery and the manifest check. */
  | { type: 'plan'; sessions: number; toProcess: number; upToDate: number; shard?: Shard }
  | { type: 'start'; name: string; input: string }
  /** A session processed by this run; `done` of `total` counts only those. */
  | { type: 'done'; session: SessionSummary; done: number; total: number }
  | { type: 'note'; message: string };

export interface BatchOptions {
  input: string;
  out: string;
  config: HindcastConfig;
  /** Sessions processed at once (default 1). */
  jobs?: number;
  /** Run sessions in this thread instead of worker threads (default: when jobs is 1). */
  inProcess?: boolean;
  /** Redo every session, current or not. */
  force?: boolean;
  /** Take only this part of the sessions, writing summary.shard-K-of-N.json instead of summary.json. */
  shard?: Shard;
  /** Worker entry module; default the compiled dist/src/batch/worker.js. */
  workerFile?: string;
  /** Heap limit of each worker thread (MB). */
  workerMemoryMb?: number;
  onEvent?: (e: BatchEvent) => void;
  /** Called after each processed session (kept for simple progress output). */
  onSession?: (s: SessionSummary, done: number, total: number) => void;
}

export interface BatchResult {
  summary: BatchSummary;
  exitCode: 0 | 1;
  /** Names of the sessions processed by this run, and of those kept as up to date. */
  processed: string[];
  upToDate: string[];
  /** Path of the summary file written. */
  summaryPath: string;
  /** Set when the report could not be written (the summary was). */
  reportError?: string;
}

function inside(root: string, p: string): boolean {
  return p === root || p.startsWith(root.endsWith(sep) ? root : root + sep);
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
  if (inStat.isDirectory()) {
    // refuse before creating anything inside the input tree
    let probe = resolve(out);
    for (;;) {
      try {
        const r = await realpath(probe);
        if (inside(inReal, r))
          throw new UsageError(`the output folder ${out} is the input folder or inside it; choose a folder outside ${input}`);
        break;
      } catch (e) {
        if (e instanceof UsageError) throw e;
        const up = dirname(probe);
        if (up === probe) break;
        probe = up;
      }
    }
  }
  await mkdir(out, { recursive: true });
  const outReal = await realpath(out);
  if (inStat.isDirectory() && inside(inReal, outReal))
    throw new UsageError(`the output folder ${out} is the input folder or inside it; choose a folder outside ${input}`);
  if (inStat.isFile() && outReal === inReal) throw new UsageError(`the output folder ${out} is the input file`);
}

/** Which session a file of the output folder (relative, "/"-separated) belongs to; null for batch-level files. */
export function ownerOfOutput(rel: string): string | null {
  const page = pageOwner(rel);
  if (page !== null) return page;
  if (rel === REPORT_FILE) return null;
  const parts = rel.split('/');
  if (parts[0] === STATE_DIR && (parts[1] === 'manifest' || parts[1] === 'overview' || parts[1] === 'payloads') && parts.length > 2)
    return parts.slice(2).join('/').replace(/\.(json|v8)$/, '');
  if (parts[0] === STATE_DIR) return null;
  if (parts.length === 1 && /^summary(\.shard-\d+-of-\d+)?\.json$/.test(rel)) return null;
  const base = parts[parts.length - 1]!;
  const dot = base.indexOf('.');
  const stem = dot > 0 ? base.slice(0, dot) : base;
  return [...parts.slice(0, -1), stem].join('/');
}

interface Planned {
  si: SessionInput;
  inputs: InputHash[];
  /** Set when the session cannot run at all (name clash, unsafe output path). */
  refused?: string;
  entry: ManifestEntry | null;
  stale: string | null;
}

async function hashInputs(si: SessionInput): Promise<InputHash[]> {
  const files = [{ path: si.path, relPath: si.relPath }, ...si.companions];
  const out: InputHash[] = [];
  for (const f of files) {
    try {
      out.push({ file: f.relPath, ...(await hashFile(f.path)) });
    } catch {
      out.push({ file: f.relPath, sha256: 'unreadable', size: -1 });
    }
  }
  return out;
}

export async function runBatch(opt: BatchOptions): Promise<BatchResult> {
  const t0 = performance.now();
  await checkFolders(opt.input, opt.out);
  // the real path, so that output paths compare with the (real) input paths
  const out = await realpath(resolve(opt.out));
  const note = (message: string): void => opt.onEvent?.({ type: 'note', message });
  const shard = opt.shard;
  const mySummary = shard ? shardSummaryName(shard) : 'summary.json';
  // temporaries of an interrupted run; with shards, only this shard's own (others may be running)
  const removed = await cleanTemporaries(
    out,
    shard
      ? (rel) => {
          const owner = ownerOfOutput(rel);
          return owner === null ? rel === mySummary : shardOf(owner, shard.count) === shard.index;
        }
      : undefined,
  );
  if (removed > 0) note(`removed ${removed} temporary file(s) left by an interrupted run`);
  // the full report data an earlier version kept per session (the pages are drawn in the workers now)
  await rm(join(out, STATE_DIR, 'payloads'), { recursive: true, force: true });
  // a summary is there only once its batch has finished: remove the last one now (a shard's run
  // also makes the joined summary out of date)
  await rm(join(out, mySummary), { force: true });
  if (shard) await rm(join(out, 'summary.json'), { force: true });

  const found = await discover(opt.input);
  if (found.sessions.length === 0) throw new UsageError(`no fix logs found in ${opt.input}`);
  const sessions = found.sessions.filter((s) => inShard(s.name, shard));
  const inputIsFolder = (await stat(opt.input)).isDirectory();
  const inputFiles = new Set(found.sessions.flatMap((s) => [s.path, ...s.companions.map((c) => c.path)]));
  const cfgHash = configHash(opt.config);
  const report = opt.config.output.report;

  // plan: hash inputs, compare with the manifest
  const firstOfName = new Map<string, string>();
  const planned: Planned[] = [];
  for (const si of sessions) {
    const prior = firstOfName.get(si.name);
    if (prior !== undefined) planned.push({ si, inputs: [], refused: `same output name "${si.name}" as ${prior}; rename one of them`, entry: null, stale: 'refused' });
    else {
      firstOfName.set(si.name, si.relPath);
      planned.push({ si, inputs: [], entry: null, stale: null });
    }
  }
  const ioLimit = pLimit(4);
  await Promise.all(
    planned.map((p) =>
      ioLimit(async () => {
        if (p.refused) return;
        const files = outputPaths(out, p.si.name);
        const paths = Object.values(files);
        if (paths.some((x) => inputFiles.has(x))) {
          p.refused = 'an output file of this session would replace an input file; write to another folder';
          return;
        }
        for (const parent of report ? [dirname(files.track), dirname(files.page)] : [dirname(files.track)]) {
          await mkdir(parent, { recursive: true });
          if (inputIsFolder && inside(found.root, await realpath(parent))) {
            p.refused = 'the output folder of this session lies inside the input folder (symbolic link?); write to another folder';
            return;
          }
        }
        p.inputs = await hashInputs(p.si);
        p.entry = await readEntry(out, p.si.name);
        p.stale = opt.force ? 'forced' : await staleReason(out, p.entry, { version: VERSION, configHash: cfgHash, inputs: p.inputs, needPayload: report });
      }),
    ),
  );
  const todo = planned.filter((p) => !p.refused && p.stale !== null);
  const current = planned.filter((p) => !p.refused && p.stale === null);
  opt.onEvent?.({ type: 'plan', sessions: planned.length, toProcess: todo.length, upToDate: current.length, shard });
  for (const p of planned) if (p.refused) note(`${p.si.name}: FAILED  ${p.refused}`);

  // process
  const results = new Map<string, SessionSummary>();
  for (const p of planned) if (p.refused) results.set(p.si.relPath, failedEntry(p.si.name, p.si.relPath, p.refused));
  for (const p of current) results.set(p.si.relPath, p.entry!.summary);
  const jobs = Math.max(1, Math.floor(opt.jobs ?? 1));
  let runner: SessionRunner | undefined;
  if (todo.length > 0) {
    const inProcess = opt.inProcess ?? jobs === 1;
    runner = inProcess ? inProcessRunner() : threadRunner({ threads: Math.min(jobs, todo.length), workerFile: opt.workerFile, workerMemoryMb: opt.workerMemoryMb });
  }
  const limit = pLimit(jobs);
  let done = 0;
  try {
    await Promise.all(
      todo.map((p) =>
        limit(async () => {
          const name = p.si.name;
          await removeEntry(out, name);
          await removeOverviewData(out, name);
          opt.onEvent?.({ type: 'start', name, input: p.si.relPath });
          const decisions = p.si.companions.find((c) => c.suffix === '.decisions.csv');
          const imu = p.si.companions.find((c) => c.suffix === '.imu.csv');
          const task: SessionTask = {
            name,
            path: p.si.path,
            relPath: p.si.relPath,
            ...(decisions ? { decisionsPath: decisions.path } : {}),
            ...(imu ? { imuPath: imu.path } : {}),
            out,
            config: opt.config,
            withPayload: report,
          };
          const r = await runner!.run(task);
          if (r.summary.status === 'failed') {
            // never lose work: the outputs of an earlier run stay in place, marked stale
            const kept = await existingSessionOutputs(out, name);
            if (kept.length > 0) {
              r.summary = markStale(r.summary, kept.map((o) => o.file));
              r.outputs = kept;
            }
          }
          if (r.summary.status === 'ok' && r.overview !== undefined) await writeOverviewData(out, name, r.overview);
          if (r.summary.status === 'ok' || r.settled)
            await writeEntry(out, {
              schema: MANIFEST_SCHEMA,
              tool: 'hindcast',
              version: VERSION,
              name,
              inputs: p.inputs,
              configHash: cfgHash,
              config: opt.config,
              outputs: r.outputs,
              payload: r.summary.status === 'ok' && r.overview !== undefined,
              summary: r.summary,
              settled: r.settled,
            });
          results.set(p.si.relPath, r.summary);
          done++;
          opt.onEvent?.({ type: 'done', session: r.summary, done, total: todo.length });
          opt.onSession?.(r.summary, done, todo.length);
        }),
      ),
    );
  } finally {
    await runner?.close();
  }

  const entries = planned.map((p) => results.get(p.si.relPath)!);
  const summary = buildSummary(VERSION, opt.input, opt.config.profile, entries, {
    configHash: cfgHash,
    ...(shard ? { shard: { index: shard.index, count: shard.count } } : {}),
    run: { processed: todo.length, upToDate: current.length, elapsedSec: Math.round(performance.now() - t0) / 1000 },
  });
  const summaryPath = join(out, mySummary);
  await writeFileAtomic(summaryPath, toJson(summary));
  const res: BatchResult = {
    summary,
    exitCode: summary.totals.failed > 0 ? 1 : 0,
    processed: todo.map((p) => p.si.name),
    upToDate: current.map((p) => p.si.name),
    summaryPath,
  };
  if (report && !shard) {
    const err = await buildReport(out, summary);
    if (err) {
      res.reportError = err;
      res.exitCode = 1;
      note(`the report could not be written: ${err}`);
    }
  }
  return res;
}

/**
 * Write the overview report.html from the summary and the saved overview data of the ok sessions
 * (their pages are written already, by their workers); returns an error message or null.
 */
export async function buildReport(out: string, summary: BatchSummary): Promise<string | null> {
  try {
    const { writeReport } = await import('../output/report/write-report.js');
    const data = new Map<string, OverviewData>();
    const ioLimit = pLimit(8);
    await Promise.all(
      summary.sessions.map((s) =>
        ioLimit(async () => {
          if (s.status !== 'ok') return;
          try {
            data.set(s.name, (await readOverviewData(out, s.name)) as OverviewData);
          } catch {
            /* a session without overview data gets the row its summary entry allows */
          }
        }),
      ),
    );
    await writeReport(out, summary, data);
    return null;
  } catch (e) {
    return (e as Error)?.message ?? String(e);
  }
}

export { outputNames, SHARD_SUMMARY_RE };
