/**
 * What the command says about each session beyond its counts (compiled, in a child process, not on
 * a terminal): warning counts and fallbacks on the per-session line, --verbose listing them, and a
 * misspelt time zone refused as a configuration error (exit 2) before any session runs; --pool with
 * a broken pattern refused alike, and pooling a folder.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { readFile, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { removeDir, sessionCsv, tempDir } from '../batch/batch-helpers.js';

const CLI = resolve('dist/src/cli/main.js');
let root: string;
let input: string;
let settings: string;

function hindcast(...args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

beforeAll(async () => {
  root = await tempDir('cli-notes');
  input = join(root, 'in');
  // a 120 s log (shorter than the 180 s the calibration needs) with one row repeated: a warning
  const text = sessionCsv(5);
  const rows = text.trimEnd().split('\n');
  await (await import('node:fs/promises')).mkdir(input, { recursive: true });
  await writeFile(join(input, 'short.csv'), [...rows, rows[rows.length - 1]!].join('\n') + '\n');
  settings = join(root, 'no-report.json');
  await writeFile(settings, JSON.stringify({ output: { report: false } }));
});
afterAll(async () => removeDir(root));

describe('per-session line', () => {
  it('shows the warning count and the calibration fallback; --verbose lists both', async () => {
    const r = hindcast('run', input, '--out', join(root, 'o1'), '--config', settings, '--jobs', '1');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^\[1\/1\] short: ok {2}\d+ fixes, \d+ flagged, \d+ bridged; 2 warnings, calibration fallback \(/m);
    expect(r.stdout).toMatch(/^2 warning\(s\) in 1 session\(s\): short \(summary\.json; --verbose lists them\)$/m);
    // the repeated row and the calibration's own note of its fallback
    const summary = JSON.parse(await readFile(join(root, 'o1', 'summary.json'), 'utf8')) as { sessions: Array<{ warnings: Array<{ code: string }> }> };
    expect(summary.sessions[0]!.warnings.map((w) => w.code).sort()).toEqual(['calibration', 'duplicate-time']);

    const v = hindcast('run', input, '--out', join(root, 'o2'), '--config', settings, '--jobs', '1', '--verbose');
    expect(v.status).toBe(0);
    expect(v.stdout).toMatch(/^ {4}fallback: calibration fell back to the profile values \(only \d+ usable fixes \(needs 120\)\)$/m);
    expect(v.stdout).toMatch(/^ {4}warning duplicate-time: short\.csv:\d+: 1 row\(s\) repeat an earlier time/m);
    expect(v.stdout).toMatch(/^ {4}warning calibration: /m);
  });
});

describe('time zone checked at configuration load', () => {
  it('"Europe/Berln" is refused with the field named and a suggestion, exit 2, nothing processed', async () => {
    const bad = join(root, 'bad-zone.json');
    await writeFile(bad, JSON.stringify({ input: { timeZone: 'Europe/Berln' } }));
    const r = hindcast('run', input, '--out', join(root, 'o3'), '--config', bad);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/input\.timeZone: unknown time zone "Europe\/Berln"; did you mean "Europe\/Berlin"\?/);
    expect(r.stdout).toBe('');
  });
});

describe('--pool', () => {
  it('a broken pattern is refused as a configuration error naming the command line and the field (exit 2)', () => {
    const r = hindcast('run', input, '--out', join(root, 'o-pool'), '--pool', '(');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/command-line options: invalid configuration/);
    expect(r.stderr).toMatch(/batch\.poolPattern: not a regular expression/);
  });
  it('"folder" pools the logs of a folder: summary.json names the pool and its members', async () => {
    const dir = join(root, 'pool-in', 'rx1');
    await (await import('node:fs/promises')).mkdir(dir, { recursive: true });
    await writeFile(join(dir, 'a.csv'), sessionCsv(11, 400));
    await writeFile(join(dir, 'b.csv'), sessionCsv(12, 400));
    const out = join(root, 'o-pool2');
    const r = hindcast('run', join(root, 'pool-in'), '--out', out, '--config', settings, '--jobs', '1', '--pool', 'folder');
    expect(r.status).toBe(0);
    const s = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as { sessions: Array<{ info: { calibration: { pool: { group: string; members: string[] } } } }> };
    for (const e of s.sessions) expect(e.info.calibration.pool).toMatchObject({ group: 'rx1', members: ['rx1/a', 'rx1/b'] });
  });
});
