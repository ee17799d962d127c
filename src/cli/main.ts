#!/usr/bin/env node
/**
 * The hindcast command. Argument parsing and exit codes only:
 * 0 all sessions succeeded, 1 some sessions failed (the rest were written), 2 usage or configuration error.
 */
import { Command, CommanderError } from 'commander';
import { ConfigError, UsageError } from '../errors.js';
import { VERSION } from '../version.js';
import { addJoinCommand } from './join-command.js';
import { addRunCommand } from './run-command.js';

export async function main(argv: string[]): Promise<number> {
  const program = new Command();
  program
    .name('hindcast')
    .description('Offline smoothing of logged GNSS fixes: smoothed tracks with uncertainty, an outlier report, GeoJSON.')
    .version(VERSION)
    .exitOverride()
    .configureOutput({ writeErr: (s) => process.stderr.write(s) });
  let code = 0;
  const setCode = (c: number) => {
    code = c;
  };
  addRunCommand(program, setCode);
  addJoinCommand(program, setCode);
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
