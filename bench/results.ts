/**
 * bench/results.json is shared by the benchmark parts: each part reads the file, replaces its own
 * fields and writes it back, so running one part keeps the other parts' figures.
 */
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

/** bench/results.json beside the sources (this file runs from dist/bench). */
export function resultsPath(): string {
  return join(dirname(fileURLToPath(import.meta.url)), '..', '..', 'bench', 'results.json');
}

/** Read-merge-write: the top-level keys of `fields` replace those in the file, the rest is kept. */
export function mergeResults(fields: Record<string, unknown>): string {
  const path = resultsPath();
  let old: Record<string, unknown> = {};
  if (existsSync(path)) {
    try {
      old = JSON.parse(readFileSync(path, 'utf8')) as Record<string, unknown>;
    } catch {
      old = {};
    }
  }
  writeFileSync(path, JSON.stringify({ ...old, ...fields }, null, 2) + '\n');
  return path;
}
