#!/usr/bin/env node
/**
 * The build: TypeScript (tsc, incremental: dist/.tsbuildinfo) then the WebAssembly kernels
 * (scripts/build-wasm.mjs, skipped when their inputs are unchanged). tsc itself is skipped when no
 * file it reads (src/, bench/ and test/helpers/ TypeScript, tsconfig.json, package.json,
 * package-lock.json) is newer than the stamp of the last build that emitted (dist/.build-stamp) and
 * the entry points exist; `--force` (or removing dist/) builds
 * everything.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

const force = process.argv.includes('--force');
const INFO = 'dist/.tsbuildinfo';
// written by this script only after tsc has emitted: a type check without output (tsc --noEmit)
// also writes INFO, so INFO's time cannot tell whether dist/ is current
const STAMP = 'dist/.build-stamp';
const ENTRIES = ['dist/src/cli/main.js', 'dist/src/index.js', 'dist/src/batch/worker.js'];

function newestMs(dir) {
  let m = 0;
  for (const e of readdirSync(dir, { withFileTypes: true })) {
    const p = join(dir, e.name);
    if (e.isDirectory()) m = Math.max(m, newestMs(p));
    else if (e.name.endsWith('.ts')) m = Math.max(m, statSync(p).mtimeMs);
  }
  return m;
}

function tscCurrent() {
  if (force || !existsSync(STAMP) || !ENTRIES.every((f) => existsSync(f))) return false;
  const built = statSync(STAMP).mtimeMs;
  const inputs = Math.max(newestMs('src'), newestMs('bench'), newestMs('test/helpers'), ...['tsconfig.json', 'package.json', 'package-lock.json'].filter(existsSync).map((f) => statSync(f).mtimeMs));
  return inputs <= built;
}

const require = createRequire(import.meta.url);
if (!tscCurrent()) {
  if (force) rmSync(INFO, { force: true });
  const tsc = join(dirname(require.resolve('typescript/package.json')), 'bin', 'tsc');
  try {
    execFileSync(process.execPath, [tsc, '-p', 'tsconfig.json'], { stdio: 'inherit' });
    // tsc leaves its build info untouched when nothing changed: mark the check as done now
    writeFileSync(STAMP, `${new Date().toISOString()}\n`);
  } catch {
    // tsc writes its build info even when the code has type errors: without it the next build
    // checks again instead of skipping over the errors
    rmSync(INFO, { force: true });
    rmSync(STAMP, { force: true });
    process.exit(1);
  }
}
execFileSync(process.execPath, ['scripts/build-wasm.mjs', ...(force ? ['--force'] : [])], { stdio: 'inherit' });
