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

/**
 * Where a session fell back from its normal processing, in words: the calibration on the profile's
 * values (too short a log), the IMU smoother restarting where a covariance lost definiteness, the
 * IMU review stopping before it converged.
 */
export function sessionFallbacks(s: SessionSummary): string[] {
  const out: string[] = [];
  const cal = s.info?.calibration as { status?: string; reason?: string } | undefined;
  if (cal?.status === 'fallback') out.push(`calibration fell back to the profile values${cal.reason ? ` (${cal.reason})` : ''}`);
  const imu = s.info?.imu as { smootherFallbacks?: number; reviewConverged?: boolean } | undefined;
  if (imu && (imu.smootherFallbacks ?? 0) > 0) out.push(`IMU smoother kept the filtered estimate at ${imu.smootherFallbacks} step(s)`);
  if (imu && imu.reviewConverged === false) out.push('IMU review stopped before it converged');
  return out;
}

/** "1 warning", "4 warnings". */
function count(n: number, what: string): string {
  return `${n} ${what}${n === 1 ? '' : 's'}`;
}

/** One log line of a finished session: counts, warnings and fallbacks (listed with `verbose`). */
export function sessionLine(s: SessionSummary, done: number, total: number, verbose = false): string {
  const m = s.metrics;
  const notes: string[] = [];
  if (s.warnings.length > 0) notes.push(count(s.warnings.length, 'warning'));
  const fb = s.status === 'ok' ? sessionFallbacks(s) : [];
  if (fb.length > 0) notes.push(fb.length === 1 && fb[0]!.startsWith('calibration') ? 'calibration fallback' : count(fb.length, 'fallback'));
  const what =
    s.status === 'ok'
      ? `ok  ${m!.fixCount} fixes, ${m!.outlierCount} flagged, ${m!.bridgedCount} bridged${notes.length ? `; ${notes.join(', ')}` : ''}${s.elapsedSec !== undefined ? ` (${s.elapsedSec.toFixed(1)} s)` : ''}`
      : `FAILED  ${s.reason}${s.stale ? `\n    the outputs of an earlier run are kept and now stale: ${(s.staleOutputs ?? []).join(', ')}` : ''}`;
  let line = `[${done}/${total}] ${s.name}: ${what}`;
  if (verbose) for (const d of sessionDetails(s)) line += `\n    ${d}`;
  return line;
}

/** The warnings and fallbacks of a session, one line each (for --verbose). */
export function sessionDetails(s: SessionSummary): string[] {
  const out: string[] = [];
  for (const f of s.status === 'ok' ? sessionFallbacks(s) : []) out.push(`fallback: ${f}`);
  for (const w of s.warnings) out.push(`warning ${w.code}: ${w.line !== undefined ? `${w.file}:${w.line}: ` : ''}${w.message}`);
  return out;
}

export interface ProgressSink {
  onEvent(e: BatchEvent): void;
  stop(): void;
}

export interface ProgressOptions {
  quiet: boolean;
  /** List every warning and fallback under its session's line (on a terminal too). */
  verbose?: boolean;
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
        else if (e.type === 'done') o.out.write(sessionLine(e.session, e.done, e.total, !!o.verbose) + '\n');
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
        if (o.verbose) multi.log(sessionLine(e.session, e.done, e.total, true) + '\n');
        else if (e.session.status === 'failed') multi.log(sessionLine(e.session, e.done, e.total).replace(/^\[\d+\/\d+\] /, '') + '\n');
        bar?.update(e.done, fields(e.done, e.total));
      } else if (e.type === 'note') multi.log(`${e.message}\n`);
    },
    stop() {
      multi.stop();
    },
  };
}

/**
 * The closing lines about warnings, fallbacks and stale outputs over the whole batch (sessions
 * found up to date included), each ending in a line break; empty when there is nothing to say.
 */
export function batchNotes(sessions: readonly SessionSummary[], verbose: boolean): string {
  const warned = sessions.filter((s) => s.warnings.length > 0);
  const fell = sessions.filter((s) => s.status === 'ok' && sessionFallbacks(s).length > 0);
  const stale = sessions.filter((s) => s.stale);
  const lines: string[] = [];
  const names = (l: SessionSummary[]) => l.slice(0, 5).map((s) => s.name).join(', ') + (l.length > 5 ? `, … (${l.length - 5} more)` : '');
  const hint = verbose ? '' : '; --verbose lists them';
  if (warned.length > 0)
    lines.push(`${warned.reduce((a, s) => a + s.warnings.length, 0)} warning(s) in ${warned.length} session(s): ${names(warned)} (summary.json${hint})`);
  if (fell.length > 0) lines.push(`fallbacks in ${fell.length} session(s): ${names(fell)}`);
  if (stale.length > 0) lines.push(`${stale.length} failed session(s) keep the outputs of an earlier run, now stale: ${names(stale)}`);
  return lines.map((l) => l + '\n').join('');
}
