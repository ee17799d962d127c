/**
 * Benchmark of the fixes-only pipeline: fix CSVs of 10k, 100k and 1M fixes (10 Hz
 * vehicle scenarios from the seeded simulator, src/simulate/scenario.ts), each processed in its own
 * child process (so its peak RSS is its own) from CSV in to all outputs out (track CSV, outliers
 * CSV, GeoJSON, summary entry and report payload), with the time of every stage (processSession's
 * optional StageTimings), the whole run, peak memory, and the filter+smoother kernel alone
 * (forwardFilter + smoothInPlace over the session's longest segment under its calibrated model).
 * Results go to bench/results.json and a markdown table on stdout.
 * Targets: 1M fixes ≥ 200,000 fixes/s end to end on one core and peak RSS < 1 GB; kernel
 * ≥ 2 million epochs/s; time per fix at 1M within 1.3× of that at 100k.
 * Run alone: `npm run build && node dist/bench/pipeline.js [sizes…]`.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync, mkdirSync, readdirSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { loadConfig } from '../src/config/load.js';
import { readFixLog } from '../src/input/read-log.js';
import { prepareSession, segmentData } from '../src/session/prepare/prepare.js';
import { processSession } from '../src/session/process-session.js';
import { filterOptions, buildAxisModels, type AxisParams } from '../src/session/prepare/axis-params.js';
import { newStageTimings } from '../src/session/result/timings.js';
import { writeSessionOutputs } from '../src/batch/session-task.js';
import { okEntry } from '../src/output/summary.js';
import { reportPayload } from '../src/output/report/payload.js';
import { forwardFilter } from '../src/estimation/track-filter.js';
import { smoothInPlace } from '../src/estimation/track-smoother.js';
import { defaultSpec, scenarioCsv, simulate } from '../src/simulate/scenario.js';
import type { BenchPart } from './part.js';
import { mergeResults } from './results.js';

const SIZES = [10_000, 100_000, 1_000_000];
const RATE_HZ = 10;
const SEED = 808;
const TARGET_FIXES_PER_SEC = 200_000;
const TARGET_MB = 1024;
const TARGET_KERNEL_EPS = 2_000_000;
const TARGET_LINEARITY = 1.3;
const STAGES = ['read', 'project', 'calibrate', 'filter', 'smooth', 'review', 'products', 'write'] as const;
type Stage = (typeof STAGES)[number];

export interface SizeResult {
  fixes: number;
  epochs: number;
  bytes: number;
  /** Stage times (s). */
  stages: Record<Stage, number>;
  totalSec: number;
  fixesPerSec: number;
  peakRssMB: number;
  /** Minor page faults of the whole child process (each a first touch of a 4 KiB page; bench/floors.ts prices them). */
  minorFaults: number;
  /** Bytes of the output files (track CSV, outliers CSV, GeoJSON, summary). */
  outputBytes: number;
  filterPasses: number;
  smoothPasses: number;
  kernel: { epochs: number; sec: number; epochsPerSec: number };
  outliers: number;
  calibration: string;
}

/** Child: write the CSV of a scenario with `n` fixes to `path`. */
function generate(n: number, path: string): void {
  const spec = defaultSpec('vehicle', SEED, { rateHz: RATE_HZ });
  // lengthen by the scenario's gaps so the log holds about n fixes
  spec.durationSec = n / RATE_HZ + spec.errors.gaps.reduce((a, [, len]) => a + len, 0);
  const sc = simulate(spec);
  writeFileSync(path, scenarioCsv(sc));
}

