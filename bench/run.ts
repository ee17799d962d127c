/**
 * `npm run bench`: every benchmark part in turn. A part prints its figures and says whether its
 * target was met; the run exits 1 when any target was missed. To add a part, export a BenchPart
 * (bench/part.ts) from its file and add it to PARTS. Parts that measure the process's peak
 * memory (a high-water mark) go first.
 */
import { batchBench } from './batch.js';
import { imuBench } from './imu.js';
import { pipelineBench } from './pipeline.js';
import type { BenchPart } from './part.js';

const PARTS: BenchPart[] = [imuBench, pipelineBench, batchBench];

let failed = 0;
for (const part of PARTS) {
  process.stdout.write(`## ${part.name}\n`);
  const r = await part.run();
  for (const l of r.lines) process.stdout.write(`${l}\n`);
  process.stdout.write(`${r.ok ? 'target met' : 'TARGET MISSED'}\n\n`);
  if (!r.ok) failed++;
}
process.stdout.write(`${PARTS.length - failed} of ${PARTS.length} benchmark targets met\n`);
process.exitCode = failed > 0 ? 1 : 0;
