/**
 * Writing report.html into the output folder, atomically (temporary name, then rename), once at
 * the end of a batch.
 */
import { join } from 'node:path';
import { writeFileAtomic } from '../../batch/atomic-write.js';
import type { BatchSummary } from '../summary.js';
import { reportHtml } from './page.js';
import type { ReportPayload } from './payload.js';

export const REPORT_FILE = 'report.html';

export async function writeReport(outDir: string, summary: BatchSummary, payloads: Map<string, ReportPayload>): Promise<void> {
  await writeFileAtomic(join(outDir, REPORT_FILE), await reportHtml(summary, payloads));
}
