/**
 * Discovery: logs in name order with their companion files; symbolic links followed only inside
 * the input tree, and a link cycle walked once.
 */
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { mkdir, symlink, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { discover } from '../../src/batch/discover.js';
import { removeDir, tempDir } from './batch-helpers.js';

let root: string;
beforeEach(async () => {
  root = await tempDir('discover');
});
afterEach(async () => removeDir(root));

describe('discover', () => {
  it('finds logs in session-name order with companions, skipping hidden files and companions as logs', async () => {
    const input = join(root, 'in');
    await mkdir(join(input, 'b-site'), { recursive: true });
    for (const f of ['z.csv', 'a.csv', 'a.decisions.csv', 'a.IMU.csv', '.hidden.csv', 'notes.md', 'b-site/m.txt']) await writeFile(join(input, f), 'x\n');
    const d = await discover(input);
    expect(d.sessions.map((s) => [s.name, s.relPath])).toEqual([
      ['a', 'a.csv'],
      ['b-site/m', 'b-site/m.txt'],
      ['z', 'z.csv'],
    ]);
    expect(d.sessions[0]!.companions.map((c) => [c.relPath, c.suffix])).toEqual([
      ['a.IMU.csv', '.imu.csv'],
      ['a.decisions.csv', '.decisions.csv'],
    ]);
    expect(d.sessions[2]!.companions).toEqual([]);
  });

  it('a single file: one session, with its companions', async () => {
    await writeFile(join(root, 'one.csv'), 'x\n');
    await writeFile(join(root, 'one.decisions.csv'), 'x\n');
    const d = await discover(join(root, 'one.csv'));
    expect(d.sessions.map((s) => s.name)).toEqual(['one']);
    expect(d.sessions[0]!.companions.map((c) => c.relPath)).toEqual(['one.decisions.csv']);
  });

  it('follows links inside the tree, not out of it, and walks a link cycle once', async () => {
    const input = join(root, 'in');
    const outside = join(root, 'elsewhere');
    await mkdir(join(input, 'day1'), { recursive: true });
    await mkdir(outside, { recursive: true });
    await writeFile(join(input, 'day1', 'r.csv'), 'x\n');
    await writeFile(join(outside, 'secret.csv'), 'x\n');
    await symlink(outside, join(input, 'out-link'));
    await symlink(join(outside, 'secret.csv'), join(input, 'secret-link.csv'));
    await symlink(join(input, 'day1', 'r.csv'), join(input, 'again.csv'));
    await symlink(input, join(input, 'day1', 'loop')); // cycle back to the root
    await symlink(join(input, 'day1'), join(input, 'day1-alias'));
    const d = await discover(input);
    expect(d.sessions.map((s) => s.relPath)).toEqual(['again.csv', 'day1/r.csv']);
    expect(d.sessions[0]!.path).toBe(d.sessions[1]!.path);
  });
});
