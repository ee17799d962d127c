/**
 * Regenerates sample-data/: `npm run sample-data`. Small invented scenarios, seeded, so the files
 * are the same on every machine.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { defaultSpec, scenarioCsv, simulate } from './scenario.js';

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
