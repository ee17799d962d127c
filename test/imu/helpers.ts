/** Shared test helpers: a simulated IMU session on disk and scoring against the truth. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadConfig } from '../../src/config/load.js';
import type { HindcastConfig } from '../../src/config/schema.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import type { FixSeries } from '../../src/input/fix-series.js';
import { STATUS, type SessionResult } from '../../src/session/result/result.js';
import { defaultImuSpec, imuScenarioFixCsv, simulateImuScenario, writeImuCsv, type ImuScenario, type ImuScenarioSpec } from '../../src/simulate/imu.js';

export interface ImuCase {
  sc: ImuScenario;
  series: FixSeries;
  imuPath: string;
  cfg: HindcastConfig;
}

// the cases' folders go when the test process ends (vitest runs each file in a forked process)
const made: string[] = [];
process.once('exit', () => {
  for (const d of made) rmSync(d, { recursive: true, force: true });
});

export function makeImuCase(seed: number, over: Partial<ImuScenarioSpec> = {}, overrides: Record<string, unknown> = {}, profile = 'vehicle'): ImuCase {
  const sc = simulateImuScenario(defaultImuSpec(seed, over));
  const dir = mkdtempSync(join(tmpdir(), 'hindcast-imu-'));
  made.push(dir);
  const cfg = loadConfig({ profile, overrides });
  const fixPath = join(dir, 'drive.csv');
  writeFileSync(fixPath, imuScenarioFixCsv(sc));
  const series = readFixCsv(imuScenarioFixCsv(sc), 'drive.csv', cfg);
  const imuPath = join(dir, 'drive.imu.csv');
  writeImuCsv(sc, imuPath);
  return { sc, series, imuPath, cfg };
}

export interface Score {
  n: number;
  rmseH: number;
  coverage95: number;
  maxH: number;
}

const CHI2_2_95 = -2 * Math.log(0.05);

/** Horizontal error of epochs with the given statuses against the antenna truth, and the share inside the 95% ellipse. */
export function score(r: SessionResult, sc: ImuScenario, statuses: number[], filter?: (j: number) => boolean): Score {
  let n = 0, s2 = 0, inside = 0, maxH = 0;
  for (let j = 0; j < r.N; j++) {
    if (!statuses.includes(r.status[j]!)) continue;
    if (filter && !filter(j)) continue;
    const [e, nn] = sc.frame.geodeticToEnu(r.latDeg[j]!, r.lonDeg[j]!, Number.isFinite(r.heightM[j]!) ? r.heightM[j]! : sc.spec.origin[2]);
    const tr = sc.antennaAt(r.tSec[j]!);
    const de = e - tr[0], dn = nn - tr[1];
    const vee = r.sdEnu[0][j]! ** 2, vnn = r.sdEnu[1][j]! ** 2, ven = r.covEN[j]!;
    const det = vee * vnn - ven * ven;
    const m2 = (vnn * de * de - 2 * ven * de * dn + vee * dn * dn) / det;
    if (m2 <= CHI2_2_95) inside++;
    const h2 = de * de + dn * dn;
    s2 += h2;
    maxH = Math.max(maxH, Math.sqrt(h2));
    n++;
  }
  return { n, rmseH: Math.sqrt(s2 / Math.max(n, 1)), coverage95: inside / Math.max(n, 1), maxH };
}

export const BRIDGED = [STATUS.bridged];
export const KEPT = [STATUS.kept, STATUS.userKept];
