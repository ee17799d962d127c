/**
 * Worker-thread body of the batch benchmark's two-thread ceiling (bench/batch.ts): the fixes-only
 * filter and smoother (forwardFilter + smoothInPlace, the numerics that most of a session's time
 * goes to) over a synthetic 10 Hz segment, repeated. Data from a seeded generator (a random walk
 * with white noise), so every run does the same arithmetic; it posts its wall time (s).
 */
import { parentPort, workerData } from 'node:worker_threads';
import { loadConfig } from '../src/config/load.js';
import { axisParamsFromConfig, buildAxisModels, filterOptions } from '../src/session/prepare/axis-params.js';
import { forwardFilter, type SegmentData } from '../src/estimation/track-filter.js';
import { smoothInPlace } from '../src/estimation/track-smoother.js';

/** Park–Miller minimal standard generator (Park & Miller 1988), mapped to (0, 1). */
function lcg(seed: number): () => number {
  let s = seed % 2147483647 || 1;
  return () => (s = (s * 16807) % 2147483647) / 2147483647;
}

export function syntheticSegment(N: number, seed: number): SegmentData {
  const u = lcg(seed);
  const g = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
  const tSec = new Float64Array(N);
  const z = [new Float64Array(N), new Float64Array(N), new Float64Array(N)];
  const r = [new Float64Array(N).fill(2.25), new Float64Array(N).fill(2.25), new Float64Array(N).fill(9)];
  const pos = [0, 0, 0];
  const vel = [10, 0, 0];
  for (let k = 0; k < N; k++) {
    tSec[k] = k * 0.1;
    for (let a = 0; a < 3; a++) {
      vel[a]! += 0.05 * g();
      pos[a]! += 0.1 * vel[a]!;
      z[a]![k] = pos[a]! + Math.sqrt(r[a]![k]!) * g();
    }
  }
  return { N, tSec, z, r, use: new Uint8Array(N).fill(1) };
}

/** Set up (data, models, a first pass that touches the history), then a function timing `reps` passes. */
export function kernelLoop(N: number): (reps: number) => number {
  const cfg = loadConfig({ profile: 'vehicle' });
  const p = axisParamsFromConfig(cfg);
  const models = buildAxisModels(p, true);
  const opt = filterOptions(cfg, p);
  const data = syntheticSegment(N, 8081);
  let h = forwardFilter(models, data, opt);
  smoothInPlace(models, data, h, opt.qScale);
  return (reps) => {
    const t0 = performance.now();
    for (let i = 0; i < reps; i++) {
      h.extraQ.clear();
      h.reacquired.length = 0;
      h = forwardFilter(models, data, opt, h);
      smoothInPlace(models, data, h, opt.qScale);
    }
    return (performance.now() - t0) / 1000;
  };
}

// set up, say 'ready', run on 'go' (so the threads' loops start together), post the loop's time
if (parentPort && workerData?.kernelCeiling) {
  const port = parentPort;
  const { N, reps } = workerData as { N: number; reps: number };
  const loop = kernelLoop(N);
  loop(1); // JIT warm-up
  port.once('message', () => port.postMessage(loop(reps)));
  port.postMessage('ready');
}
