/**
 * Batches with pooled calibration (batch.pool): the logs of a folder, of a name pattern's group, or
 * with the same value in a named column share one noise estimate; a file that cannot be read fails
 * alone and the rest are pooled; an unchanged rerun processes nothing; a changed log redoes its
 * whole pool and nothing else; a log removed from a pool redoes the logs left in it; the thread
 * pool writes what the in-process run writes. Seeded simulated logs.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { appendFile, readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { poolOf } from '../../src/batch/pools.js';
import { ConfigError } from '../../src/errors.js';
import { comparableOutputs, differingFiles, removeDir, sessionCsv, tempDir, writeSessions } from './batch-helpers.js';

let root: string, input: string, out: string;
const byFolder = loadConfig({ overrides: { output: { report: false }, batch: { pool: 'folder' } } });

beforeEach(async () => {
  root = await tempDir('pooled');
  input = join(root, 'in');
  out = join(root, 'out');
});
afterEach(async () => removeDir(root));

type Pooled = { calibration?: { pool?: { group: string; members: string[]; failed?: string[] } } };
const poolIn = (s: { info?: Record<string, unknown> }) => (s.info as Pooled | undefined)?.calibration?.pool;

describe('pooled batches', () => {
  it('pools each folder; a broken file fails alone; reruns redo exactly the pools that changed', async () => {
    const a = await writeSessions(input, 3, { sub: 'rxA', seed0: 1, durationSec: 400 });
    const b = await writeSessions(input, 2, { sub: 'rxB', seed0: 11, durationSec: 400 });
    await writeFile(join(input, 'rxA', 'broken.csv'), 'time,lat,lon\n2026-05-01T00:00:00Z,abc,def\n');
    const first = await runBatch({ input, out, config: byFolder });
    const byName = new Map(first.summary.sessions.map((s) => [s.name, s]));
    expect(byName.get('rxA/broken')!.status).toBe('failed');
    for (const n of a) expect(poolIn(byName.get(n)!)).toMatchObject({ group: 'rxA', members: a, failed: ['rxA/broken'] });
    for (const n of b) expect(poolIn(byName.get(n)!)).toMatchObject({ group: 'rxB', members: b });
    const sigma = (n: string) => (byName.get(n)!.info as { calibration: { estimates: { gmHorizontalSigmaM: { value: number } } } }).calibration.estimates.gmHorizontalSigmaM.value;
    expect(new Set(a.map(sigma)).size).toBe(1);
    expect(sigma(a[0]!)).not.toBe(sigma(b[0]!));

    const before = await comparableOutputs(out);
    const again = await runBatch({ input, out, config: byFolder });
    expect(again.processed).toEqual([]);
    expect(differingFiles(await comparableOutputs(out), before)).toEqual([]);

    // one log of rxA changes: rxA is redone whole (the broken file with it), rxB is not
    await appendFile(join(input, 'rxA', 'log01.csv'), '\n');
    const changed = await runBatch({ input, out, config: byFolder });
    expect([...changed.processed].sort()).toEqual([...a, 'rxA/broken'].sort());

    // a log leaves rxB: the one left is alone now, and redone
    await rm(join(input, 'rxB', 'log01.csv'));
    const left = await runBatch({ input, out, config: byFolder });
    expect(left.processed).toEqual([b[0]]);
    expect(poolIn(left.summary.sessions.find((s) => s.name === b[0])!)).toBeUndefined();
  });

  it('two threads write the same outputs as one in-process run', async () => {
    await writeSessions(input, 2, { sub: 'rx', seed0: 21, durationSec: 400 });
    await writeSessions(input, 1, { sub: 'solo', seed0: 31, durationSec: 400 });
    await runBatch({ input, out, config: byFolder, jobs: 1, inProcess: true });
    const one = await comparableOutputs(out);
    const out2 = join(root, 'out2');
    await runBatch({ input, out: out2, config: byFolder, jobs: 2, inProcess: false });
    expect(differingFiles(await comparableOutputs(out2), one)).toEqual([]);
    const summary = JSON.parse(await readFile(join(out2, 'summary.json'), 'utf8')) as { sessions: Array<{ name: string; info?: Record<string, unknown> }> };
    expect(poolIn(summary.sessions.find((s) => s.name === 'solo/log00')!)).toBeUndefined();
  });
});

describe('pooled by a column', () => {
  it('CSV logs with the same first value in the named column share a pool; a log without the column stays alone', async () => {
    const { mkdir } = await import('node:fs/promises');
    await mkdir(input, { recursive: true });
    // the receiver named in a column of its own (the second log of a receiver in another folder)
    const withColumn = (seed: number, rx: string) => sessionCsv(seed, 400).trimEnd().split('\n').map((l, i) => `${l},${i === 0 ? 'Receiver' : rx}`).join('\n') + '\n';
    await writeFile(join(input, 'a1.csv'), withColumn(41, 'SN-7'));
    await mkdir(join(input, 'day2'), { recursive: true });
    await writeFile(join(input, 'day2', 'a2.csv'), withColumn(42, 'SN-7'));
    await writeFile(join(input, 'b1.csv'), withColumn(43, 'SN-9'));
    await writeFile(join(input, 'b2.csv'), withColumn(44, 'SN-9'));
    await writeFile(join(input, 'plain.csv'), sessionCsv(45, 400));
    const cfg = loadConfig({ overrides: { output: { report: false }, batch: { pool: 'column', poolColumn: 'receiver' } } });
    const r = await runBatch({ input, out, config: cfg });
    const by = new Map(r.summary.sessions.map((x) => [x.name, poolIn(x)]));
    expect(by.get('a1')).toMatchObject({ group: 'SN-7', members: ['a1', 'day2/a2'] });
    expect(by.get('day2/a2')).toMatchObject({ group: 'SN-7' });
    expect(by.get('b1')).toMatchObject({ group: 'SN-9', members: ['b1', 'b2'] });
    expect(by.get('plain')).toBeUndefined();
  });
});

describe('pool keys', () => {
  it.each([
    ['folder', undefined, 'site1/rx7/a.csv', 'site1/rx7'],
    ['folder', undefined, 'a.csv', '.'],
    ['pattern', '^(rx\\d+)_', 'rx12_morning.csv', 'rx12'],
    ['pattern', 'rx\\d+', 'day2/rx3-b.nmea', 'rx3'],
    ['pattern', '^(rx\\d+)_', 'other.csv', null],
    ['none', undefined, 'rx1_a.csv', null],
  ] as const)('%s %s: %s → %s', (pool, poolPattern, rel, key) => {
    expect(poolOf(rel, { pool, ...(poolPattern ? { poolPattern } : {}) })).toBe(key);
  });
  it('a pattern pool without a pattern, or with a broken one, is refused with the field named', () => {
    expect(() => loadConfig({ overrides: { batch: { pool: 'pattern' } } })).toThrow(ConfigError);
    expect(() => loadConfig({ overrides: { batch: { pool: 'pattern' } } })).toThrow(/batch\.poolPattern/);
    expect(() => loadConfig({ overrides: { batch: { pool: 'pattern', poolPattern: '(' } } })).toThrow(/not a regular expression/);
    expect(() => loadConfig({ overrides: { batch: { pool: 'column' } } })).toThrow(/batch\.poolColumn/);
  });
});
