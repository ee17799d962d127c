/**
 * Atomic writes and the clean-up of temporaries, including the shard-safe clean-up that only
 * touches the temporaries of one shard's sessions.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdir, readdir, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { cleanTemporaries, finalNameOfTemp, TEMP_PREFIX, writeChunksAtomic, writeChunksToTemporary, writeFileAtomic } from '../../src/io/atomic-write.js';
import { ownerOfOutput } from '../../src/batch/run-batch.js';
import { readTree, removeDir, tempDir } from '../batch/batch-helpers.js';

let root: string;
beforeEach(async () => {
  root = await tempDir('atomic');
});
afterEach(async () => removeDir(root));

describe('atomic writes', () => {
  it('write the whole content under the final name and leave no temporary', async () => {
    await writeFileAtomic(join(root, 'a', 'x.json'), '{"a":1}\n');
    await writeChunksAtomic(join(root, 'a', 'y.csv'), ['h\n', '1\n', '2\n']);
    const t = await readTree(root);
    expect([...t.keys()].sort()).toEqual(['a/x.json', 'a/y.csv']);
    expect(t.get('a/y.csv')!.toString()).toBe('h\n1\n2\n');
  });

  // a write that fails while its stream is still opening the file: before the removal waited for
  // the stream to close, the file could appear after the removal (0–34 of 300 left, measured)
  it('a write that fails while its file is being opened leaves no temporary behind', async () => {
    function* failing(): Generator<string> {
      yield 'part\n';
      throw new Error('disk full');
    }
    for (let i = 0; i < 300; i++) await expect(writeChunksToTemporary(join(root, `f${i}.csv`), failing())).rejects.toThrow('disk full');
    expect(await readdir(root)).toEqual([]);
  });

  it.each([
    [`${TEMP_PREFIX}0a1b2c3d-x.track.csv`, 'x.track.csv'],
    [`${TEMP_PREFIX}0a1b2c3d-summary.json`, 'summary.json'],
    ['x.track.csv', null],
    [`${TEMP_PREFIX}zz-x.csv`, null],
  ])('final name of %s', (name, want) => expect(finalNameOfTemp(name)).toBe(want));

  it.each([
    ['a.track.csv', 'a'],
    ['day1/a.outliers.csv', 'day1/a'],
    ['.hindcast/manifest/day1/a.json', 'day1/a'],
    ['.hindcast/payloads/a.v8', 'a'],
    ['.hindcast/overview/day1/a.v8', 'day1/a'],
    ['report/a.html', 'a'],
    ['report/day1/a.html', 'day1/a'],
    ['report/a.track.csv', 'report/a'],
    ['report.html', null],
    ['summary.json', null],
    ['summary.shard-2-of-3.json', null],
    ['summary.track.csv', 'summary'],
    ['day1/summary.json', 'day1/summary'],
  ])('owner of %s', (rel, want) => expect(ownerOfOutput(rel)).toBe(want));

  it('the clean-up removes temporaries only, and with an owner test only those it accepts', async () => {
    await mkdir(join(root, 'd'), { recursive: true });
    const files = [`${TEMP_PREFIX}00000000-a.track.csv`, `d/${TEMP_PREFIX}11111111-b.geojson`, 'a.track.csv', 'd/keep.txt'];
    for (const f of files) await writeFile(join(root, f), 'x');
    expect(await cleanTemporaries(root, (rel) => rel === 'd/b.geojson')).toBe(1);
    expect((await readdir(join(root, 'd'))).sort()).toEqual(['keep.txt']);
    expect(await cleanTemporaries(root)).toBe(1);
    expect([...(await readTree(root)).keys()].sort()).toEqual(['a.track.csv', 'd/keep.txt']);
  });
});
