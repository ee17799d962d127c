/**
 * The worker-thread pool: the same outputs as in-process, and a worker that dies fails only its
 * own session. Uses the compiled worker (npm test builds dist/ first).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { defaultWorkerFile } from '../../src/batch/runner.js';
import { comparableOutputs, differingFiles, removeDir, temporaries, tempDir, writeSessions } from './batch-helpers.js';

let root: string;
const cfg = loadConfig({ overrides: { output: { report: false } } });

beforeEach(async () => {
  root = await tempDir('pool');
});
afterEach(async () => removeDir(root));

describe('worker threads', () => {
  it('locates the compiled worker below the package root', () => {
    expect(defaultWorkerFile()).toMatch(/dist[\\/]src[\\/]batch[\\/]worker\.js$/);
  });

  it('two threads write the same outputs as one in-process run', async () => {
    const input = join(root, 'in');
    await writeSessions(input, 6);
    await writeSessions(input, 2, { sub: 'b', seed0: 40 });
    const a = await runBatch({ input, out: join(root, 'a'), config: cfg, jobs: 1, inProcess: true });
    const b = await runBatch({ input, out: join(root, 'b'), config: cfg, jobs: 2, inProcess: false });
    expect(a.exitCode).toBe(0);
    expect(b.processed).toEqual(a.processed);
    expect(differingFiles(await comparableOutputs(join(root, 'b')), await comparableOutputs(join(root, 'a')))).toEqual([]);
  });

  it('a worker that dies fails its session only; the others are written and a rerun redoes just that one', async () => {
    const input = join(root, 'in');
    const names = await writeSessions(input, 5);
    const crasher = join(root, 'crashing-worker.mjs');
    await writeFile(
      crasher,
      `import run from ${JSON.stringify(pathToFileURL(defaultWorkerFile()).href)};\n` +
        `export default async function (task) {\n  if (task.name === 'log02') process.exit(7);\n  return run(task);\n}\n`,
    );
    const out = join(root, 'out');
    const events: string[] = [];
    const r = await runBatch({ input, out, config: cfg, jobs: 2, workerFile: crasher, onEvent: (e) => e.type === 'done' && events.push(e.session.name) });
    expect(r.exitCode).toBe(1);
    expect(events.sort()).toEqual(names);
    const failed = r.summary.sessions.filter((s) => s.status === 'failed');
    expect(failed.map((s) => s.name)).toEqual(['log02']);
    expect(failed[0]!.reason).toMatch(/worker stopped/);
    expect(r.summary.totals.ok).toBe(4);
    expect(await temporaries(out)).toEqual([]);
    const again = await runBatch({ input, out, config: cfg, jobs: 2 });
    expect(again.processed).toEqual(['log02']);
    expect(again.exitCode).toBe(0);
  });
});
