/**
 * Reruns never lose work: a session that fails on a rerun (here: typos in its decisions file)
 * keeps the outputs of its earlier good run byte for byte, marked stale in summary.json; every
 * bad row of the decisions file is reported in that one run; fixing the file brings the session
 * back to ok. In-process runs, seeded simulator logs.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { commitTemporaries, writeChunksToTemporary } from '../../src/io/atomic-write.js';
import { removeDir, tempDir, temporaries, writeSessions } from './batch-helpers.js';

let root: string;
let input: string;
let out: string;
const cfg = loadConfig({ overrides: { output: { report: false } } });

beforeEach(async () => {
  root = await tempDir('stale');
  input = join(root, 'in');
  out = join(root, 'out');
});
afterEach(async () => removeDir(root));

const FILES = ['log01.track.csv', 'log01.outliers.csv', 'log01.geojson', 'log01.track.geojson', 'log01.flags.geojson', 'log01.points.csv'];
const snapshot = async () => Promise.all(FILES.map((f) => readFile(join(out, f))));

/** The first `n` epoch times of a written track.csv. */
async function trackTimes(n: number): Promise<string[]> {
  const rows = (await readFile(join(out, 'log01.track.csv'), 'utf8')).trim().split('\n').slice(1);
  return rows.slice(0, n).map((r) => r.split(',')[0]!);
}

describe('a rerun that fails keeps the earlier outputs', () => {
  it('broken decisions: outputs byte for byte, marked stale, every bad row named; fixed: ok again', async () => {
    await writeSessions(input, 2);
    const first = await runBatch({ input, out, config: cfg });
    expect(first.exitCode).toBe(0);
    const [t0, t1, t2] = await trackTimes(3);
    const good = `time,decision,note\n${t0},reject,\n`;
    await writeFile(join(input, 'log01.decisions.csv'), good);
    expect((await runBatch({ input, out, config: cfg })).exitCode).toBe(0);
    const before = await snapshot();

    // three typos: a decision word, a time, a column count
    await writeFile(join(input, 'log01.decisions.csv'), `time,decision,note\n${t0},rejct,\n${t1}x,keep,\n${t2},keep,a,b\n`);
    const broken = await runBatch({ input, out, config: cfg });
    expect(broken.exitCode).toBe(1);
    expect(broken.processed).toEqual(['log01']);
    expect(await snapshot()).toEqual(before);
    const entry = broken.summary.sessions.find((s) => s.name === 'log01')!;
    expect(entry).toMatchObject({ status: 'failed', stale: true, staleOutputs: FILES });
    for (const line of [2, 3, 4]) expect(entry.reason).toContain(`log01.decisions.csv:${line}`);
    const onDisk = JSON.parse(await readFile(join(out, 'summary.json'), 'utf8')) as { sessions: Array<{ name: string; stale?: boolean }> };
    expect(onDisk.sessions.find((s) => s.name === 'log01')!.stale).toBe(true);
    expect(await temporaries(out)).toEqual([]);

    // the same broken inputs again: nothing to do, still stale, still the same bytes
    const again = await runBatch({ input, out, config: cfg });
    expect(again.processed).toEqual([]);
    expect(again.summary.sessions.find((s) => s.name === 'log01')).toMatchObject({ stale: true });
    expect(await snapshot()).toEqual(before);

    // a stale output removed by hand: the session is tried again, the rest still kept
    await rm(join(out, 'log01.geojson'));
    const third = await runBatch({ input, out, config: cfg });
    expect(third.processed).toEqual(['log01']);
    expect(third.summary.sessions.find((s) => s.name === 'log01')).toMatchObject({ stale: true, staleOutputs: FILES.filter((f) => f !== 'log01.geojson') });

    // fixed: ok, not stale, the outputs rewritten
    await writeFile(join(input, 'log01.decisions.csv'), good);
    const fixed = await runBatch({ input, out, config: cfg });
    expect(fixed.exitCode).toBe(0);
    const ok = fixed.summary.sessions.find((s) => s.name === 'log01')!;
    expect(ok.status).toBe('ok');
    expect(ok.stale).toBeUndefined();
    expect(await snapshot()).toEqual(before);
  });

  it('a session that never succeeded has nothing stale', async () => {
    await writeSessions(input, 1);
    await writeFile(join(input, 'log00.decisions.csv'), 'time,decision\nnot-a-time,keep\n');
    const r = await runBatch({ input, out, config: cfg });
    expect(r.summary.sessions[0]).toMatchObject({ status: 'failed' });
    expect(r.summary.sessions[0]!.stale).toBeUndefined();
  });
});

describe('outputs staged together', () => {
  it('a failure while writing one output leaves every earlier file as it was and no temporary', async () => {
    const a = join(root, 'a.csv'), b = join(root, 'b.csv');
    await writeFile(a, 'old a\n');
    await writeFile(b, 'old b\n');
    const ta = await writeChunksToTemporary(a, ['new a\n']);
    function* failing(): Generator<string> {
      yield 'new b, part\n';
      throw new Error('disk full');
    }
    await expect(writeChunksToTemporary(b, failing())).rejects.toThrow('disk full');
    expect(await readFile(a, 'utf8')).toBe('old a\n');
    expect(await readFile(b, 'utf8')).toBe('old b\n');
    await commitTemporaries([{ tmp: ta, path: a }]);
    expect(await readFile(a, 'utf8')).toBe('new a\n');
    expect(await temporaries(root)).toEqual([]);
  });
});
