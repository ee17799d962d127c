/**
 * `hindcast run <input> --out <folder>`: its options, the config they override, the batch with
 * Ctrl-C / TERM handling, and the closing lines (exit code: 0 all sessions succeeded, 1 some failed).
 */
import { InvalidArgumentError, type Command } from 'commander';
import { availableParallelism } from 'node:os';
import { loadConfig, listProfiles } from '../config/load.js';
import { runBatch, type BatchResult } from '../batch/run-batch.js';
import { parseShard, type Shard } from '../batch/shard.js';
import { CAUTION } from '../output/caution.js';
import { batchNotes, makeProgress } from './progress.js';

function positiveNumber(v: string): number {
  const n = Number(v);
  if (!Number.isFinite(n) || n <= 0) throw new InvalidArgumentError('expected a positive number');
  return n;
}
function probability(v: string): number {
  const n = Number(v);
  if (!(n > 0.5 && n < 1)) throw new InvalidArgumentError('expected a probability between 0.5 and 1, e.g. 0.999');
  return n;
}
function positiveInt(v: string): number {
  const n = Number(v);
  if (!Number.isInteger(n) || n < 1) throw new InvalidArgumentError('expected a whole number ≥ 1');
  return n;
}

interface RunOpts {
  out: string;
  profile?: string;
  config?: string;
  maxGap?: number;
  gateProbability?: number;
  jobs?: number;
  quiet?: boolean;
  verbose?: boolean;
  force?: boolean;
  shard?: Shard;
  strict?: boolean;
  workerMemory?: number;
  gpx?: boolean;
  pool?: string;
  points?: boolean;
  report?: boolean;
}

function shardArg(v: string): Shard {
  try {
    return parseShard(v);
  } catch (e) {
    throw new InvalidArgumentError((e as Error).message.replace(/^--shard /, ''));
  }
}

/** Add the run command to `program`; `setCode` receives its exit code. */
export function addRunCommand(program: Command, setCode: (code: number) => void): void {
  program
    .command('run')
    .description('process every fix log in a folder (or one file) into an output folder')
    .argument('<input>', 'folder of logs, or one log file')
    .requiredOption('-o, --out <folder>', 'output folder (created; must not be inside the input folder)')
    .option('-p, --profile <name>', `model defaults: ${listProfiles().join(', ')}`)
    .option('-c, --config <file>', 'JSON file with settings that override the profile')
    .option('--max-gap <seconds>', 'gaps longer than this split the track into segments', positiveNumber)
    .option('--gate-probability <p>', 'probability of the chi-square outlier gate', probability)
    .option('-j, --jobs <n>', 'sessions processed at once, each on its own thread (default: the number of cores)', positiveInt)
    .option('-f, --force', 'process every session again, even those whose outputs are up to date')
    .option('--shard <K/N>', 'take only part K of N of the sessions (for array jobs; then run join-shards)', shardArg)
    .option('--strict', 'treat any reader warning (skipped row, duplicate time, …) as a failure of the file')
    .option('--worker-memory <MB>', 'heap limit of each worker thread; a session above it fails alone', positiveInt)
    .option('--pool <by>', 'one noise calibration per receiver: "folder" (a folder\'s logs share one), "column:NAME" (CSV logs alike in that column), or a regular expression over the log\'s relative path whose first group names the receiver')
    .option('--gpx', 'also write <stem>.gpx (GPX 1.1) with each smoothed track')
    .option('--points', 'also write every epoch as a GeoJSON point with its uncertainty')
    .option('--no-report', 'do not write report.html')
    .option('-q, --quiet', 'print nothing but errors')
    .option('-v, --verbose', "list each session's warnings and fallbacks under its line")
    .action(async (input: string, o: RunOpts) => setCode(await runCommand(input, o)));
}

async function runCommand(input: string, o: RunOpts): Promise<number> {
  const config = loadConfig({ profile: o.profile, configFile: o.config, overrides: configOverrides(o), overridesSource: 'command-line options' });
  const progress = makeProgress({ quiet: !!o.quiet, verbose: !!o.verbose, tty: !!process.stderr.isTTY, out: process.stdout, err: process.stderr });
  // Ctrl-C / a scheduler's TERM: every output so far is complete (atomic writes), so stop at once
  const interrupted = (signal: NodeJS.Signals): void => {
    progress.stop();
    process.stderr.write(`\nhindcast: interrupted (${signal}); run the same command again to resume\n`);
    process.exit(signal === 'SIGINT' ? 130 : 143);
  };
  process.once('SIGINT', interrupted);
  process.once('SIGTERM', interrupted);
  let res;
  try {
    res = await runBatch({
      input,
      out: o.out,
      config,
      jobs: o.jobs ?? availableParallelism(),
      inProcess: false,
      force: !!o.force,
      ...(o.shard ? { shard: o.shard } : {}),
      ...(o.workerMemory ? { workerMemoryMb: o.workerMemory } : {}),
      onEvent: (e) => progress.onEvent(e),
    });
  } finally {
    progress.stop();
    process.off('SIGINT', interrupted);
    process.off('SIGTERM', interrupted);
  }
  printRunResult(res, o);
  return res.exitCode;
}

/** The settings the command line overrides (over the profile and the --config file). */
function configOverrides(o: RunOpts): Record<string, unknown> {
  const overrides: Record<string, unknown> = {};
  if (o.maxGap !== undefined) overrides.segments = { maxGapSec: o.maxGap };
  if (o.gateProbability !== undefined) overrides.gate = { probability: o.gateProbability };
  if (o.strict) overrides.input = { strict: true };
  if (o.pool !== undefined)
    overrides.batch = o.pool === 'folder' || o.pool === 'none' ? { pool: o.pool } : o.pool.startsWith('column:') ? { pool: 'column', poolColumn: o.pool.slice(7) } : { pool: 'pattern', poolPattern: o.pool };
  const output: Record<string, unknown> = {};
  if (o.gpx) output.gpx = true;
  if (o.points) output.points = true;
  if (o.report === false) output.report = false;
  if (Object.keys(output).length) overrides.output = output;
  return overrides;
}

/** The report's failure, the failed sessions (quiet), or the closing summary line with notes and the caution. */
function printRunResult(res: BatchResult, o: RunOpts): void {
  if (res.reportError) process.stderr.write(`hindcast: the report could not be written: ${res.reportError}\n`);
  if (o.quiet) for (const s of res.summary.sessions) if (s.status === 'failed') process.stderr.write(`${s.name}: ${s.reason}\n`);
  if (!o.quiet) {
    const t = res.summary.totals;
    const where = o.shard ? `shard ${o.shard.index}/${o.shard.count}: ` : '';
    process.stdout.write(
      `${where}${t.ok} of ${t.sessions} sessions written to ${o.out} (${res.processed.length} processed, ${res.upToDate.length} up to date; ${res.summaryPath.replace(/^.*[\\/]/, '')}).\n${batchNotes(res.summary.sessions, !!o.verbose)}${CAUTION}\n`,
    );
  }
}
