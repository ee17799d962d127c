/**
 * What `hindcast run` prints while it works: a progress bar on a terminal (sessions done / total,
 * the sessions in progress, rate, time left), one plain line per session otherwise (logs, CI),
 * nothing but failures with --quiet.
 */
import cliProgress from 'cli-progress';
import type { BatchEvent } from '../batch/run-batch.js';
import type { SessionSummary } from '../output/summary.js';

/** "45s", "3m05s", "2h07m". */
export function formatDuration(sec: number): string {
  if (!Number.isFinite(sec) || sec < 0) return '?';
  const s = Math.round(sec);
  if (s < 60) return `${s}s`;
  if (s < 3600) return `${Math.floor(s / 60)}m${String(s % 60).padStart(2, '0')}s`;
  return `${Math.floor(s / 3600)}h${String(Math.floor((s % 3600) / 60)).padStart(2, '0')}m`;
}

export interface ProgressFields {
  rate: string;
  eta: string;
  current: string;
}

/** The changing parts of the progress line, from counts and the time since the first session started. */
export function progressFields(done: number, total: number, elapsedSec: number, current: string[], width = 40): ProgressFields {
  const perSec = done > 0 && elapsedSec > 0 ? done / elapsedSec : NaN;
  const rate = Number.isFinite(perSec) ? (perSec >= 1 ? `${perSec.toFixed(1)}/s` : `${(perSec * 60).toFixed(1)}/min`) : '–';
  const eta = done >= total ? '0s' : Number.isFinite(perSec) ? formatDuration((total - done) / perSec) : '?';
  let cur = '';
  for (let i = 0; i < current.length; i++) {
    const more = current.length - i - 1;
    const next = (cur ? `${cur}, ` : '') + current[i];
    const tail = more > 0 ? ` +${more}` : '';
    if ((next + tail).length > width && cur) {
      cur += ` +${current.length - i}`;
      break;
    }
    cur = next;
  }
  return { rate, eta, current: cur };
}

/** One log line of a finished session. */
export function sessionLine(s: SessionSummary, done: number, total: number): string {
  const m = s.metrics;
  const what =
    s.status === 'ok'
      ? `ok  ${m!.fixCount} fixes, ${m!.outlierCount} flagged, ${m!.bridgedCount} bridged${s.elapsedSec !== undefined ? ` (${s.elapsedSec.toFixed(1)} s)` : ''}`
      : `FAILED  ${s.reason}`;
  return `[${done}/${total}] ${s.name}: ${what}`;
}

export interface ProgressSink {
  onEvent(e: BatchEvent): void;
  stop(): void;
}

export interface ProgressOptions {
  quiet: boolean;
  tty: boolean;
  out: NodeJS.WritableStream;
  err: NodeJS.WritableStream;
}

export function makeProgress(o: ProgressOptions): ProgressSink {
  // --quiet: the command prints the failures from the summary at the end
  if (o.quiet) return { onEvent() {}, stop() {} };
  if (!o.tty)
    return {
      onEvent(e) {
        if (e.type === 'plan') o.out.write(planLine(e) + '\n');
        else if (e.type === 'done') o.out.write(sessionLine(e.session, e.done, e.total) + '\n');
        else if (e.type === 'note') o.out.write(`${e.message}\n`);
      },
      stop() {},
    };
  return ttyProgress(o);
}

function planLine(e: Extract<BatchEvent, { type: 'plan' }>): string {
  const part = e.shard ? ` (shard ${e.shard.index}/${e.shard.count})` : '';
  return `${e.sessions} session(s)${part}: ${e.toProcess} to process, ${e.upToDate} up to date`;
}

function ttyProgress(o: ProgressOptions): ProgressSink {
  const multi = new cliProgress.MultiBar(
    {
      stream: o.err,
      format: '{bar} {value}/{total} sessions | {rate} | ETA {etaText} | {current}',
      barsize: 24,
      hideCursor: true,
      clearOnComplete: false,
      fps: 5,
      autopadding: true,
    },
    cliProgress.Presets.shades_classic,
  );
  let bar: cliProgress.SingleBar | undefined;
  const running = new Set<string>();
  let startMs = 0;
  let done = 0;
  let total = 0;
  const fields = (done: number, total: number) => {
    const f = progressFields(done, total, (performance.now() - startMs) / 1000, [...running]);
    return { rate: f.rate, etaText: f.eta, current: f.current };
  };
  return {
    onEvent(e) {
      if (e.type === 'plan') {
        multi.log(planLine(e) + '\n');
        if (e.toProcess > 0) {
          startMs = performance.now();
          total = e.toProcess;
          bar = multi.create(total, 0, fields(0, total));
        }
      } else if (e.type === 'start') {
        running.add(e.name);
        bar?.update(fields(done, total));
      } else if (e.type === 'done') {
        running.delete(e.session.name);
        done = e.done;
        if (e.session.status === 'failed') multi.log(`${e.session.name}: FAILED  ${e.session.reason}\n`);
        bar?.update(e.done, fields(e.done, e.total));
      } else if (e.type === 'note') multi.log(`${e.message}\n`);
    },
    stop() {
      multi.stop();
    },
  };
}