/** Child: process the CSV at `path` into `out` with stage timings; returns the figures. */
async function runOne(path: string, out: string): Promise<SizeResult> {
  const cfg = loadConfig({ profile: 'vehicle', overrides: { output: { report: true } } });
  const tm = newStageTimings();
  const t0 = performance.now();
  const series = await readFixLog(path, 'bench.csv', cfg);
  const t1 = performance.now();
  const r = processSession(series, cfg, 'bench', undefined, tm);
  const t2 = performance.now();
  const payload = reportPayload(r, { maxPoints: cfg.output.reportMaxPoints });
  const outputs = await writeSessionOutputs(out, r, cfg);
  const summary = okEntry(r, 'bench.csv', outputs.map((o) => o.file), (t2 - t0) / 1000);
  writeFileSync(join(out, 'summary.json'), JSON.stringify({ sessions: [summary], payloadPoints: (payload as { plot?: { t?: ArrayLike<number> } }).plot?.t?.length }));
  const t3 = performance.now();
  const ru = process.resourceUsage();
  const peakRssMB = ru.maxRSS / 1024;
  const minorFaults = ru.minorPageFault;
  const outputBytes = readdirSync(out).reduce((a, f) => a + statSync(join(out, f)).size, 0);
  // kernel alone: the longest segment under the calibrated model, every fix gated
  const p = r.info.model as AxisParams;
  const ps = prepareSession(series, cfg);
  let best = ps.segments[0]!;
  for (const s of ps.segments) if (s[1] - s[0] > best[1] - best[0]) best = s;
  const { data } = segmentData(ps, best, p, cfg.segments.bridgeFactor);
  const models = buildAxisModels(p, ps.hasHeight);
  const opt = filterOptions(cfg, p);
  let kSec = Infinity;
  let h = forwardFilter(models, data, opt);
  for (let rep = 0; rep < 3; rep++) {
    h.extraQ.clear();
    h.reacquired.length = 0;
    const k0 = performance.now();
    h = forwardFilter(models, data, opt, h);
    smoothInPlace(models, data, h, opt.qScale);
    kSec = Math.min(kSec, (performance.now() - k0) / 1000);
  }
  const ms = (v: number) => v / 1000;
  const stages: Record<Stage, number> = {
    read: ms(t1 - t0),
    project: ms(tm.project),
    calibrate: ms(tm.calibrate),
    filter: ms(tm.filter),
    smooth: ms(tm.smooth),
    review: ms(tm.review),
    products: ms(tm.products),
    write: ms(t3 - t2),
  };
  const totalSec = ms(t3 - t0);
  const cal = r.info.calibration as { status?: string; epochsUsed?: number; evaluations?: number } | undefined;
  return {
    fixes: series.n,
    epochs: r.N,
    bytes: statSync(path).size,
    stages,
    totalSec,
    fixesPerSec: series.n / totalSec,
    peakRssMB,
    minorFaults,
    outputBytes,
    filterPasses: tm.filterPasses,
    smoothPasses: tm.smoothPasses,
    kernel: { epochs: data.N, sec: kSec, epochsPerSec: data.N / kSec },
    outliers: r.outliers.length,
    calibration: `${cal?.status ?? '?'}, ${cal?.epochsUsed ?? 0} epochs, ${cal?.evaluations ?? 0} evaluations`,
  };
}

function child(args: string[]): string {
  const self = fileURLToPath(import.meta.url);
  const res = spawnSync(process.execPath, ['--max-old-space-size=4096', self, ...args], { encoding: 'utf8', maxBuffer: 1 << 26 });
  if (res.status !== 0) throw new Error(`bench child ${args.join(' ')} failed (${res.status}): ${res.stderr}`);
  return res.stdout;
}

const f = (v: number, d = 2) => v.toFixed(d);
const perEpochUs = (sec: number, n: number) => (sec / n) * 1e6;

export function markdownTable(rows: SizeResult[]): string {
  const head = `| fixes | ${STAGES.join(' | ')} | total | fixes/s | peak RSS | kernel epochs/s |`;
  const sep = `|${'---|'.repeat(STAGES.length + 5)}`;
  const lines = [head, sep];
  for (const r of rows) {
    const cells = STAGES.map((s) => `${f(r.stages[s], 2)} s (${f(perEpochUs(r.stages[s], r.fixes), 2)} µs)`);
    lines.push(`| ${r.fixes.toLocaleString('en-US')} | ${cells.join(' | ')} | ${f(r.totalSec, 2)} s | ${Math.round(r.fixesPerSec).toLocaleString('en-US')} | ${Math.round(r.peakRssMB)} MB | ${(r.kernel.epochsPerSec / 1e6).toFixed(2)} M |`);
  }
  return lines.join('\n');
}

