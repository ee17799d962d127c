#!/usr/bin/env node
/**
 * The build: TypeScript (tsc, incremental: dist/.tsbuildinfo) then the WebAssembly kernels
 * (scripts/build-wasm.mjs, skipped when their inputs are unchanged). tsc itself is skipped when no
 * file it reads (src/ and bench/ TypeScript, tsconfig.json, package.json, package-lock.json) is
 * newer than dist/.tsbuildinfo and the entry points exist; `--force` (or removing dist/) builds
 * everything.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, readdirSync, rmSync, statSync, utimesSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

const force = process.argv.includes('--force');
const INFO = 'dist/.tsbuildinfo';
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
  if (force || !existsSync(INFO) || !ENTRIES.every((f) => existsSync(f))) return false;
  const built = statSync(INFO).mtimeMs;
  const inputs = Math.max(newestMs('src'), newestMs('bench'), ...['tsconfig.json', 'package.json', 'package-lock.json'].filter(existsSync).map((f) => statSync(f).mtimeMs));
  return inputs <= built;
}

const require = createRequire(import.meta.url);
if (!tscCurrent()) {
  if (force) rmSync(INFO, { force: true });
  const tsc = join(dirname(require.resolve('typescript/package.json')), 'bin', 'tsc');
  try {
    execFileSync(process.execPath, [tsc, '-p', 'tsconfig.json'], { stdio: 'inherit' });
    // tsc leaves its build info untouched when nothing changed: mark the check as done now
    const now = new Date();
    utimesSync(INFO, now, now);
  } catch {
    // tsc writes its build info even when the code has type errors: without it the next build
    // checks again instead of skipping over the errors
    rmSync(INFO, { force: true });
    process.exit(1);
  }
}
execFileSync(process.execPath, ['scripts/build-wasm.mjs', ...(force ? ['--force'] : [])], { stdio: 'inherit' });
