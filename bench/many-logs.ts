/**
 * The batches users hold: many ordinary logs, not one huge one. LOGS one-hour 1 Hz logs (seeded
 * simulator, each its own seed), processed by one worker thread without and with the report, and
 * the same folder processed again unchanged (with the report); beside them, in the same run and
 * alternating, the plain C program of the fixes-only job (../shared/anchors/plain-c-smoother.c,
 * compiled with `cc -O2` into a temporary folder) run on the same files in turn.
 * Targets: one worker without the report ≤ 8× the C program, with the report ≤ 10×; the unchanged
 * rerun ≤ 0.35× the first run; the same folder pooled (batch.pool 'folder') is timed beside them,
 * without a target. Best of REPEAT each. Where no C compiler or anchor source is found the ratios
 * are not printed and the part has no target.
 */
import { execFileSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { mkdtemp, mkdir, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { loadConfig } from '../src/config/load.js';
import { runBatch } from '../src/batch/run-batch.js';
import { defaultSpec, simulate } from '../src/simulate/scenario.js';
import type { BenchPart } from './part.js';

const LOGS = Number(process.env.HC_MANY_LOGS ?? 40);
const DURATION_SEC = 3600;
const REPEAT = 2;
const TARGET_NO_REPORT = 8;
const TARGET_REPORT = 10;
const TARGET_RERUN = 0.35;

/** The anchor's source: beside the repository in ../shared/anchors (dist/bench/ → the root's parent). */
function anchorSource(): string {
  const root = join(dirname(fileURLToPath(import.meta.url)), '..', '..');
  return join(root, '..', 'shared', 'anchors', 'plain-c-smoother.c');
}

/** A log as the anchor reads it (Unix seconds first) and Hindcast reads it too. */
function unixCsv(seed: number): string {
  const sc = simulate(defaultSpec('vehicle', seed, { durationSec: DURATION_SEC }));
  const rows = ['time,lat,lon,height,hdop,sats'];
  for (const f of sc.fixes) rows.push(`${f.tSec.toFixed(3)},${f.latDeg.toFixed(9)},${f.lonDeg.toFixed(9)},${f.heightM.toFixed(3)},${f.hdop.toFixed(1)},${f.sats}`);
  return rows.join('\n') + '\n';
}

async function timeHindcast(input: string, out: string, report: boolean, force: boolean, pool = false): Promise<number> {
  const config = loadConfig({ overrides: { output: { report }, ...(pool ? { batch: { pool: 'folder' } } : {}) } });
  const t0 = performance.now();
  const r = await runBatch({ input, out, config, jobs: 1, inProcess: false, force });
  const sec = (performance.now() - t0) / 1000;
  if (r.summary.totals.failed) throw new Error(`benchmark batch failed: ${r.summary.totals.failed} session(s)`);
  return sec;
}

function timeAnchor(bin: string, files: string[], outDir: string): number {
  const t0 = performance.now();
  for (const f of files) execFileSync(bin, [f, join(outDir, 'c.csv')], { stdio: 'ignore' });
  return (performance.now() - t0) / 1000;
}

export const manyLogsBench: BenchPart = {
  name: `many ordinary logs: ${LOGS} one-hour 1 Hz logs, one worker, against the plain C program`,
  async run() {
    const root = await mkdtemp(join(tmpdir(), 'hindcast-many-'));
    try {
      const input = join(root, 'in');
      await mkdir(input);
      const files: string[] = [];
      for (let i = 0; i < LOGS; i++) {
        const f = join(input, `log${String(i).padStart(2, '0')}.csv`);
        await writeFile(f, unixCsv(9000 + i));
        files.push(f);
      }
      const src = anchorSource();
      let bin: string | null = join(root, 'plain-c-smoother');
      try {
        if (!existsSync(src)) throw new Error('no anchor');
        execFileSync('cc', ['-O2', '-o', bin, src, '-lm'], { stdio: 'ignore' });
      } catch {
        bin = null;
      }
      let c = Infinity, noReport = Infinity, report = Infinity, rerun = Infinity, pooled = Infinity;
      for (let i = 0; i < REPEAT; i++) {
        if (bin) c = Math.min(c, timeAnchor(bin, files, root));
        noReport = Math.min(noReport, await timeHindcast(input, join(root, `plain${i}`), false, true));
        const out = join(root, `rep${i}`);
        report = Math.min(report, await timeHindcast(input, out, true, true));
        rerun = Math.min(rerun, await timeHindcast(input, out, true, false));
        pooled = Math.min(pooled, await timeHindcast(input, join(root, `pool${i}`), false, true, true));
      }
      const fixes = LOGS * DURATION_SEC;
      const lines = [
        `${LOGS} logs × ${DURATION_SEC} fixes, best of ${REPEAT}, alternating`,
        `Hindcast, 1 worker, --no-report: ${noReport.toFixed(2)} s (${Math.round(fixes / noReport)} fixes/s)`,
        `Hindcast, 1 worker, with report: ${report.toFixed(2)} s`,
        `unchanged rerun with report: ${rerun.toFixed(2)} s = ${(rerun / report).toFixed(2)}× the first run (target ≤ ${TARGET_RERUN}×)`,
        `pooled (--pool folder: one calibration for the 40, drawn from one receiver), --no-report: ${pooled.toFixed(2)} s (no target)`,
      ];
      if (!bin) {
        lines.push(`plain C program: not measured (no C compiler or ${src})`);
        return { ok: rerun / report <= TARGET_RERUN, lines };
      }
      lines.push(
        `plain C program on the same files in turn: ${c.toFixed(2)} s`,
        `ratio without report: ${(noReport / c).toFixed(1)}× (target ≤ ${TARGET_NO_REPORT}×); with report: ${(report / c).toFixed(1)}× (target ≤ ${TARGET_REPORT}×)`,
      );
      return { ok: noReport / c <= TARGET_NO_REPORT && report / c <= TARGET_REPORT && rerun / report <= TARGET_RERUN, lines };
    } finally {
      await rm(root, { recursive: true, force: true });
    }
  },
};

// `node dist/bench/many-logs.js` runs this part alone
if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  const r = await manyLogsBench.run();
  for (const l of r.lines) console.log(l);
  console.log(r.ok === null ? '(no target)' : r.ok ? 'target met' : 'TARGET MISSED');
}