export async function runPipelineBench(sizes = SIZES): Promise<{ rows: SizeResult[]; ok: boolean; lines: string[] }> {
  const root = mkdtempSync(join(tmpdir(), 'hindcast-pipeline-bench-'));
  const rows: SizeResult[] = [];
  try {
    for (const n of sizes) {
      const path = join(root, `fixes-${n}.csv`);
      child(['gen', String(n), path]);
      const out = join(root, `out-${n}`);
      mkdirSync(out);
      const text = child(['run', path, out]);
      const row = JSON.parse(text.trim().split('\n').pop()!) as SizeResult;
      rows.push(row);
      rmSync(path, { force: true });
      rmSync(out, { recursive: true, force: true });
    }
  } finally {
    rmSync(root, { recursive: true, force: true });
  }
  const lines: string[] = [];
  for (const r of rows) {
    lines.push(`${r.fixes} fixes → ${r.epochs} epochs: ${f(r.totalSec)} s, ${Math.round(r.fixesPerSec)} fixes/s, peak RSS ${Math.round(r.peakRssMB)} MB; ${r.filterPasses} filter / ${r.smoothPasses} smoother passes; ${r.outliers} outliers; calibration ${r.calibration}`);
    lines.push(`  per fix (µs): ${STAGES.map((s) => `${s} ${f(perEpochUs(r.stages[s], r.fixes), 2)}`).join(', ')}; total ${f(perEpochUs(r.totalSec, r.fixes), 2)}`);
    lines.push(`  kernel (forwardFilter + smoothInPlace, ${r.kernel.epochs} epochs): ${(r.kernel.epochsPerSec / 1e6).toFixed(2)} M epochs/s`);
  }
  lines.push('', markdownTable(rows), '');
  const big = rows.find((r) => r.fixes >= 1_000_000);
  const mid = rows.find((r) => r.fixes >= 100_000 && r.fixes < 1_000_000);
  const checks: Array<[string, boolean]> = [];
  if (big) {
    checks.push([`1M end to end ${Math.round(big.fixesPerSec)} fixes/s ≥ ${TARGET_FIXES_PER_SEC}`, big.fixesPerSec >= TARGET_FIXES_PER_SEC]);
    checks.push([`1M peak RSS ${Math.round(big.peakRssMB)} MB < ${TARGET_MB} MB`, big.peakRssMB < TARGET_MB]);
    checks.push([`kernel ${(big.kernel.epochsPerSec / 1e6).toFixed(2)} M epochs/s ≥ ${TARGET_KERNEL_EPS / 1e6} M`, big.kernel.epochsPerSec >= TARGET_KERNEL_EPS]);
  }
  if (big && mid) {
    const ratio = big.totalSec / big.fixes / (mid.totalSec / mid.fixes);
    checks.push([`time per fix 1M / 100k = ${ratio.toFixed(2)} ≤ ${TARGET_LINEARITY}`, ratio <= TARGET_LINEARITY]);
  }
  for (const [t, ok] of checks) lines.push(`${ok ? 'met   ' : 'MISSED'} ${t}`);
  // read-merge-write: the IMU part's section (bench/imu.ts) stays
  mergeResults({ machine: { node: process.version, cores: (await import('node:os')).availableParallelism() }, rateHz: RATE_HZ, seed: SEED, rows, checks: checks.map(([t, ok]) => ({ target: t, met: ok })) });
  lines.push(`results written to bench/results.json`);
  return { rows, ok: checks.length > 0 && checks.every(([, ok]) => ok), lines };
}

export const pipelineBench: BenchPart = {
  name: 'pipeline: fixes only, 10k / 100k / 1M fixes at 10 Hz, CSV in to all outputs out',
  async run() {
    const r = await runPipelineBench();
    return { ok: r.ok, lines: r.lines };
  },
};

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const [mode, a, b] = process.argv.slice(2);
  if (mode === 'gen') generate(Number(a), a && b ? b : '');
  else if (mode === 'run') runOne(a!, b!).then((r) => process.stdout.write(JSON.stringify(r) + '\n'));
  else {
    const sizes = process.argv.slice(2).map(Number).filter((x) => x > 0);
    runPipelineBench(sizes.length ? sizes : SIZES).then((r) => {
      for (const l of r.lines) process.stdout.write(`${l}\n`);
      process.exitCode = r.ok ? 0 : 1;
    });
  }
}
