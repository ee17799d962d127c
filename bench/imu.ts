/**
 * Benchmark of the IMU-aided session (issue 4): one hour of 100 Hz IMU with 10 Hz fixes, simulated,
 * written to a temporary folder, then processed by processImuSession. Targets: under 20 s on one core,
 * peak memory under 500 MB. Run: `npm run build && node dist/bench/imu.js [durationSec]`; also callable
 * as runImuBench() from bench/run.ts.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { loadConfig } from '../src/config/load.js';
import { readFixCsv } from '../src/input/csv-fixes.js';
import { processImuSession } from '../src/session/imu-session.js';
import { defaultImuSpec, imuScenarioFixCsv, simulateImuScenario, writeImuCsv } from '../src/simulate/imu.js';

export interface ImuBenchResult {
  durationSec: number;
  imuSamples: number;
  fixes: number;
  epochs: number;
  processSec: number;
  peakRssMB: number;
  targetSec: number;
  targetMB: number;
  pass: boolean;
}

/** Simulate the hour and write bench.csv and bench.imu.csv into dir; returns the IMU sample count. */
function generate(dir: string, durationSec: number): number {
  const spec = defaultImuSpec(4242, { durationSec, fixRateHz: 10, imuRateHz: 100 });
  const sc = simulateImuScenario(spec);
  writeFileSync(join(dir, 'bench.csv'), imuScenarioFixCsv(sc));
  return writeImuCsv(sc, join(dir, 'bench.imu.csv'));
}

/** Read the fixes and process the session from the files (a fresh process, so its peak RSS is the session's). */
async function processFiles(dir: string): Promise<{ fixes: number; epochs: number; processSec: number; peakRssMB: number }> {
  const cfg = loadConfig({ profile: 'vehicle' });
  const t0 = performance.now();
  const series = readFixCsv(readFileSync(join(dir, 'bench.csv'), 'utf8'), 'bench.csv', cfg);
  const r = await processImuSession(series, join(dir, 'bench.imu.csv'), cfg, 'bench');
  const processSec = (performance.now() - t0) / 1000;
  return { fixes: series.n, epochs: r.N, processSec, peakRssMB: process.resourceUsage().maxRSS / 1024 };
}

/**
 * Generate in this process, then process in a child process: the peak memory measured is that of
 * reading and processing the session, not of the simulator (which holds the hour in memory).
 */
export async function runImuBench(durationSec = 3600): Promise<ImuBenchResult> {
  const dir = mkdtempSync(join(tmpdir(), 'hindcast-imu-bench-'));
  try {
    const imuSamples = generate(dir, durationSec);
    const child = spawnSync(process.execPath, [fileURLToPath(import.meta.url), '--process', dir], { encoding: 'utf8', maxBuffer: 1 << 20 });
    if (child.status !== 0) throw new Error(`imu bench child failed: ${child.stderr}`);
    const m = JSON.parse(child.stdout.trim().split('\n').pop()!) as { fixes: number; epochs: number; processSec: number; peakRssMB: number };
    const res: ImuBenchResult = { durationSec, imuSamples, ...m, targetSec: 20, targetMB: 500, pass: m.processSec < 20 && m.peakRssMB < 500 };
    return res;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  if (process.argv[2] === '--process') {
    processFiles(process.argv[3]!).then((m) => process.stdout.write(JSON.stringify(m) + '\n'));
  } else {
    const dur = Number(process.argv[2] ?? 3600);
    runImuBench(dur).then((r) => {
      process.stdout.write(
        `imu: ${r.durationSec} s of ${r.imuSamples} IMU samples, ${r.fixes} fixes, ${r.epochs} epochs: ${r.processSec.toFixed(2)} s including reading (target < ${r.targetSec} s), peak RSS ${r.peakRssMB.toFixed(0)} MB of the processing process (target < ${r.targetMB} MB) ${r.pass ? 'PASS' : 'FAIL'}\n`,
      );
      process.exitCode = r.pass ? 0 : 1;
    });
  }
}
