/**
 * The review report. The batch calls `reportPayload(result)` right after processing each session
 * (in its worker), draws the session's page from it (`sessionPageHtml`, written as
 * report/<stem>.html with the session's outputs) and keeps only the small `overviewData(payload)`;
 * at the end `writeReport(outDir, summary, overviewData)` writes the overview report.html.
 */
export { reportPayload, type ReportPayload, type PayloadOptions } from './payload.js';
export { writeReport, REPORT_FILE } from './write-report.js';
export { reportHtml } from './page.js';
export { sessionPageHtml, writeSessionPage, type SessionPageContext } from './session-page.js';
export { overviewData, OVERVIEW_DATA_VERSION, type OverviewData } from './overview-data.js';
export { sessionPageName, sessionPageHref, SESSION_PAGES_DIR } from './page-path.js';
export { REPORT_EXTENSIONS, type ReportExtension, type ExtensionData, type ExtensionChart } from './extensions.js';
