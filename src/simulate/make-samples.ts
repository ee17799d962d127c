/**
 * Regenerates sample-data/: `npm run sample-data`. Small invented scenarios, seeded, so the files
 * are the same on every machine.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { defaultSpec, scenarioCsv, simulate, DEFAULT_ERRORS } from './scenario.js';
import { defaultImuSpec, imuScenarioFixCsv, simulateImuScenario, writeImuCsv } from './imu.js';

const dir = process.argv[2] ?? 'sample-data';
mkdirSync(dir, { recursive: true });
const samples: Array<[string, Parameters<typeof defaultSpec>]> = [
  ['walking-survey', ['walk', 101, { durationSec: 900 }]],
  ['delivery-van', ['vehicle', 202, { durationSec: 900 }]],
  ['survey-drone', ['drone', 303, { durationSec: 300, rateHz: 2 }]],
];
for (const [name, args] of samples) {
  const sc = simulate(defaultSpec(...args));
  writeFileSync(join(dir, `${name}.csv`), scenarioCsv(sc));
  process.stdout.write(`${name}.csv: ${sc.fixes.length} fixes\n`);
}

// a test car with a 50 Hz MEMS IMU beside its fixes, and a 30 s outage under an invented bridge
const imuSc = simulateImuScenario(
  defaultImuSpec(404, { durationSec: 240, imuRateHz: 50, errors: { ...DEFAULT_ERRORS.vehicle, gaps: [[120, 30]], nullIslandRows: 1 } }),
);
writeFileSync(join(dir, 'urban-test-car.csv'), imuScenarioFixCsv(imuSc));
const samples50 = writeImuCsv(imuSc, join(dir, 'urban-test-car.imu.csv'));
process.stdout.write(`urban-test-car.csv: ${imuSc.fixes.length} fixes; urban-test-car.imu.csv: ${samples50} samples\n`);
