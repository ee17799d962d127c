/**
 * The command as a user runs it (compiled, in a child process, not on a terminal): exit codes,
 * plain progress lines, --quiet, --force, --strict, --shard and join-shards.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { appendFile, readdir, readFile, writeFile } from 'node:fs/promises';
import { join, resolve } from 'node:path';
import { removeDir, tempDir, writeSessions } from '../batch/batch-helpers.js';

const CLI = resolve('dist/src/cli/main.js');
let root: string;
let good: string;
let settings: string;

function hindcast(...args: string[]): { status: number | null; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [CLI, ...args], { encoding: 'utf8' });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr };
}

beforeAll(async () => {
  root = await tempDir('cli');
  good = join(root, 'good');
  await writeSessions(good, 3);
  settings = join(root, 'no-report.json');
  await writeFile(settings, JSON.stringify({ output: { report: false } }));
});
afterAll(async () => removeDir(root));

describe('hindcast run', () => {
  it('a corrupt file among good ones: the good ones are written, the failure listed with its reason, exit 1', async () => {
    const input = join(root, 'mixed');
    await writeSessions(input, 3);
    await writeFile(join(input, 'corrupt.csv'), Buffer.from([0x00, 0x01, 0x02, 0xff, 0x00]));
    const out = join(root, 'mixed-out');
    const r = hindcast('run', input, '--out', out, '--config', settings, '--jobs', '2');
    expect(r.status).toBe(1);
    expect(r.stdout).toMatch(/^4 session\(s\): 4 to process, 0 up to date$/m);
    expect(r.stdout).toMatch(/^\[\d\/4\] corrupt: FAILED {2}corrupt\.csv/m);
    expect(r.stdout.match(/^\[\d\/4\] log0\d: ok /gm)).toHaveLength(3);
    const summary = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as { totals: { ok: number; failed: number }; sessions: Array<{ name: string; status: string; reason?: string }> };
    expect(summary.totals).toMatchObject({ ok: 3, failed: 1 });
    const bad = summary.sessions.find((s) => s.name === 'corrupt')!;
    expect(bad.status).toBe('failed');
    expect(bad.reason).toMatch(/binary|NUL|not a text/i);
    for (const n of ['log00', 'log01', 'log02']) await readFile(join(out, `${n}.track.csv`));
  });

  it('an output folder inside the input folder: exit 2 and nothing written', async () => {
    const r = hindcast('run', good, '--out', join(good, 'out'));
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/inside/);
    const again = hindcast('run', good, '--out', good);
    expect(again.status).toBe(2);
  });

  it.each([
    [['--shard', '4/3']],
    [['--shard', 'x']],
    [['--jobs', '0']],
  ])('bad option %j: exit 2', (extra) => {
    expect(hindcast('run', good, '--out', join(root, 'never'), ...extra).status).toBe(2);
  });

  it('a rerun skips up-to-date sessions; --force redoes them; --quiet prints nothing', () => {
    const out = join(root, 'rerun-out');
    expect(hindcast('run', good, '--out', out, '--config', settings).status).toBe(0);
    const second = hindcast('run', good, '--out', out, '--config', settings);
    expect(second.stdout).toMatch(/3 session\(s\): 0 to process, 3 up to date/);
    const forced = hindcast('run', good, '--out', out, '--config', settings, '--force');
    expect(forced.stdout).toMatch(/3 session\(s\): 3 to process, 0 up to date/);
    const quiet = hindcast('run', good, '--out', out, '--config', settings, '--force', '--quiet');
    expect(quiet.status).toBe(0);
    expect(quiet.stdout).toBe('');
    expect(quiet.stderr).toBe('');
  });

  it('--gpx adds the GPX files, --no-report leaves report.html out', async () => {
    const out = join(root, 'gpx-out');
    expect(hindcast('run', good, '--out', out, '--gpx', '--no-report', '--quiet').status).toBe(0);
    const names = await readdir(out);
    expect(names.filter((n) => n.endsWith('.gpx')).sort()).toEqual(['log00.gpx', 'log01.gpx', 'log02.gpx']);
    expect(names).not.toContain('report.html');
  });

  it('--strict fails a log with a skipped row; without it the row is a warning', async () => {
    const input = join(root, 'strict');
    await writeSessions(input, 1);
    await appendFile(join(input, 'log00.csv'), '2026-05-13T09:45:00.000Z,not-a-number,13.4,40,1.0,8\n');
    const lax = hindcast('run', input, '--out', join(root, 'strict-lax'), '--config', settings);
    expect(lax.status).toBe(0);
    const strict = hindcast('run', input, '--out', join(root, 'strict-on'), '--config', settings, '--strict');
    expect(strict.status).toBe(1);
    expect(strict.stdout).toMatch(/FAILED .*strict/);
  });
});

describe('hindcast run --shard, join-shards', () => {
  it('shards share one folder; join-shards writes summary.json, refusing while a shard is missing', async () => {
    const input = join(root, 'sharded');
    await writeSessions(input, 6);
    const out = join(root, 'sharded-out');
    const one = hindcast('run', input, '--out', out, '--config', settings, '--shard', '1/2');
    expect(one.status).toBe(0);
    expect(one.stdout).toMatch(/\(shard 1\/2\)/);
    const early = hindcast('join-shards', out);
    expect(early.status).toBe(2);
    expect(early.stderr).toMatch(/missing in .*: 2\/2/);
    expect(hindcast('run', input, '--out', out, '--config', settings, '--shard', '2/2').status).toBe(0);
    const j = hindcast('join-shards', out);
    expect(j.status, j.stderr).toBe(0);
    expect(j.stdout).toMatch(/joined 2 shards: 6 of 6 sessions ok/);
    const s = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as { sessions: Array<{ name: string }> };
    expect(s.sessions.map((x) => x.name)).toEqual(['log00', 'log01', 'log02', 'log03', 'log04', 'log05']);
  });
});
