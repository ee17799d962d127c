/**
 * Resuming: an unchanged rerun skips every session, a changed input, companion file, output or
 * configuration redoes exactly the sessions it affects; a bad file fails alone with its reason.
 * In-process runs (the thread pool has its own tests).
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { appendFile, mkdir, readdir, readFile, rm, stat, symlink, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { UsageError } from '../../src/errors.js';
import { comparableOutputs, differingFiles, removeDir, sessionCsv, tempDir, writeSessions } from './batch-helpers.js';

let root: string;
let input: string;
let out: string;
// the HTML report (another stage) is slow to draw; most tests leave it out, the first keeps it
const cfg = loadConfig({ overrides: { output: { report: false } } });
const withReport = loadConfig({});

beforeEach(async () => {
  root = await tempDir('resume');
  input = join(root, 'in');
  out = join(root, 'out');
});
afterEach(async () => removeDir(root));

describe('resume', () => {
  it('an unchanged rerun processes nothing and leaves the outputs as they were', async () => {
    const names = await writeSessions(input, 4);
    const first = await runBatch({ input, out, config: withReport });
    expect(first.processed).toEqual(names);
    expect(first.exitCode).toBe(0);
    const before = await comparableOutputs(out);
    const second = await runBatch({ input, out, config: withReport });
    expect(second.processed).toEqual([]);
    expect(second.upToDate).toEqual(names);
    expect(second.summary.run).toMatchObject({ processed: 0, upToDate: 4 });
    expect(differingFiles(await comparableOutputs(out), before)).toEqual([]);
  });

  it('with the report, each session has its page as an output: an unchanged session\'s page is kept as it is (bytes and mtime), a changed session\'s page replaced', async () => {
    const names = await writeSessions(input, 3);
    const first = await runBatch({ input, out, config: withReport });
    expect(first.exitCode).toBe(0);
    const page = (n: string) => join(out, 'report', `${n}.html`);
    const look = async (n: string) => ({ bytes: await readFile(page(n)), mtimeMs: (await stat(page(n))).mtimeMs });
    const before = new Map(await Promise.all(names.map(async (n) => [n, await look(n)] as const)));
    for (const s of first.summary.sessions) expect(s.outputs).toContain(`report/${s.name}.html`);
    // the overview links every page
    const overview = await readFile(join(out, 'report.html'), 'utf8');
    for (const n of names) expect(overview).toContain(`href="report/${n}.html"`);
    await writeFile(join(input, 'log01.csv'), sessionCsv(4242));
    const second = await runBatch({ input, out, config: withReport });
    expect(second.processed).toEqual([names[1]]);
    for (const n of [names[0]!, names[2]!]) expect(await look(n), n).toEqual(before.get(n));
    const changed = await look(names[1]!);
    expect(changed.bytes.equals(before.get(names[1]!)!.bytes)).toBe(false);
    // a page removed by hand redoes its session only
    await rm(page(names[2]!));
    const third = await runBatch({ input, out, config: withReport });
    expect(third.processed).toEqual([names[2]]);
    expect(await look(names[0]!)).toEqual(before.get(names[0]!));
  });

  it('a changed log redoes that session only', async () => {
    const names = await writeSessions(input, 4);
    await runBatch({ input, out, config: cfg });
    await writeFile(join(input, 'log02.csv'), sessionCsv(77));
    const r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual([names[2]]);
    expect(r.upToDate).toEqual([names[0], names[1], names[3]]);
  });

  it('a new companion file (decisions, IMU) redoes its session only', async () => {
    const names = await writeSessions(input, 3);
    await runBatch({ input, out, config: cfg });
    await writeFile(join(input, 'log01.imu.csv'), 'time,ax,ay,az\n');
    let r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual([names[1]]);
    await appendFile(join(input, 'log01.imu.csv'), '2026-05-13T09:30:00Z,0,0,9.81\n');
    r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual([names[1]]);
    r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual([]);
  });

  it('a changed configuration redoes every session; --force too', async () => {
    const names = await writeSessions(input, 3);
    await runBatch({ input, out, config: cfg });
    const other = loadConfig({ overrides: { gate: { probability: 0.99 } } });
    expect((await runBatch({ input, out, config: other })).processed).toEqual(names);
    expect((await runBatch({ input, out, config: other })).processed).toEqual([]);
    expect((await runBatch({ input, out, config: other, force: true })).processed).toEqual(names);
  });

  it('switching the report off keeps every session; switching it on redoes those without report data', async () => {
    const names = await writeSessions(input, 2);
    await runBatch({ input, out, config: cfg });
    const on = await runBatch({ input, out, config: withReport });
    expect(on.processed).toEqual(names);
    expect((await runBatch({ input, out, config: cfg })).processed).toEqual([]);
    expect((await runBatch({ input, out, config: withReport })).processed).toEqual([]);
  });

  it('a missing or altered output redoes its session; the report is rebuilt the same from saved and new data', async () => {
    const names = await writeSessions(input, 3);
    await runBatch({ input, out, config: withReport });
    const before = await comparableOutputs(out);
    expect(before.has('report.html')).toBe(true);
    await rm(join(out, 'log00.geojson'));
    await appendFile(join(out, 'log02.track.csv'), 'junk\n');
    const r = await runBatch({ input, out, config: withReport });
    expect(r.processed).toEqual([names[0], names[2]]);
    expect(differingFiles(await comparableOutputs(out), before)).toEqual([]);
  });

  it('a new log elsewhere adds one session and redoes none of the others', async () => {
    const names = await writeSessions(input, 3);
    await runBatch({ input, out, config: cfg });
    const added = await writeSessions(input, 1, { sub: 'day2', seed0: 500 });
    const r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual(added);
    expect(r.upToDate).toEqual(names);
  });
});

describe('failures and safety', () => {
  it('a corrupt file among good ones: the good sessions are written, the failure is listed with its reason, exit 1', async () => {
    const names = await writeSessions(input, 3);
    await writeFile(join(input, 'broken.csv'), 'not,a,fix,log\n\u0001\u0002\n');
    await writeFile(join(input, 'empty.csv'), '');
    const r = await runBatch({ input, out, config: cfg });
    expect(r.exitCode).toBe(1);
    expect(r.summary.totals).toMatchObject({ sessions: 5, ok: 3, failed: 2 });
    const summary = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as { sessions: Array<{ name: string; status: string; reason?: string }> };
    const byName = new Map(summary.sessions.map((s) => [s.name, s]));
    expect(byName.get('broken')).toMatchObject({ status: 'failed' });
    expect(byName.get('broken')!.reason).toMatch(/broken\.csv/);
    expect(byName.get('empty')!.reason).toMatch(/empty/);
    for (const n of names) {
      expect(byName.get(n)!.status).toBe('ok');
      await readFile(join(out, `${n}.track.csv`));
    }
    // a bad input fails the same way again: kept, not retried, until the file changes
    const again = await runBatch({ input, out, config: cfg });
    expect(again.processed).toEqual([]);
    expect(again.exitCode).toBe(1);
    await writeFile(join(input, 'broken.csv'), sessionCsv(9));
    const fixed = await runBatch({ input, out, config: cfg });
    expect(fixed.processed).toEqual(['broken']);
    expect(fixed.summary.totals).toMatchObject({ ok: 4, failed: 1 });
  });

  it('a session that fails after an earlier success keeps its old outputs, marked stale', async () => {
    await writeSessions(input, 2);
    await runBatch({ input, out, config: cfg });
    const before = await readFile(join(out, 'log01.track.csv'));
    await writeFile(join(input, 'log01.csv'), 'garbage\n');
    const r = await runBatch({ input, out, config: cfg });
    expect(r.processed).toEqual(['log01']);
    expect(await readFile(join(out, 'log01.track.csv'))).toEqual(before);
    expect(r.summary.sessions[1]).toMatchObject({ status: 'failed', stale: true, staleOutputs: ['log01.track.csv', 'log01.outliers.csv', 'log01.geojson', 'log01.track.geojson', 'log01.flags.geojson', 'log01.points.csv'] });
    await readFile(join(out, 'log00.track.csv'));
  });

  it('with the report, a session that fails after an earlier success keeps its old page among its stale outputs, linked as such from the overview', async () => {
    await writeSessions(input, 2);
    await runBatch({ input, out, config: withReport });
    const before = await readFile(join(out, 'report', 'log01.html'));
    await writeFile(join(input, 'log01.csv'), 'garbage\n');
    const r = await runBatch({ input, out, config: withReport });
    expect(r.processed).toEqual(['log01']);
    expect(await readFile(join(out, 'report', 'log01.html'))).toEqual(before);
    expect(r.summary.sessions[1]!.staleOutputs).toContain('report/log01.html');
    const row = (await readFile(join(out, 'report.html'), 'utf8')).split('<tr class="failed">')[1]!.split('</tr>')[0]!;
    expect(row).toContain('href="report/log01.html"');
    expect(row).toContain('(page of an earlier run)');
  });

  it('refuses an output folder equal to or inside the input folder, before writing anything', async () => {
    await writeSessions(input, 1);
    await expect(runBatch({ input, out: input, config: cfg })).rejects.toBeInstanceOf(UsageError);
    await expect(runBatch({ input, out: join(input, 'results', 'x'), config: cfg })).rejects.toBeInstanceOf(UsageError);
    await expect(readFile(join(input, 'results'))).rejects.toThrow();
  });

  it('never replaces an input file: a log whose outputs would overwrite it is refused', async () => {
    // one log given as a file, output into its own folder: "a.track.csv" would be its own track
    await writeFile(join(root, 'a.track.csv'), sessionCsv(3));
    const before = await readFile(join(root, 'a.track.csv'), 'utf8');
    const r = await runBatch({ input: join(root, 'a.track.csv'), out: root, config: cfg });
    expect(r.exitCode).toBe(1);
    expect(r.summary.sessions[0]!.reason).toMatch(/replace an input file/);
    expect(await readFile(join(root, 'a.track.csv'), 'utf8')).toBe(before);
  });

  it('a folder of the output that links back into the input is refused per session, the input untouched', async () => {
    await writeSessions(input, 1);
    await writeSessions(input, 1, { sub: 'day2', seed0: 50 });
    await mkdir(out, { recursive: true });
    await symlink(join(input, 'day2'), join(out, 'day2'));
    const r = await runBatch({ input, out, config: cfg });
    expect(r.summary.sessions.map((s) => [s.name, s.status])).toEqual([
      ['day2/log00', 'failed'],
      ['log00', 'ok'],
    ]);
    expect(r.summary.sessions[0]!.reason).toMatch(/inside the input folder/);
    expect((await readdir(join(input, 'day2'))).sort()).toEqual(['log00.csv']);
  });

  it('two logs with the same stem: the first is processed, the second refused with the reason', async () => {
    await writeSessions(input, 1, { prefix: 'x' });
    await writeFile(join(input, 'x00.txt'), sessionCsv(5));
    const r = await runBatch({ input, out, config: cfg });
    expect(r.summary.sessions.map((s) => [s.input, s.status])).toEqual([
      ['x00.csv', 'ok'],
      ['x00.txt', 'failed'],
    ]);
    expect(r.summary.sessions[1]!.reason).toMatch(/same output name/);
  });
});
