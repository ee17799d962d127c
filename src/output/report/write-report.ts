/**
 * Writing the overview report.html into the output folder, atomically (temporary name, then
 * rename), once at the end of a batch. It draws nothing, so the chart library is not loaded here
 * (a session's page: session-page.ts).
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../../io/atomic-write.js';
import type { BatchSummary } from '../summary.js';
import { reportHtml } from './page.js';
import type { OverviewData } from './overview-data.js';
import { REPORT_FILE } from './page-path.js';

export { REPORT_FILE };

export async function writeReport(outDir: string, summary: BatchSummary, data: ReadonlyMap<string, OverviewData>): Promise<void> {
  await writeFileAtomic(join(outDir, REPORT_FILE), reportHtml(summary, data));
}
