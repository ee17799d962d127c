/**
 * Benchmark of the IMU-aided session (issues 4 and 8): 1 h and 6 h of 100 Hz IMU with 10 Hz fixes and with 1 Hz fixes
 * (seeded simulator, src/simulate/imu.ts), written to a temporary folder, then read and processed by
 * processImuSession in a child process of its own (so its peak RSS is the session's, not the
 * simulator's), with the time of every stage (processImuSession's optional ImuStageTimings).
 * Stages, summed over the review passes (every pass streams the IMU log again):
 *   read     reading and parsing the IMU CSV (the reader alone over the file) in the first pass, replaying
 *            the parsed samples (src/input/imu-replay.ts, the replay alone) in the later ones
 *   mech     mechanization and the per-sample bookkeeping (the stream's time less read, propagate, updates)
 *   propagate  error-covariance propagation;  updates  GNSS/ZUPT/NHC updates and the epoch history
 *   smooth   the error-state RTS pass;  review  review statistics and decisions;  products  the result
 * and, apart, the fixes-only baseline the IMU session starts from (calibration and classification of
 * the fixes, its cost is per fix: bench/pipeline.ts).
 * Targets: ≥ 500,000 IMU samples/s on one core for the IMU part (every stage above, reading
 * and parsing included; the fixes-only baseline is not IMU work and is reported apart, as is the end-
 * to-end figure), and memory per fix, not per IMU sample: the peak RSS grows by at most
 * TARGET_BYTES_PER_EPOCH per epoch from 1 h to 6 h.
 * Results go to the `imu` section of bench/results.json (read-merge-write) and a markdown table.
 * Run: `npm run build && node dist/bench/imu.js [durationSec[@fixHz]…]`.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { loadConfig } from '../src/config/load.js';
import { readFixCsv } from '../src/input/csv-fixes.js';
import { streamImuCsv } from '../src/input/imu-csv.js';
import { ImuReplayWriter } from '../src/input/imu-replay.js';
import { newImuStageTimings, processImuSession } from '../src/session/imu/imu-session.js';
import { imuFileSource } from '../src/input/imu-source.js';
import { defaultImuSpec, imuScenarioFixCsv, simulateImuScenario, writeImuCsv } from '../src/simulate/imu.js';
import type { BenchPart } from './part.js';
import { mergeResults } from './results.js';

/** Cases: duration (s) and fix rate (Hz); 10 Hz is the rate of vehicle-test logs, 1 Hz of most GNSS/IMU loggers. */
export interface ImuBenchCase {
  durationSec: number;
  fixRateHz: number;
}
const CASES: ImuBenchCase[] = [
  { durationSec: 3600, fixRateHz: 10 },
  { durationSec: 21600, fixRateHz: 10 },
  { durationSec: 3600, fixRateHz: 1 },
  { durationSec: 21600, fixRateHz: 1 },
];
const SEED = 4242;
const IMU_RATE_HZ = 100;
export const TARGET_SAMPLES_PER_SEC = 500_000;
/**
 * Memory per fix: the session keeps per epoch its filter history (nominal state, packed P⁺ and P⁻,
 * compact Φ, correction: 523 doubles, 4.2 kB) for two passes at once (the previous pass's products
 * are alive while the next pass runs), its products and the fixes-only result; 16 kB per epoch is
 * that with room to spare, and an IMU log held in memory would add ten 56-byte samples per epoch.
 */
export const TARGET_BYTES_PER_EPOCH = 16_384;
/** The memory target at 1 h. */
export const TARGET_MB_1H = 500;

const STAGES = ['read', 'mech', 'propagate', 'updates', 'smooth', 'review', 'products'] as const;
type Stage = (typeof STAGES)[number];

export interface ImuBenchRow {
  durationSec: number;
  fixRateHz: number;
  imuSamples: number;
  fixes: number;
  epochs: number;
  passes: number;
  /** Stage times (s), summed over the passes. */
  stages: Record<Stage, number>;
  /** Reading the fix CSV and the fixes-only baseline (s). */
  fixRead: number;
  baseline: number;
  /** The IMU part (sum of the stages), the whole run (s). */
  imuSec: number;
  totalSec: number;
  imuSamplesPerSec: number;
  endToEndSamplesPerSec: number;
  peakRssMB: number;
  outliers: number;
}

/** Child: simulate `durationSec` and write bench.csv and bench.imu.csv into dir; prints the IMU sample count. */
function generate(dir: string, durationSec: number, fixRateHz: number): number {
  const spec = defaultImuSpec(SEED, { durationSec, fixRateHz, imuRateHz: IMU_RATE_HZ });
  const sc = simulateImuScenario(spec);
  writeFileSync(join(dir, 'bench.csv'), imuScenarioFixCsv(sc));
  return writeImuCsv(sc, join(dir, 'bench.imu.csv'));
}

