#!/usr/bin/env node
/**
 * Builds the WebAssembly kernels (AssemblyScript → .wasm beside their sources, copied into dist/)
 * only when an input changed: the SHA-256 of each kernel source, the compiler flags and the
 * AssemblyScript version are kept in dist/.wasm-build.json, and a build whose stamp matches and
 * whose .wasm files are all present is skipped. `--force` builds anyway.
 */
import { createHash } from 'node:crypto';
import { execFileSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';

const KERNELS = [
  { src: 'src/estimation/ins/asm/ins-kernels.ts', flags: ['-O3', '--runtime', 'stub', '--enable', 'simd', '--initialMemory', '1', '--noAssert'] },
  { src: 'src/estimation/asm/loglik-kernel.ts', flags: ['-O3', '--runtime', 'stub', '--initialMemory', '1', '--noAssert'] },
  { src: 'src/estimation/asm/draws-kernel.ts', flags: ['-O3', '--runtime', 'stub', '--initialMemory', '1', '--noAssert'] },
];
const STAMP = 'dist/.wasm-build.json';

const require = createRequire(import.meta.url);
const ascPackage = require.resolve('assemblyscript/package.json');
const ascVersion = JSON.parse(readFileSync(ascPackage, 'utf8')).version;
const ascBin = join(dirname(ascPackage), 'bin', 'asc.js');

const wasmOf = (src) => src.replace(/\.ts$/, '.wasm');
const distOf = (src) => join('dist', wasmOf(src));

function stampOf(k) {
  const h = createHash('sha256');
  h.update(readFileSync(k.src));
  h.update('\0' + k.flags.join(' ') + '\0' + ascVersion);
  return h.digest('hex');
}

let old = {};
try {
  old = JSON.parse(readFileSync(STAMP, 'utf8'));
} catch {
  /* no stamp: build everything */
}
const force = process.argv.includes('--force');
const next = {};
let built = 0;
for (const k of KERNELS) {
  const stamp = stampOf(k);
  next[k.src] = stamp;
  const current = !force && old[k.src] === stamp && existsSync(wasmOf(k.src)) && existsSync(distOf(k.src));
  if (current) continue;
  execFileSync(process.execPath, [ascBin, k.src, ...k.flags, '-o', wasmOf(k.src)], { stdio: 'inherit' });
  mkdirSync(dirname(distOf(k.src)), { recursive: true });
  copyFileSync(wasmOf(k.src), distOf(k.src));
  built++;
}
mkdirSync('dist', { recursive: true });
writeFileSync(STAMP, JSON.stringify(next, null, 2) + '\n');
// on stderr: `npm pack --json` runs the build (prepack) and its stdout must stay JSON
if (built === 0) process.stderr.write('WebAssembly kernels up to date\n');
