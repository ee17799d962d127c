/**
 * Batch engine benchmark: a batch of 24 equal sessions (one seeded simulated log, copied) on one
 * worker thread and on two; target: two workers at least 1.6× faster than one. The two
 * settings are timed in turn REPEAT times (every session redone, report off) and the best time of
 * each is kept, so a moment of load from other programs on the machine counts less. The figure
 * means something only on an otherwise idle machine with at least two cores. Sessions are two
 * hours of 1 Hz fixes (HC_BATCH_SEC overrides): each worker thread first spends about a second
 * loading and warming up (JIT, whose background compiler also competes for the cores), a fixed cost
 * that short sessions let dominate: a half-hour session is 0.22 s of work (5.2–5.5 s for 24 on one
 * worker), and with such sessions the speed-up read 0.98–1.12×; two-hour sessions are ~0.55 s each.
 */
import { availableParallelism, loadavg, tmpdir } from 'node:os';
import { mkdtemp, mkdir, rm, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { loadConfig } from '../src/config/load.js';
import { runBatch } from '../src/batch/run-batch.js';
import { defaultSpec, scenarioCsv, simulate } from '../src/simulate/scenario.js';
import { Worker } from 'node:worker_threads';
import type { BenchPart } from './part.js';

const SESSIONS = 24;
const DURATION_SEC = Number(process.env.HC_BATCH_SEC ?? 7200);
const REPEAT = 2;
const TARGET = 1.6;
/** The kernel ceiling's segment (10 Hz epochs) and repetitions: ~1 s a thread. */
const KERNEL_EPOCHS = 200_000;
const KERNEL_REPS = 12;

/** Wall time and CPU time (s, every thread of the process: workers, V8's compiler and collector threads, the main thread) of one batch. */
async function timeBatch(input: string, out: string, jobs: number): Promise<{ sec: number; cpuSec: number }> {
  const config = loadConfig({ overrides: { output: { report: false } } });
  const c0 = process.cpuUsage();
  const t0 = performance.now();
  const r = await runBatch({ input, out, config, jobs, inProcess: false, force: true });
  const sec = (performance.now() - t0) / 1000;
  const c = process.cpuUsage(c0);
  if (r.summary.totals.ok !== SESSIONS) throw new Error(`benchmark batch failed: ${r.summary.totals.failed} session(s)`);
  return { sec, cpuSec: (c.user + c.system) / 1e6 };
}

/** Wall time (s) of `threads` threads each running the same fixed integer loop. */
function spin(threads: number): Promise<number> {
  const code = 'let x = 0; for (let i = 0; i < 1e9; i++) x += i & 1; require("node:worker_threads").parentPort.postMessage(x);';
  return new Promise((done, fail) => {
    const t0 = performance.now();
    let left = threads;
    for (let i = 0; i < threads; i++) {
      const w = new Worker(code, { eval: true });
      w.once('error', fail);
      w.once('message', () => {
        void w.terminate();
        if (--left === 0) done((performance.now() - t0) / 1000);
      });
    }
  });
}

/**
 * Loop time (s) of `threads` threads each running the filter and smoother kernel loop
 * (bench/kernel-worker.ts), started together once every thread is set up: the slowest thread's.
 */
export function kernelThreads(threads: number): Promise<number> {
  const file = new URL('./kernel-worker.js', import.meta.url);
  return new Promise((done, fail) => {
    const workers: Worker[] = [];
    let ready = 0;
    let left = threads;
    let slowest = 0;
    for (let i = 0; i < threads; i++) {
      const w = new Worker(file, { workerData: { kernelCeiling: true, N: KERNEL_EPOCHS, reps: KERNEL_REPS } });
      workers.push(w);
      w.once('error', fail);
      w.on('message', (m: unknown) => {
        if (m === 'ready') {
          if (++ready === threads) for (const x of workers) x.postMessage('go');
          return;
        }
        slowest = Math.max(slowest, m as number);
        void w.terminate();
        if (--left === 0) done(slowest);
      });
    }
  });
}

/**
 * What the machine gives two threads of the session's own numerics: the speed-up of the filter and
 * smoother kernel alone (memory already touched, no I/O, no allocation), 2 threads against 1, best
 * of REPEAT. Measured: 1.74–2.17× (ten alternating runs, most 1.8–1.97×),
 * so the numerics themselves scale; what holds the batch back is the CPU time printed beside it
 * (one worker already keeps ~1.26 cores busy, and two workers spend ~1.15× the CPU on the same work).
 */
export function kernelCeiling(): Promise<number> {
  return twoThreadSpeedup(kernelThreads);
}

/** What the machine gives two threads at the moment: the speed-up of a pure CPU loop (ideal 2). */
function machineCeiling(): Promise<number> {
  return twoThreadSpeedup(spin);
}

/** 2 × (best time of 1 thread) / (best time of 2 threads each doing the same work), REPEAT runs alternating. */
async function twoThreadSpeedup(run: (threads: number) => Promise<number>): Promise<number> {
  let one = Infinity;
  let two = Infinity;
  for (let i = 0; i < REPEAT; i++) {
    one = Math.min(one, await run(1));
    two = Math.min(two, await run(2));
  }
  return (2 * one) / two;
}

export const batchBench: BenchPart = {
  name: `batch: ${SESSIONS} equal sessions, 1 vs 2 worker threads`,
  async run() {
    const root = await mkdtemp(join(tmpdir(), 'hindcast-bench-'));
    try {
      const input = join(root, 'in');
      await mkdir(input);
      const sc = simulate(defaultSpec('vehicle', 4242, { durationSec: DURATION_SEC }));
      const csv = scenarioCsv(sc);
      for (let i = 0; i < SESSIONS; i++) await writeFile(join(input, `run${String(i).padStart(2, '0')}.csv`), csv);
      const loadBefore = loadavg()[0]!;
      let one = { sec: Infinity, cpuSec: NaN };
      let two = { sec: Infinity, cpuSec: NaN };
      for (let i = 0; i < REPEAT; i++) {
        const a = await timeBatch(input, join(root, 'out1'), 1);
        if (a.sec < one.sec) one = a;
        const b = await timeBatch(input, join(root, 'out2'), 2);
        if (b.sec < two.sec) two = b;
      }
      const speedup = one.sec / two.sec;
      // one worker already keeps more than one core busy (V8 compiles and collects garbage on threads
      // of its own), so two workers on 2 cores can be at most 2 / (its cores in use) faster
      const coresOne = one.cpuSec / one.sec;
      const coresTwo = two.cpuSec / two.sec;
      const ceiling = await machineCeiling();
      const kCeiling = await kernelCeiling();
      return {
        ok: speedup >= TARGET,
        lines: [
          `machine: ${availableParallelism()} cores, load average ${loadBefore.toFixed(2)} before / ${loadavg()[0]!.toFixed(2)} after (other programs' load lowers the speed-up)`,
          `${SESSIONS} sessions × ${sc.fixes.length} fixes; best of ${REPEAT} runs each`,
          `1 worker:  ${one.sec.toFixed(2)} s (${(SESSIONS / one.sec).toFixed(2)} sessions/s), CPU ${one.cpuSec.toFixed(2)} s = ${coresOne.toFixed(2)} cores in use`,
          `2 workers: ${two.sec.toFixed(2)} s (${(SESSIONS / two.sec).toFixed(2)} sessions/s), CPU ${two.cpuSec.toFixed(2)} s = ${coresTwo.toFixed(2)} cores in use (the same work took ${(two.cpuSec / one.cpuSec).toFixed(2)}× the CPU time)`,
          `speed-up:  ${speedup.toFixed(2)}× (target ≥ ${TARGET}×); one worker's ${coresOne.toFixed(2)} cores in use leave at most ${(availableParallelism() / coresOne).toFixed(2)}× on ${availableParallelism()} cores`,
          `for scale: a pure CPU loop on 2 threads vs 1 ran ${ceiling.toFixed(2)}× as fast just after (2 on an idle 2-core machine)`,
          `and the filter + smoother kernel alone on 2 threads vs 1 (no I/O, no allocation): ${kCeiling.toFixed(2)}× (1.74–2.17× in ten alternating runs on a quiet machine; the batch's CPU time above is what holds it back)`,
        ],
      };
    } finally {
      await rm(root, { recursive: true, force: true });
    }
  },
};