/** Child: read the fixes and process the session from the files, with stage timings; then time the reader alone. */
async function processFiles(dir: string, durationSec: number, fixRateHz: number, imuSamples: number): Promise<ImuBenchRow> {
  const cfg = loadConfig({ profile: 'vehicle' });
  const tm = newImuStageTimings();
  const t0 = performance.now();
  const series = readFixCsv(readFileSync(join(dir, 'bench.csv'), 'utf8'), 'bench.csv', cfg);
  const t1 = performance.now();
  const r = await processImuSession(series, imuFileSource(join(dir, 'bench.imu.csv'), cfg), cfg, 'bench', undefined, tm);
  const t2 = performance.now();
  const peakRssMB = process.resourceUsage().maxRSS / 1024;
  // the reader alone (the session's reader and parser, a sink that only sums), fastest of three
  let readSec = Infinity;
  let sum = 0;
  for (let rep = 0; rep < 3; rep++) {
    const r0 = performance.now();
    await streamImuCsv(join(dir, 'bench.imu.csv'), 'bench.imu.csv', cfg, (t, fx) => {
      sum += fx;
    });
    readSec = Math.min(readSec, (performance.now() - r0) / 1000);
  }
  // the replay the later passes read instead (recorded once, fastest of three)
  const rec = new ImuReplayWriter();
  await streamImuCsv(join(dir, 'bench.imu.csv'), 'bench.imu.csv', cfg, rec.tee(() => {}));
  const replay = rec.finish();
  let replaySec = Infinity;
  if (replay) {
    for (let rep = 0; rep < 3; rep++) {
      const r0 = performance.now();
      replay.replay((t, fx) => {
        sum += fx;
      });
      replaySec = Math.min(replaySec, (performance.now() - r0) / 1000);
    }
    replay.close();
  }
  if (!Number.isFinite(sum)) throw new Error('reader check');
  const s = (ms: number) => ms / 1000;
  const read = readSec * (tm.passes - tm.replayPasses) + (tm.replayPasses > 0 ? replaySec * tm.replayPasses : 0);
  const stages: Record<Stage, number> = {
    read,
    mech: Math.max(0, s(tm.streamMs - tm.ins.propagateMs - tm.ins.updateMs) - read),
    propagate: s(tm.ins.propagateMs),
    updates: s(tm.ins.updateMs),
    smooth: s(tm.ins.smoothMs),
    review: s(tm.reviewMs),
    products: s(tm.productsMs),
  };
  // the IMU part as measured in the session (its stream, smoother, review and products)
  const imuSec = s(tm.streamMs + tm.ins.smoothMs + tm.reviewMs + tm.productsMs);
  const totalSec = s(t2 - t0);
  return {
    durationSec, fixRateHz, imuSamples, fixes: series.n, epochs: r.N, passes: tm.passes, stages,
    fixRead: s(t1 - t0), baseline: s(tm.baselineMs), imuSec, totalSec,
    imuSamplesPerSec: imuSamples / imuSec, endToEndSamplesPerSec: imuSamples / totalSec,
    peakRssMB, outliers: r.outliers.length,
  };
}

function child(args: string[]): string {
  const res = spawnSync(process.execPath, [fileURLToPath(import.meta.url), ...args], { encoding: 'utf8', maxBuffer: 1 << 24 });
  if (res.status !== 0) throw new Error(`imu bench child ${args.join(' ')} failed (${res.status}): ${res.stderr}`);
  return res.stdout.trim().split('\n').pop()!;
}

const f = (v: number, d = 2) => v.toFixed(d);
const us = (sec: number, n: number) => (sec / n) * 1e6;
const k = (v: number) => Math.round(v).toLocaleString('en-US');

export function imuMarkdownTable(rows: ImuBenchRow[]): string {
  const head = `| IMU | samples | passes | ${STAGES.join(' | ')} | IMU part | IMU samples/s | baseline (fixes) | end to end | end-to-end samples/s | peak RSS |`;
  const lines = [head, `|${'---|'.repeat(STAGES.length + 9)}`];
  for (const r of rows) {
    const cells = STAGES.map((st) => `${f(r.stages[st])} s (${f(us(r.stages[st], r.imuSamples), 3)})`);
    lines.push(`| ${r.durationSec / 3600} h, ${r.fixRateHz} Hz fixes | ${k(r.imuSamples)} | ${r.passes} | ${cells.join(' | ')} | ${f(r.imuSec)} s (${f(us(r.imuSec, r.imuSamples), 3)}) | ${k(r.imuSamplesPerSec)} | ${f(r.baseline + r.fixRead)} s | ${f(r.totalSec)} s | ${k(r.endToEndSamplesPerSec)} | ${Math.round(r.peakRssMB)} MB |`);
  }
  return lines.join('\n');
}

