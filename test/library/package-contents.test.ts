/**
 * What `npm pack` puts in the package is enough for the command and the library: the packed
 * files are listed (no build step at install), then the tarball is unpacked on its own, given the
 * repository's dependencies, and its command runs a seeded log to the end (compiled dist/ needed:
 * `npm run build`).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, readFileSync, symlinkSync } from 'node:fs';
import { join, resolve } from 'node:path';
import { removeDir, tempDir, writeSessions } from '../batch/batch-helpers.js';

const NPM = process.platform === 'win32' ? 'npm.cmd' : 'npm';
let root: string;
let tarball: string;
let files: string[];

beforeAll(async () => {
  root = await tempDir('pack');
  const out = execFileSync(NPM, ['pack', '--json', '--pack-destination', root], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
  const info = JSON.parse(out) as Array<{ filename: string; files: Array<{ path: string }> }>;
  tarball = join(root, info[0]!.filename);
  files = info[0]!.files.map((f) => f.path);
}, 120_000);
afterAll(async () => removeDir(root));

describe('npm pack', () => {
  it('holds the command, the library with its types, the worker, the kernels and the profiles', () => {
    const pkg = JSON.parse(readFileSync('package.json', 'utf8')) as { bin: Record<string, string>; main: string; types: string; engines: { node: string } };
    const need = [
      pkg.bin.hindcast!,
      pkg.main,
      pkg.types,
      'dist/src/batch/worker.js',
      'dist/src/output/report/write-report.js',
      'dist/src/estimation/asm/loglik-kernel.wasm',
      'dist/src/estimation/ins/asm/ins-kernels.wasm',
      'config/default.json',
      'config/pedestrian.json',
      'config/vehicle.json',
      'config/drone.json',
      'package.json',
    ].map((f) => f.replace(/^\.\//, ''));
    for (const f of need) expect(files, f).toContain(f);
    expect(pkg.engines.node).toBe('>=20.19');
    // sources, tests and build state stay out
    expect(files.filter((f) => /^(test|src|bench)\//.test(f) || f.includes('.tsbuildinfo') || f.includes('.wasm-build'))).toEqual([]);
  });

  it('the unpacked package runs a log to the end on its own files', async () => {
    execFileSync('tar', ['-xzf', tarball, '-C', root]);
    const pkgDir = join(root, 'package');
    symlinkSync(resolve('node_modules'), join(pkgDir, 'node_modules'), 'dir');
    const input = join(root, 'in');
    await writeSessions(input, 1);
    const r = spawnSync(process.execPath, [join(pkgDir, 'dist/src/cli/main.js'), 'run', input, '--out', join(root, 'out'), '--jobs', '1'], { encoding: 'utf8' });
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    for (const f of ['log00.track.csv', 'log00.outliers.csv', 'log00.geojson', 'summary.json', 'report.html']) expect(existsSync(join(root, 'out', f)), f).toBe(true);
  }, 120_000);
});
