/**
 * `npm run bench`: every benchmark part in turn. A part prints its figures and says whether its
 * target was met; the run exits 1 when any target was missed. To add a part, export a BenchPart
 * (bench/part.ts) from its file and add it to PARTS. Parts that measure the process's peak
 * memory (a high-water mark) go first.
 */
import { batchBench } from './batch.js';
import { runImuBench } from './imu.js';
import { pipelineBench } from './pipeline.js';
import type { BenchPart } from './part.js';

const imuBench: BenchPart = {
  name: 'imu: IMU-aided session, one hour of 100 Hz IMU with 10 Hz fixes',
  async run() {
    const r = await runImuBench();
    return {
      ok: r.pass,
      lines: [
        `${r.durationSec} s, ${r.imuSamples} IMU samples, ${r.fixes} fixes, ${r.epochs} epochs`,
        `time: ${r.processSec.toFixed(2)} s (target < ${r.targetSec} s)`,
        `peak RSS: ${r.peakRssMB.toFixed(0)} MB of the processing process (target < ${r.targetMB} MB)`,
      ],
    };
  },
};

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