export async function runImuBench(cases = CASES): Promise<{ rows: ImuBenchRow[]; ok: boolean; lines: string[] }> {
  const rows: ImuBenchRow[] = [];
  for (const c of cases) {
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-imu-bench-'));
    try {
      const n = Number(child(['--gen', dir, String(c.durationSec), String(c.fixRateHz)]));
      rows.push(JSON.parse(child(['--process', dir, String(c.durationSec), String(c.fixRateHz), String(n)])) as ImuBenchRow);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  }
  const lines: string[] = [];
  for (const r of rows) {
    lines.push(`${r.durationSec} s, ${r.fixRateHz} Hz fixes: ${r.imuSamples} IMU samples, ${r.fixes} fixes, ${r.epochs} epochs, ${r.passes} passes, ${r.outliers} outliers; peak RSS ${Math.round(r.peakRssMB)} MB`);
    lines.push(`  IMU part ${f(r.imuSec)} s = ${k(r.imuSamplesPerSec)} samples/s; end to end ${f(r.totalSec)} s = ${k(r.endToEndSamplesPerSec)} samples/s (fix read ${f(r.fixRead)} s, fixes-only baseline ${f(r.baseline)} s)`);
    lines.push(`  per IMU sample (µs, all passes): ${STAGES.map((st) => `${st} ${f(us(r.stages[st], r.imuSamples), 3)}`).join(', ')}`);
  }
  lines.push('', imuMarkdownTable(rows), '');
  const checks: Array<[string, boolean]> = [];
  for (const r of rows) checks.push([`${r.durationSec / 3600} h, ${r.fixRateHz} Hz fixes: IMU part ${k(r.imuSamplesPerSec)} samples/s ≥ ${k(TARGET_SAMPLES_PER_SEC)} (reading and parsing included)`, r.imuSamplesPerSec >= TARGET_SAMPLES_PER_SEC]);
  const memory: Record<string, number> = {};
  for (const hz of [...new Set(rows.map((r) => r.fixRateHz))]) {
    const same = rows.filter((r) => r.fixRateHz === hz);
    const r1 = same.find((r) => r.durationSec === 3600);
    if (r1) checks.push([`1 h, ${hz} Hz fixes: peak RSS ${Math.round(r1.peakRssMB)} MB < ${TARGET_MB_1H} MB`, r1.peakRssMB < TARGET_MB_1H]);
    const sorted = [...same].sort((a, b) => a.epochs - b.epochs);
    if (sorted.length >= 2) {
      const a = sorted[0]!, b = sorted[sorted.length - 1]!;
      const bytesPerEpoch = ((b.peakRssMB - a.peakRssMB) * 1024 * 1024) / (b.epochs - a.epochs);
      const perSample = ((b.peakRssMB - a.peakRssMB) * 1024 * 1024) / (b.imuSamples - a.imuSamples);
      memory[`${hz} Hz`] = bytesPerEpoch;
      checks.push([`memory per fix, ${hz} Hz fixes: peak RSS ${Math.round(a.peakRssMB)} → ${Math.round(b.peakRssMB)} MB, ${k(bytesPerEpoch)} bytes per epoch (${f(perSample, 0)} per IMU sample) ≤ ${k(TARGET_BYTES_PER_EPOCH)}`, bytesPerEpoch <= TARGET_BYTES_PER_EPOCH]);
    }
  }
  for (const [t, ok] of checks) lines.push(`${ok ? 'met   ' : 'MISSED'} ${t}`);
  mergeResults({
    imu: {
      machine: { node: process.version, cores: availableParallelism() },
      seed: SEED, imuRateHz: IMU_RATE_HZ, rows, bytesPerEpoch: memory,
      checks: checks.map(([t, ok]) => ({ target: t, met: ok })),
    },
  });
  lines.push('results written to bench/results.json (imu)');
  return { rows, ok: checks.every(([, ok]) => ok), lines };
}

export const imuBench: BenchPart = {
  name: 'imu: IMU-aided session, 1 h and 6 h of 100 Hz IMU with 10 Hz and with 1 Hz fixes',
  async run() {
    const r = await runImuBench();
    return { ok: r.ok, lines: r.lines };
  },
};

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const [mode, a, b, c] = process.argv.slice(2);
  if (mode === '--gen') process.stdout.write(`${generate(a!, Number(b), Number(c))}\n`);
  else if (mode === '--process') processFiles(a!, Number(b), Number(c), Number(process.argv[6])).then((m) => process.stdout.write(JSON.stringify(m) + '\n'));
  else {
    // cases as durationSec[@fixHz] (10 Hz when omitted)
    const cs = process.argv.slice(2).map((v) => {
      const [d, hz] = v.split('@');
      return { durationSec: Number(d), fixRateHz: hz ? Number(hz) : 10 };
    }).filter((x) => x.durationSec > 0 && x.fixRateHz > 0);
    runImuBench(cs.length ? cs : CASES).then((r) => {
      for (const l of r.lines) process.stdout.write(`${l}\n`);
      process.exitCode = r.ok ? 0 : 1;
    });
  }
}
