/**
 * Where sessions run: on a pool of worker threads (piscina), one session per thread at a time, or
 * in-process for library callers and one-job runs. A worker that dies (a crash, running out of
 * memory) fails only its session; the pool starts a fresh thread for the next one.
 */
import { existsSync, readFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { Piscina } from 'piscina';
import { failedEntry, runPoolTask, runSessionTask, type PoolTask, type SessionOutcome, type SessionTask } from './session-task.js';

export interface SessionRunner {
  /** Never rejects: a crash comes back as a failed outcome. */
  run(task: SessionTask): Promise<SessionOutcome>;
  /** A group calibrated together: one outcome a member, in order; never rejects either. */
  runPool(task: PoolTask): Promise<SessionOutcome[]>;
  close(): Promise<void>;
  readonly kind: 'threads' | 'in-process';
}

/** The package root (the folder with hindcast's package.json), found upwards from this file. */
export function packageRoot(): string {
  let dir = dirname(fileURLToPath(import.meta.url));
  for (let i = 0; i < 6; i++) {
    const p = join(dir, 'package.json');
    if (existsSync(p)) {
      try {
        if ((JSON.parse(readFileSync(p, 'utf8')) as { name?: string }).name === 'hindcast') return dir;
      } catch {
        /* keep looking */
      }
    }
    dir = dirname(dir);
  }
  throw new Error('cannot find the hindcast package root');
}

/** The compiled worker entry (dist/src/batch/worker.js), also when this file runs from the TS sources. */
export function defaultWorkerFile(): string {
  const here = fileURLToPath(import.meta.url);
  if (here.endsWith('.js')) return join(dirname(here), 'worker.js');
  return join(packageRoot(), 'dist', 'src', 'batch', 'worker.js');
}

export function inProcessRunner(): SessionRunner {
  return {
    kind: 'in-process',
    run: runSessionTask,
    async runPool(task) {
      try {
        return await runPoolTask(task);
      } catch (e) {
        return poolFailed(task, `internal error: ${(e as Error)?.message ?? String(e)}`);
      }
    },
    close: async () => undefined,
  };
}

/** Every member of a pool failed for one reason (its worker stopped). */
function poolFailed(task: PoolTask, reason: string): SessionOutcome[] {
  return task.tasks.map((t) => ({ summary: failedEntry(t.name, t.relPath, reason), outputs: [], settled: false }));
}

export interface ThreadOptions {
  threads: number;
  /** Worker entry module (a test may pass its own wrapper); default: the compiled worker. */
  workerFile?: string;
  /** Heap limit of each worker (MB); a session above it fails alone. */
  workerMemoryMb?: number;
}

export function threadRunner(o: ThreadOptions): SessionRunner {
  const file = o.workerFile ?? defaultWorkerFile();
  if (!existsSync(file)) throw new Error(`the compiled worker ${file} is missing: run "npm run build" (or use one job in-process)`);
  const pool = new Piscina({
    filename: pathToFileURL(file).href,
    minThreads: o.threads,
    maxThreads: o.threads,
    concurrentTasksPerWorker: 1,
    idleTimeout: 60_000,
    ...(o.workerMemoryMb ? { resourceLimits: { maxOldGenerationSizeMb: o.workerMemoryMb } } : {}),
  });
  return {
    kind: 'threads',
    async run(task) {
      try {
        return (await pool.run(task)) as SessionOutcome;
      } catch (e) {
        const msg = (e as Error)?.message ?? String(e);
        return { summary: failedEntry(task.name, task.relPath, `worker stopped: ${msg}`), outputs: [], settled: false };
      }
    },
    async runPool(task) {
      try {
        return (await pool.run(task)) as SessionOutcome[];
      } catch (e) {
        return poolFailed(task, `worker stopped: ${(e as Error)?.message ?? String(e)}`);
      }
    },
    close: () => pool.destroy(),
  };
}
