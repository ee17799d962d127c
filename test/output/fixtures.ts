/** Sessions for the output tests, from the seeded simulator (computed once per test file). */
import { loadConfig } from '../../src/config/load.js';
import type { HindcastConfig } from '../../src/config/schema.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import type { FixSeries } from '../../src/input/fix-series.js';
import { processSession } from '../../src/session/process-session.js';
import type { SessionResult } from '../../src/session/result/result.js';
import { buildSummary, okEntry, type BatchSummary } from '../../src/output/summary.js';
import { defaultSpec, scenarioCsv, simulate, type ScenarioSpec } from '../../src/simulate/scenario.js';
import { overviewData, reportPayload, sessionPageName, type OverviewData, type ReportPayload } from '../../src/output/report/index.js';

export interface Fixture {
  cfg: HindcastConfig;
  series: FixSeries;
  result: SessionResult;
}

const cache = new Map<string, Fixture>();

export function session(kind: 'walk' | 'vehicle' | 'drone', seed: number, over: Partial<ScenarioSpec> = {}, name = `${kind}-${seed}`): Fixture {
  const key = JSON.stringify([kind, seed, over, name]);
  const hit = cache.get(key);
  if (hit) return hit;
  const cfg = loadConfig();
  const series = readFixCsv(scenarioCsv(simulate(defaultSpec(kind, seed, over))), `${name}.csv`, cfg);
  const f = { cfg, series, result: processSession(series, cfg, name) };
  cache.set(key, f);
  return f;
}

/**
 * A result with the optional IMU fields filled with smooth made-up values (the report only draws
 * them; the IMU pipeline has its own tests).
 */
export function withImu(r: SessionResult, name = `${r.name}-imu`): SessionResult {
  const N = r.N;
  const wave = (amp: number, periodSec: number, off = 0) => Float64Array.from(r.tSec, (t) => off + amp * Math.sin((2 * Math.PI * (t - r.tSec[0]!)) / periodSec));
  const heading = Float64Array.from(r.tSec, (t) => (((t - r.tSec[0]!) * 1.7) % 360 + 360) % 360);
  const c = (v: number) => new Float64Array(N).fill(v);
  return {
    ...r,
    name,
    attitudeDeg: { roll: wave(2, 40), pitch: wave(1, 55), heading },
    attitudeSdDeg: { roll: c(0.2), pitch: c(0.2), heading: wave(0.3, 90, 0.8) },
    biasEstimates: {
      accelMps2: [wave(0.01, 200, 0.05), wave(0.01, 250, -0.02), c(0.03)],
      accelSdMps2: [c(0.005), c(0.005), c(0.005)],
      gyroRadps: [c(1e-4), wave(2e-5, 300, -5e-5), c(2e-5)],
      gyroSdRadps: [c(1e-5), c(1e-5), c(1e-5)],
    },
  };
}

/**
 * A batch of four ok sessions (one long enough to be thinned, one IMU-aided) and one failed
 * session: the summary (each ok session lists its page among its outputs, as the batch writes
 * them), the report payloads and the overview data made from them.
 */
export function batch(): { summary: BatchSummary; payloads: Map<string, ReportPayload>; overviews: Map<string, OverviewData>; results: SessionResult[] } {
  const v = session('vehicle', 7, { durationSec: 300 }).result;
  const results = [v, session('walk', 3, { durationSec: 420 }).result, session('drone', 5, { durationSec: 300 }).result, withImu(v)];
  const entries = results.map((r) => okEntry(r, `${r.name}.csv`, [`${r.name}.track.csv`, sessionPageName(r.name)], 0.1));
  entries.push({ name: 'broken', input: 'broken.csv', status: 'failed', reason: 'broken.csv:1: no time column found', warnings: [] });
  const summary = buildSummary('0.0.0-test', 'logs', 'default', entries);
  // the drone session (1500 epochs at 5 Hz) is thinned for drawing
  const payloads = new Map(results.map((r) => [r.name, reportPayload(r, { maxPoints: r.name.startsWith('drone') ? 600 : 2000 })] as const));
  const overviews = new Map([...payloads].map(([k, p]) => [k, overviewData(p)] as const));
  return { summary, payloads, overviews, results };
}
