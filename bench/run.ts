/**
 * `npm run bench`: every benchmark part in turn. A part prints its figures and says whether its
 * target was met; the run exits 1 when any target was missed. To add a part, export a BenchPart
 * (bench/part.ts) from its file and add it to PARTS. Parts that measure the process's peak
 * memory (a high-water mark) go first.
 */
import { batchBench } from './batch.js';
import { floorsBench } from './floors.js';
import { imuBench } from './imu.js';
import { manyLogsBench } from './many-logs.js';
import { pipelineBench } from './pipeline.js';
import { reportOverviewBench } from './report-overview.js';
import { surveyBench } from './survey.js';
import type { BenchPart } from './part.js';

// floors after the pipeline part: it prices the pipeline's 1M run (bench/results.json)
const PARTS: BenchPart[] = [imuBench, pipelineBench, floorsBench, batchBench, manyLogsBench, surveyBench, reportOverviewBench];

let failed = 0;
let targets = 0;
for (const part of PARTS) {
  process.stdout.write(`## ${part.name}\n`);
  const r = await part.run();
  for (const l of r.lines) process.stdout.write(`${l}\n`);
  if (r.ok === null) {
    process.stdout.write('(no target)\n\n');
    continue;
  }
  targets++;
  process.stdout.write(`${r.ok ? 'target met' : 'TARGET MISSED'}\n\n`);
  if (!r.ok) failed++;
}
process.stdout.write(`${targets - failed} of ${targets} benchmark targets met\n`);
process.exitCode = failed > 0 ? 1 : 0;
