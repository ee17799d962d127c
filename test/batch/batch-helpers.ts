/**
 * Shared helpers of the batch and command tests: seeded input folders made with the simulator,
 * reading a whole output folder, and summary.json without the fields that describe the run.
 */
import { mkdtemp, mkdir, readdir, readFile, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';
import { TEMP_PREFIX } from '../../src/io/atomic-write.js';

export async function tempDir(tag: string): Promise<string> {
  return mkdtemp(join(tmpdir(), `hindcast-${tag}-`));
}

export async function removeDir(dir: string): Promise<void> {
  await rm(dir, { recursive: true, force: true });
}

/** One seeded vehicle log (CSV text). */
export function sessionCsv(seed: number, durationSec = 120): string {
  return scenarioCsv(simulate(defaultSpec('vehicle', seed, { durationSec })));
}

/** Write `n` seeded logs `<prefix>NN.csv` into dir (optionally in a subfolder); returns their session names. */
export async function writeSessions(dir: string, n: number, opts: { seed0?: number; durationSec?: number; sub?: string; prefix?: string } = {}): Promise<string[]> {
  const folder = opts.sub ? join(dir, opts.sub) : dir;
  await mkdir(folder, { recursive: true });
  const names: string[] = [];
  for (let i = 0; i < n; i++) {
    const stem = `${opts.prefix ?? 'log'}${String(i).padStart(2, '0')}`;
    await writeFile(join(folder, `${stem}.csv`), sessionCsv((opts.seed0 ?? 1000) + i, opts.durationSec ?? 120));
    names.push(opts.sub ? `${opts.sub}/${stem}` : stem);
  }
  return names;
}

/** Every file below dir (relative "/" paths) with its bytes. */
export async function readTree(dir: string, prefix = ''): Promise<Map<string, Buffer>> {
  const out = new Map<string, Buffer>();
  for (const e of await readdir(dir, { withFileTypes: true })) {
    const rel = prefix + e.name;
    if (e.isDirectory()) for (const [k, v] of await readTree(join(dir, e.name), `${rel}/`)) out.set(k, v);
    else out.set(rel, await readFile(join(dir, e.name)));
  }
  return out;
}

/** Relative paths of temporaries below dir. */
export async function temporaries(dir: string): Promise<string[]> {
  return [...(await readTree(dir)).keys()].filter((k) => k.split('/').pop()!.startsWith(TEMP_PREFIX));
}

/** summary.json as an object without the fields that describe the run rather than the results. */
export function stableSummary(text: string): unknown {
  const s = JSON.parse(text) as Record<string, unknown> & { sessions: Array<Record<string, unknown>> };
  delete s.createdUtc;
  delete s.run;
  for (const e of s.sessions) delete e.elapsedSec;
  return s;
}

/**
 * The user-facing outputs of a folder for comparing two runs: every file outside the hidden
 * state folder, summary.json reduced to its stable part, and the report (another stage's output)
 * with the summary's creation time, which it quotes, replaced by a placeholder, and the chart
 * library's clip-path ids (numbered per process, so two runs in one test process differ) renumbered.
 */
export async function comparableOutputs(dir: string): Promise<Map<string, string>> {
  const tree = await readTree(dir);
  const summary = tree.get('summary.json');
  const created = summary ? (JSON.parse(summary.toString('utf8')) as { createdUtc: string }).createdUtc : undefined;
  const out = new Map<string, string>();
  for (const [k, v] of tree) {
    if (k.startsWith('.hindcast/')) continue;
    let text = v.toString('utf8');
    if (k === 'summary.json') text = JSON.stringify(stableSummary(text));
    else if (k.startsWith('report')) {
      if (created) text = text.split(created).join('<createdUtc>');
      text = text.replace(/clip\d+/g, 'clip#');
    }
    out.set(k, text);
  }
  return out;
}

/** Files that differ between two comparable-output maps (missing on one side, or different text). */
export function differingFiles(a: Map<string, string>, b: Map<string, string>): string[] {
  const keys = new Set([...a.keys(), ...b.keys()]);
  return [...keys].filter((k) => a.get(k) !== b.get(k)).sort();
}
