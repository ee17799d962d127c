/**
 * The overview report.html of a big batch: SESSIONS sessions (500; HC_OVERVIEW_SESSIONS overrides)
 * made from a few seeded one-hour simulator logs, each processed once, whose summary entries and
 * overview data (thumbnail and row figures, output/report/overview-data.ts) are repeated under
 * distinct names, with one failed session in ten. The overview data is saved per session as the
 * batch saves it, and report.html is written the way the batch's last step writes it (buildReport:
 * read every session's overview data, write the page). Target: report.html ≤ 5 MB. The time is
 * printed (no target: it reads 500 small files and draws nothing).
 */
import { mkdtemp, rm, stat } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { loadConfig } from '../src/config/load.js';
import { buildReport } from '../src/batch/run-batch.js';
import { writeOverviewData } from '../src/batch/manifest.js';
import { readFixCsv } from '../src/input/csv-fixes.js';
import { processSession } from '../src/session/process-session.js';
import { overviewData } from '../src/output/report/overview-data.js';
import { sessionPageName } from '../src/output/report/page-path.js';
import { reportPayload } from '../src/output/report/payload.js';
import { buildSummary, okEntry, type SessionSummary } from '../src/output/summary.js';
import { defaultSpec, scenarioCsv, simulate } from '../src/simulate/scenario.js';
import { REPORT_FILE } from '../src/output/report/page-path.js';
import { VERSION } from '../src/version.js';
import type { BenchPart } from './part.js';
import { mergeResults } from './results.js';

const SESSIONS = Number(process.env.HC_OVERVIEW_SESSIONS ?? 500);
const DISTINCT = 4;
const DURATION_SEC = 3600;
const TARGET_BYTES = 5_000_000;

export const reportOverviewBench: BenchPart = {
  name: `report.html of ${SESSIONS} sessions (the overview: table, thumbnails, links)`,
  async run() {
    const out = await mkdtemp(join(tmpdir(), 'hindcast-overview-'));
    try {
      const cfg = loadConfig();
      const kinds = ['vehicle', 'walk', 'drone', 'vehicle'] as const;
      const made = [];
      for (let i = 0; i < DISTINCT; i++) {
        const name = `src${i}`;
        const series = readFixCsv(scenarioCsv(simulate(defaultSpec(kinds[i]!, 7100 + i, { durationSec: kinds[i] === 'drone' ? 900 : DURATION_SEC }))), `${name}.csv`, cfg);
        const r = processSession(series, cfg, name);
        made.push({ r, data: overviewData(reportPayload(r, { maxPoints: cfg.output.reportMaxPoints })) });
      }
      const entries: SessionSummary[] = [];
      const t0 = performance.now();
      for (let i = 0; i < SESSIONS; i++) {
        const name = `day${String(Math.floor(i / 50)).padStart(2, '0')}/log${String(i).padStart(3, '0')}`;
        if (i % 10 === 9) {
          entries.push({ name, input: `${name}.csv`, status: 'failed', reason: `${name}.csv:1: no time column found`, warnings: [] });
          continue;
        }
        const m = made[i % DISTINCT]!;
        const e = okEntry({ ...m.r, name }, `${name}.csv`, [`${name}.track.csv`, `${name}.outliers.csv`, `${name}.geojson`, sessionPageName(name)], 1);
        entries.push(e);
        await writeOverviewData(out, name, { ...m.data, name, page: sessionPageName(name) });
      }
      const tSave = (performance.now() - t0) / 1000;
      const summary = buildSummary(VERSION, 'logs', cfg.profile, entries);
      const t1 = performance.now();
      const err = await buildReport(out, summary);
      const tWrite = (performance.now() - t1) / 1000;
      if (err) throw new Error(`the overview could not be written: ${err}`);
      const bytes = (await stat(join(out, REPORT_FILE))).size;
      const ok = bytes <= TARGET_BYTES;
      mergeResults({ reportOverview: { sessions: SESSIONS, bytes, bytesPerSession: Math.round(bytes / SESSIONS), saveSec: +tSave.toFixed(2), writeSec: +tWrite.toFixed(2), targetBytes: TARGET_BYTES, met: ok } });
      return {
        lines: [
          `report.html of ${SESSIONS} sessions (${entries.filter((e) => e.status === 'failed').length} failed): ${(bytes / 1e6).toFixed(2)} MB (${Math.round(bytes / SESSIONS)} bytes a session); target ≤ ${(TARGET_BYTES / 1e6).toFixed(0)} MB`,
          `saving the overview data of the ok sessions: ${tSave.toFixed(2)} s; reading it all and writing report.html: ${tWrite.toFixed(2)} s`,
        ],
        ok,
      };
    } finally {
      await rm(out, { recursive: true, force: true });
    }
  },
};

// run alone: node dist/bench/report-overview.js
if (import.meta.url === `file://${process.argv[1]}`) {
  const r = await reportOverviewBench.run();
  for (const l of r.lines) console.log(l);
  console.log(r.ok ? 'target met' : 'TARGET MISSED');
}
