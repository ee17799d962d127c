/**
 * Shards: K/N parsing, a partition by session name that covers every session exactly once and is
 * stable when files are added, and shards run into one folder then joined give the one-machine
 * summary and outputs.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { readFile, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import { runBatch } from '../../src/batch/run-batch.js';
import { joinShards } from '../../src/batch/join.js';
import { inShard, parseShard, shardOf } from '../../src/batch/shard.js';
import { UsageError } from '../../src/errors.js';
import { comparableOutputs, differingFiles, removeDir, tempDir, writeSessions } from './batch-helpers.js';

describe('parseShard', () => {
  it.each([
    ['1/3', { index: 1, count: 3 }],
    ['3/3', { index: 3, count: 3 }],
    [' 2 / 8 ', { index: 2, count: 8 }],
    ['1/1', { index: 1, count: 1 }],
  ])('%s', (text, want) => expect(parseShard(text)).toEqual(want));
  it.each(['0/3', '4/3', '1/0', '3', 'a/b', '1/3/5', '-1/3', '1.5/3'])('refuses %s', (text) => expect(() => parseShard(text)).toThrow(UsageError));
});

describe('partition', () => {
  const names = Array.from({ length: 200 }, (_, i) => (i % 3 === 0 ? `site-${i}/day-${i % 7}` : `log${i}`));
  it.each([1, 2, 3, 5, 8])('N = %i: every session in exactly one shard, none empty', (n) => {
    const counts = new Array(n).fill(0);
    for (const name of names) {
      const owners = Array.from({ length: n }, (_, k) => k + 1).filter((k) => inShard(name, { index: k, count: n }));
      expect(owners).toHaveLength(1);
      counts[owners[0]! - 1]++;
    }
    expect(counts.every((c) => c > 0)).toBe(true);
  });
  it('a session keeps its shard when other sessions are added or removed', () => {
    const before = names.map((n) => shardOf(n, 4));
    // the shard depends on the name alone: recomputed amid a larger set it is the same
    const more = [...names, ...Array.from({ length: 50 }, (_, i) => `extra${i}`)];
    expect(more.slice(0, names.length).map((n) => shardOf(n, 4))).toEqual(before);
  });
  // the same on every machine: first 32 bits of SHA-256 (big-endian) mod N, plus 1; values
  // computed independently with Python's hashlib
  it.each([
    ['log1', 2, 5],
    ['log2', 2, 8],
    ['site-0/day-0', 1, 3],
    ['north/log00', 3, 2],
  ])('shard of %s: %i of 3, %i of 8', (name, of3, of8) => {
    expect(shardOf(name, 3)).toBe(of3);
    expect(shardOf(name, 8)).toBe(of8);
  });
});

describe('shards into one folder, then join', () => {
  let root: string;
  const cfg = loadConfig({});
  beforeEach(async () => {
    root = await tempDir('shard');
  });
  afterEach(async () => removeDir(root));

  it('1/3, 2/3, 3/3 take every session once; the joined summary and outputs equal a one-machine run', async () => {
    const input = join(root, 'in');
    const names = [...(await writeSessions(input, 7)), ...(await writeSessions(input, 2, { sub: 'north', seed0: 60 }))];
    await writeFile(join(input, 'bad.csv'), 'nothing useful\n');
    const single = join(root, 'single');
    await runBatch({ input, out: single, config: cfg });
    const shared = join(root, 'shared');
    const taken: string[] = [];
    for (let k = 1; k <= 3; k++) {
      const r = await runBatch({ input, out: shared, config: cfg, shard: { index: k, count: 3 } });
      expect(r.summaryPath.endsWith(`summary.shard-${k}-of-3.json`)).toBe(true);
      taken.push(...r.summary.sessions.map((s) => s.name));
    }
    expect(taken.sort()).toEqual([...names, 'bad'].sort());
    await expect(readFile(join(shared, 'summary.json'))).rejects.toThrow();
    const j = await joinShards(shared);
    expect(j.exitCode).toBe(1); // bad.csv failed
    expect(j.summary.run?.joinedShards).toBe(3);
    const a = await comparableOutputs(single);
    const b = await comparableOutputs(shared);
    for (let k = 1; k <= 3; k++) b.delete(`summary.shard-${k}-of-3.json`);
    expect(differingFiles(a, b)).toEqual([]);
  });

  it('join refuses missing shards, mixed splits, and shards of different settings', async () => {
    const input = join(root, 'in');
    await writeSessions(input, 4);
    const out = join(root, 'out');
    const noReport = loadConfig({ overrides: { output: { report: false } } });
    await runBatch({ input, out, config: noReport, shard: { index: 1, count: 2 } });
    await expect(joinShards(out)).rejects.toThrow(/missing.*2\/2/);
    await runBatch({ input, out, config: loadConfig({ overrides: { output: { report: false }, gate: { probability: 0.99 } } }), shard: { index: 2, count: 2 } });
    await expect(joinShards(out)).rejects.toThrow(/another configuration/);
    await runBatch({ input, out, config: noReport, shard: { index: 2, count: 2 } });
    await runBatch({ input, out, config: noReport, shard: { index: 1, count: 3 } });
    await expect(joinShards(out)).rejects.toThrow(/different splits/);
    await rm(join(out, 'summary.shard-1-of-3.json'));
    expect((await joinShards(out)).exitCode).toBe(0);
  });
});
