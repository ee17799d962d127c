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
import { realpath, rm, stat } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import pLimit from 'p-limit';
import type { HindcastConfig } from '../config/schema.js';
import { UsageError } from '../errors.js';
import { buildSummary, markStale, toJson, type BatchSummary, type SessionSummary } from '../output/summary.js';
import type { OverviewData } from '../output/report/overview-data.js';
import { pageOwner, REPORT_FILE } from '../output/report/page-path.js';
import { VERSION } from '../version.js';
import { cleanTemporaries, writeFileAtomic } from '../io/atomic-write.js';
import { discover } from './discover.js';
import { checkFolders } from './folders.js';
import { configHash, readOverviewData, removeEntry, removeOverviewData, writeEntry, writeOverviewData, MANIFEST_SCHEMA, STATE_DIR } from './manifest.js';
import { planSessions, type Planned } from './plan.js';
import { inProcessRunner, threadRunner, type SessionRunner } from './runner.js';
import { existingSessionOutputs, failedEntry, outputNames, type SessionOutcome, type SessionTask } from './session-task.js';
import { earlierPool, poolChanged, poolGroups } from './pools.js';
import { inShard, shardOf, shardSummaryName, SHARD_SUMMARY_RE, type Shard } from './shard.js';

export { outputPaths, writeSessionOutputs, failureReason } from './session-task.js';
export { checkFolders } from './folders.js';
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

export async function runBatch(opt: BatchOptions): Promise<BatchResult> {
  const t0 = performance.now();
  await checkFolders(opt.input, opt.out);
  // the real path, so that output paths compare with the (real) input paths
  const out = await realpath(resolve(opt.out));
  const note = (message: string): void => opt.onEvent?.({ type: 'note', message });
  const shard = opt.shard;
  const mySummary = shard ? shardSummaryName(shard) : 'summary.json';
  await clearOutputFolder(out, mySummary, shard, note);

  const found = await discover(opt.input);
  if (found.sessions.length === 0) throw new UsageError(`no fix logs found in ${opt.input}`);
  const sessions = found.sessions.filter((s) => inShard(s.name, shard));
  const inputIsFolder = (await stat(opt.input)).isDirectory();
  const inputFiles = new Set(found.sessions.flatMap((s) => [s.path, ...s.companions.map((c) => c.path)]));
  const cfgHash = configHash(opt.config);
  const report = opt.config.output.report;

  const planned = await planSessions(sessions, { out, config: opt.config, configHash: cfgHash, force: !!opt.force, inputFiles, inputRoot: inputIsFolder ? found.root : null });
  // a pool is redone whole when any of its logs is: the noise estimate depends on all of them
  const pools = await poolGroups(planned, opt.config);
  for (const members of pools.values()) {
    const names = members.map((m) => m.si.name);
    for (const m of members) if (m.stale === null && poolChanged(m, names)) m.stale = "the logs of its pool changed";
    if (members.some((m) => m.stale !== null)) for (const m of members) if (m.stale === null) m.stale = 'pooled with a log that is redone';
  }
  // a log pooled before and alone now (its pool lost its other logs, or pooling is off)
  const pooledNow = new Set([...pools.values()].flat());
  for (const p of planned) if (!p.refused && p.stale === null && !pooledNow.has(p) && earlierPool(p)) p.stale = 'its pool changed';
  const todo = planned.filter((p) => !p.refused && p.stale !== null);
  const current = planned.filter((p) => !p.refused && p.stale === null);
  opt.onEvent?.({ type: 'plan', sessions: planned.length, toProcess: todo.length, upToDate: current.length, shard });
  for (const p of planned) if (p.refused) note(`${p.si.name}: FAILED  ${p.refused}`);

  const results = new Map<string, SessionSummary>();
  for (const p of planned) if (p.refused) results.set(p.si.relPath, failedEntry(p.si.name, p.si.relPath, p.refused));
  for (const p of current) results.set(p.si.relPath, p.entry!.summary);
  await processSessions(todo, pools, results, opt, out, cfgHash);

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
 * Remove what an interrupted or earlier run left that this run replaces: temporaries (with shards,
 * only this shard's own: others may be running), the old per-session report data, and the summary.
 */
async function clearOutputFolder(out: string, mySummary: string, shard: Shard | undefined, note: (message: string) => void): Promise<void> {
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
}

/** Process the sessions to redo, `opt.jobs` at once (a pool counts as one), each one's summary into `results`. */
async function processSessions(todo: Planned[], pools: Map<string, Planned[]>, results: Map<string, SessionSummary>, opt: BatchOptions, out: string, cfgHash: string): Promise<void> {
  const jobs = Math.max(1, Math.floor(opt.jobs ?? 1));
  // the units of work: each pool whole, every other session alone
  const inPool = new Set<Planned>();
  const units: Array<{ pool: string; members: Planned[] } | Planned> = [];
  for (const [pool, members] of pools) {
    const m = members.filter((p) => todo.includes(p));
    if (m.length < 2) continue;
    m.forEach((p) => inPool.add(p));
    units.push({ pool, members: m });
  }
  for (const p of todo) if (!inPool.has(p)) units.push(p);
  let runner: SessionRunner | undefined;
  if (todo.length > 0) {
    const inProcess = opt.inProcess ?? jobs === 1;
    runner = inProcess ? inProcessRunner() : threadRunner({ threads: Math.min(jobs, units.length), workerFile: opt.workerFile, workerMemoryMb: opt.workerMemoryMb });
  }
  const limit = pLimit(jobs);
  let done = 0;
  const finished = (p: Planned, summary: SessionSummary): void => {
    results.set(p.si.relPath, summary);
    done++;
    opt.onEvent?.({ type: 'done', session: summary, done, total: todo.length });
    opt.onSession?.(summary, done, todo.length);
  };
  try {
    await Promise.all(
      units.map((u) =>
        limit(async () => {
          if ('pool' in u) {
            const tasks = await Promise.all(u.members.map((p) => beginOne(p, opt, out)));
            const outcomes = await runner!.runPool({ pool: u.pool, tasks });
            for (let i = 0; i < u.members.length; i++) finished(u.members[i]!, await endOne(u.members[i]!, outcomes[i]!, opt, out, cfgHash));
          } else finished(u, await endOne(u, await runner!.run(await beginOne(u, opt, out)), opt, out, cfgHash));
        }),
      ),
    );
  } finally {
    await runner?.close();
  }
}

/** Before a session runs: its manifest entry and overview data removed (so an entry exists only for complete outputs); its task. */
async function beginOne(p: Planned, opt: BatchOptions, out: string): Promise<SessionTask> {
  const name = p.si.name;
  await removeEntry(out, name);
  await removeOverviewData(out, name);
  opt.onEvent?.({ type: 'start', name, input: p.si.relPath });
  const decisions = p.si.companions.find((c) => c.suffix === '.decisions.csv');
  const imu = p.si.companions.find((c) => c.suffix === '.imu.csv');
  return {
    name,
    path: p.si.path,
    relPath: p.si.relPath,
    ...(decisions ? { decisionsPath: decisions.path } : {}),
    ...(imu ? { imuPath: imu.path } : {}),
    out,
    config: opt.config,
    withPayload: opt.config.output.report,
  };
}

/** After a session ran: a failure keeps the earlier outputs (stale); then the overview data and the manifest entry are written. */
async function endOne(p: Planned, r: SessionOutcome, opt: BatchOptions, out: string, cfgHash: string): Promise<SessionSummary> {
  const name = p.si.name;
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
  return r.summary;
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
