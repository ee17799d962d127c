/**
 * `hindcast join-shards <out>`: after every shard of a batch has run into <out>, join their
 * summaries into summary.json (and the report).
 */
import type { Command } from 'commander';
import { joinShards } from '../batch/join.js';

/** Add the join-shards command to `program`; `setCode` receives its exit code. */
export function addJoinCommand(program: Command, setCode: (code: number) => void): void {
  program
    .command('join-shards')
    .description('after every shard of a batch has run into <out>: join their summaries into summary.json (and the report)')
    .argument('<out>', 'the output folder the shards shared')
    .option('-q, --quiet', 'print nothing but errors')
    .action(async (outDir: string, o: { quiet?: boolean }) => {
      const res = await joinShards(outDir);
      if (res.reportError) process.stderr.write(`hindcast: the report could not be written: ${res.reportError}\n`);
      const t = res.summary.totals;
      if (o.quiet) {
        for (const s of res.summary.sessions) if (s.status === 'failed') process.stderr.write(`${s.name}: ${s.reason}\n`);
      } else process.stdout.write(`joined ${res.summary.run?.joinedShards} shards: ${t.ok} of ${t.sessions} sessions ok (summary.json).\n`);
      setCode(res.exitCode);
    });
}
