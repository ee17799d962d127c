/**
 * The review report. The batch calls `reportPayload(result)` right after processing each session
 * (in its worker; the payload is small and structured-clone-safe) and `writeReport(outDir, summary,
 * payloads)` once at the end, with the payloads keyed by session name.
 */
export { reportPayload, type ReportPayload, type PayloadOptions } from './payload.js';
export { writeReport, REPORT_FILE } from './write-report.js';
export { reportHtml } from './page.js';
export { REPORT_EXTENSIONS, type ReportExtension, type ExtensionData, type ExtensionChart } from './extensions.js';
