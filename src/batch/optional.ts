/**
 * Modules of other stages that the batch uses when they are present: the HTML report
 * (`src/output/report/index.ts`) and the user-decisions reader (`src/input/decisions-csv.ts`).
 * A module that is absent from this build is simply not used; one that is present but fails to
 * load is an error (it is not hidden).
 */
import { existsSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import type { FixSeries } from '../input/fix-series.js';
import type { BatchSummary } from '../output/summary.js';
import type { SessionResult } from '../session/result.js';

export interface ReportModule {
  /** Small, structured-clone-safe data of one session, computed right after processing. */
  reportPayload(result: SessionResult): unknown;
  /** Called once at the end of a batch, after summary.json. */
  writeReport(outDir: string, summary: BatchSummary, payloads: Map<string, unknown>): Promise<void>;
}

export type DecisionsReader = (path: string, series: FixSeries) => Map<number, 'keep' | 'reject'> | Promise<Map<number, 'keep' | 'reject'>>;

/** Import `spec` (relative to this file) when its compiled or source file exists, else null. */
async function importIfPresent(spec: string): Promise<Record<string, unknown> | null> {
  const js = fileURLToPath(new URL(spec, import.meta.url));
  const ts = js.replace(/\.js$/, '.ts');
  if (!existsSync(js) && !(import.meta.url.endsWith('.ts') && existsSync(ts))) return null;
  return (await import(spec)) as Record<string, unknown>;
}

let reportModule: Promise<ReportModule | null> | undefined;
let decisionsModule: Promise<DecisionsReader | null> | undefined;

export function loadReportModule(): Promise<ReportModule | null> {
  reportModule ??= importIfPresent('../output/report/index.js').then((m) => {
    if (!m) return null;
    if (typeof m.reportPayload !== 'function' || typeof m.writeReport !== 'function')
      throw new Error('src/output/report/index.ts must export reportPayload() and writeReport()');
    return m as unknown as ReportModule;
  });
  return reportModule;
}

export function loadDecisionsReader(): Promise<DecisionsReader | null> {
  decisionsModule ??= importIfPresent('../input/decisions-csv.js').then((m) => {
    if (!m) return null;
    if (typeof m.readDecisions !== 'function') throw new Error('src/input/decisions-csv.ts must export readDecisions()');
    return m.readDecisions as DecisionsReader;
  });
  return decisionsModule;
}
