#!/usr/bin/env node
/**
 * The hindcast command. Argument parsing and exit codes only:
 * 0 all sessions succeeded, 1 some sessions failed (the rest were written), 2 usage or configuration error.
 */
import { Command, CommanderError, InvalidArgumentError } from 'commander';
import { availableParallelism } from 'node:os';
import { loadConfig, listProfiles } from '../config/load.js';
import { ConfigError, UsageError } from '../errors.js';
import { runBatch } from '../batch/run-batch.js';
import { VERSION } from '../version.js';
import { CAUTION } from '../output/caution.js';

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
}

export async function main(argv: string[]): Promise<number> {
  const program = new Command();
  program
    .name('hindcast')
    .description('Offline smoothing of logged GNSS fixes: smoothed tracks with uncertainty, an outlier report, GeoJSON.')
    .version(VERSION)
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  let code = 0;
  program
    .command('run')
    .description('process every fix log in a folder (or one file) into an output folder')
    .argument('<input>', 'folder of logs, or one log file')
    .requiredOption('-o, --out <folder>', 'output folder (created; must not be inside the input folder)')
    .option('-p, --profile <name>', `model defaults: ${listProfiles().join(', ')}`)
    .option('-c, --config <file>', 'JSON file with settings that override the profile')
    .option('--max-gap <seconds>', 'gaps longer than this split the track into segments', positiveNumber)
    .option('--gate-probability <p>', 'probability of the chi-square outlier gate', probability)
    .option('-j, --jobs <n>', 'sessions processed at once', positiveInt)
    .option('-q, --quiet', 'print nothing but errors')
    .action(async (input: string, o: RunOpts) => {
      const overrides: Record<string, unknown> = {};
      if (o.maxGap !== undefined) overrides.segments = { maxGapSec: o.maxGap };
      if (o.gateProbability !== undefined) overrides.gate = { probability: o.gateProbability };
      const config = loadConfig({ profile: o.profile, configFile: o.config, overrides });
      const res = await runBatch({
        input,
        out: o.out,
        config,
        jobs: o.jobs ?? availableParallelism(),
        onSession: o.quiet
          ? undefined
          : (s, done, total) => {
              const m = s.metrics;
              const what = s.status === 'ok' ? `ok  ${m!.fixCount} fixes, ${m!.outlierCount} flagged, ${m!.bridgedCount} bridged` : `FAILED  ${s.reason}`;
              process.stdout.write(`[${done}/${total}] ${s.name}: ${what}\n`);
            },
      });
      for (const s of res.summary.sessions) if (s.status === 'failed' && o.quiet) process.stderr.write(`${s.name}: ${s.reason}\n`);
      if (!o.quiet) {
        const t = res.summary.totals;
        process.stdout.write(`${t.ok} of ${t.sessions} sessions written to ${o.out} (summary.json).\n${CAUTION}\n`);
      }
      code = res.exitCode;
    });
  try {
    await program.parseAsync(argv, { from: 'user' });
    return code;
  } catch (e) {
    if (e instanceof CommanderError) return e.exitCode === 0 ? 0 : 2;
    if (e instanceof UsageError || e instanceof ConfigError) {
      process.stderr.write(`hindcast: ${e.message}\n`);
      return 2;
    }
    process.stderr.write(`hindcast: internal error: ${(e as Error).stack ?? String(e)}\n`);
    return 1;
  }
}

const isMain = process.argv[1] !== undefined && import.meta.url === new URL(`file://${(await import('node:fs')).realpathSync(process.argv[1])}`).href;
if (isMain) {
  main(process.argv.slice(2)).then((c) => {
    process.exitCode = c;
  });
}
