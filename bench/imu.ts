/**
 * Benchmark of the IMU-aided session (issue 4): one hour of 100 Hz IMU with 10 Hz fixes, simulated,
 * written to a temporary folder, then processed by processImuSession. Targets: under 20 s on one core,
 * peak memory under 500 MB. Run: `npm run build && node dist/bench/imu.js [durationSec]`; also callable
 * as runImuBench() from bench/run.ts.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
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

export async function runImuBench(durationSec = 3600): Promise<ImuBenchResult> {
  const dir = mkdtempSync(join(tmpdir(), 'hindcast-imu-bench-'));
  try {
    const spec = defaultImuSpec(4242, { durationSec, fixRateHz: 10, imuRateHz: 100 });
    const sc = simulateImuScenario(spec);
    const cfg = loadConfig({ profile: 'vehicle' });
    const text = imuScenarioFixCsv(sc);
    writeFileSync(join(dir, 'bench.csv'), text);
    const imuPath = join(dir, 'bench.imu.csv');
    const imuSamples = writeImuCsv(sc, imuPath);
    const series = readFixCsv(text, 'bench.csv', cfg);
    (globalThis as { gc?: () => void }).gc?.();
    const t0 = performance.now();
    const r = await processImuSession(series, imuPath, cfg, 'bench');
    const processSec = (performance.now() - t0) / 1000;
    const peakRssMB = process.resourceUsage().maxRSS / 1024;
    const res: ImuBenchResult = { durationSec, imuSamples, fixes: series.n, epochs: r.N, processSec, peakRssMB, targetSec: 20, targetMB: 500, pass: processSec < 20 && peakRssMB < 500 };
    return res;
  } finally {
    rmSync(dir, { recursive: true, force: true });
  }
}

if (import.meta.url === pathToFileURL(process.argv[1] ?? '').href) {
  const dur = Number(process.argv[2] ?? 3600);
  runImuBench(dur).then((r) => {
    process.stdout.write(
      `imu: ${r.durationSec} s of ${r.imuSamples} IMU samples, ${r.fixes} fixes, ${r.epochs} epochs: ${r.processSec.toFixed(2)} s (target < ${r.targetSec} s), peak RSS ${r.peakRssMB.toFixed(0)} MB (target < ${r.targetMB} MB; includes the simulation) ${r.pass ? 'PASS' : 'FAIL'}\n`,
    );
    process.exitCode = r.pass ? 0 : 1;
  });
}
