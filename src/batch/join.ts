/**
 * Joining the shards of a batch: after the N tasks of an array job have each written
 * summary.shard-K-of-N.json into the shared output folder, one summary.json with every session
 * (in the same order and with the same content as a one-machine run), then the report.
 */
import { readdir, readFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { UsageError } from '../errors.js';
import { buildSummary, toJson, type BatchSummary } from '../output/summary.js';
import { cleanTemporaries, writeFileAtomic } from '../io/atomic-write.js';
import { bySessionName } from './discover.js';
import { readEntry } from './manifest.js';
import { buildReport } from './run-batch.js';
import { SHARD_SUMMARY_RE } from './shard.js';

export interface JoinResult {
  summary: BatchSummary;
  exitCode: 0 | 1;
  summaryPath: string;
  reportError?: string;
}

/** Join the shard summaries found in `outDir`. Throws UsageError when shards are missing or disagree. */
export async function joinShards(outDir: string): Promise<JoinResult> {
  const t0 = performance.now();
  const out = resolve(outDir);
  let names: string[];
  try {
    names = await readdir(out);
  } catch {
    throw new UsageError(`output folder not found: ${outDir}`);
  }
  const byCount = new Map<number, Map<number, string>>();
  for (const n of names) {
    const m = SHARD_SUMMARY_RE.exec(n);
    if (!m) continue;
    const k = Number(m[1]), count = Number(m[2]);
    if (!byCount.has(count)) byCount.set(count, new Map());
    byCount.get(count)!.set(k, n);
  }
  if (byCount.size === 0) throw new UsageError(`no shard summaries (summary.shard-K-of-N.json) in ${outDir}`);
  if (byCount.size > 1)
    throw new UsageError(`shard summaries of different splits in ${outDir} (N = ${[...byCount.keys()].sort((a, b) => a - b).join(', ')}); remove the stale ones`);
  const [count, files] = [...byCount][0]!;
  const missing = [];
  for (let k = 1; k <= count; k++) if (!files.has(k)) missing.push(k);
  if (missing.length) throw new UsageError(`shards missing in ${outDir}: ${missing.map((k) => `${k}/${count}`).join(', ')} (run them, then join again)`);

  const parts: BatchSummary[] = [];
  for (let k = 1; k <= count; k++) {
    const file = files.get(k)!;
    let s: BatchSummary;
    try {
      s = JSON.parse(await readFile(join(out, file), 'utf8')) as BatchSummary;
    } catch (e) {
      throw new UsageError(`${file}: cannot be read: ${(e as Error).message}`);
    }
    if (s.tool !== 'hindcast' || !Array.isArray(s.sessions)) throw new UsageError(`${file}: not a hindcast shard summary`);
    parts.push(s);
  }
  const first = parts[0]!;
  for (const [i, s] of parts.entries()) {
    const file = files.get(i + 1)!;
    if (s.version !== first.version) throw new UsageError(`${file} was made by version ${s.version}, shard 1 by ${first.version}; rerun the shards with one version`);
    if (s.configHash !== first.configHash) throw new UsageError(`${file} was made with another configuration than shard 1; rerun the shards with one configuration`);
    if (s.input !== first.input) throw new UsageError(`${file} read input ${s.input}, shard 1 read ${first.input}`);
  }
  const sessions = parts.flatMap((s) => s.sessions).sort(bySessionName);
  for (let i = 1; i < sessions.length; i++)
    if (sessions[i]!.name === sessions[i - 1]!.name && sessions[i]!.input === sessions[i - 1]!.input)
      throw new UsageError(`session ${sessions[i]!.name} appears in two shard summaries`);
  await cleanTemporaries(out);
  const summary = buildSummary(first.version, first.input, first.profile, sessions, {
    ...(first.configHash !== undefined ? { configHash: first.configHash } : {}),
    run: {
      processed: parts.reduce((a, s) => a + (s.run?.processed ?? 0), 0),
      upToDate: parts.reduce((a, s) => a + (s.run?.upToDate ?? 0), 0),
      elapsedSec: Math.round(performance.now() - t0) / 1000,
      joinedShards: count,
    },
  });
  const summaryPath = join(out, 'summary.json');
  await writeFileAtomic(summaryPath, toJson(summary));
  const res: JoinResult = { summary, exitCode: summary.totals.failed > 0 ? 1 : 0, summaryPath };
  const okName = sessions.find((s) => s.status === 'ok')?.name;
  const reportWanted = okName === undefined || (await readEntry(out, okName))?.config.output.report !== false;
  if (reportWanted) {
    const err = await buildReport(out, summary);
    if (err) {
      res.reportError = err;
      res.exitCode = 1;
    }
  }
  return res;
}
