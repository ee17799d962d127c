/**
 * Crash safety of the command: a batch killed with SIGKILL in the middle (twice), then rerun to
 * the end, leaves exactly the outputs of a clean run and no temporaries; while killed, the folder
 * holds only complete outputs (each identical to the clean run's) besides temporaries. The HTML
 * report (slow to draw, and another stage's) is switched off here; resume.test.ts checks that a
 * resumed run rebuilds it identically.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, readdirSync } from 'node:fs';
import { writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { TEMP_PREFIX } from '../../src/io/atomic-write.js';
import { comparableOutputs, differingFiles, readTree, removeDir, temporaries, tempDir, writeSessions } from './batch-helpers.js';

const CLI = resolve('dist/src/cli/main.js');
let root: string;
let input: string;
let settings: string;

beforeAll(async () => {
  root = await tempDir('kill');
  input = join(root, 'in');
  settings = join(root, 'settings.json');
  await writeFile(settings, JSON.stringify({ output: { report: false } }));
  await writeSessions(input, 20);
  await writeSessions(input, 4, { sub: 'day2', seed0: 300 });
});
afterAll(async () => removeDir(root));

function manifestCount(out: string): number {
  const dir = join(out, '.hindcast', 'manifest');
  if (!existsSync(dir)) return 0;
  let n = 0;
  const walk = (d: string): void => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      if (e.isDirectory()) walk(join(d, e.name));
      else if (e.name.endsWith('.json') && !e.name.startsWith(TEMP_PREFIX)) n++;
    }
  };
  walk(dir);
  return n;
}

/** Start a run and SIGKILL it once `atLeast` sessions are recorded; resolves with how it ended. */
function runAndKill(out: string, atLeast: number): Promise<{ signal: NodeJS.Signals | null; code: number | null }> {
  return new Promise((done, fail) => {
    const child = spawn(process.execPath, [CLI, 'run', input, '--out', out, '--config', settings, '--jobs', '2', '--quiet'], { stdio: 'ignore' });
    const timer = setInterval(() => {
      if (manifestCount(out) >= atLeast) {
        clearInterval(timer);
        child.kill('SIGKILL');
      }
    }, 5);
    child.on('error', fail);
    child.on('exit', (code, signal) => {
      clearInterval(timer);
      done({ code, signal });
    });
  });
}

describe('SIGKILL in the middle of a batch', () => {
  it('leaves only complete outputs, and a rerun completes them identically to a clean run', async () => {
    const clean = join(root, 'clean');
    const c = spawnSync(process.execPath, [CLI, 'run', input, '--out', clean, '--config', settings, '--jobs', '2', '--quiet'], { encoding: 'utf8' });
    expect(c.status, c.stderr).toBe(0);
    const cleanFiles = await readTree(clean);

    const work = join(root, 'work');
    for (const atLeast of [3, 12]) {
      const k = await runAndKill(work, atLeast);
      expect(k.signal).toBe('SIGKILL'); // it was still running when killed
      expect(existsSync(join(work, 'summary.json'))).toBe(false);
      // every file under a final name is complete: byte-identical to the clean run's
      for (const [rel, bytes] of await readTree(work)) {
        if (rel.startsWith('.hindcast/') || rel.split('/').pop()!.startsWith(TEMP_PREFIX)) continue;
        expect(cleanFiles.has(rel), rel).toBe(true);
        expect(bytes.equals(cleanFiles.get(rel)!), rel).toBe(true);
      }
    }

    const r = spawnSync(process.execPath, [CLI, 'run', input, '--out', work, '--config', settings, '--jobs', '2'], { encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    expect(r.stdout).toMatch(/24 session\(s\): \d+ to process, (1[2-9]|2\d) up to date/);
    expect(await temporaries(work)).toEqual([]);
    expect(differingFiles(await comparableOutputs(work), await comparableOutputs(clean))).toEqual([]);
  });
});
