/**
 * report.html, the overview of a batch: the cautions, the batch in one line, the sortable table of
 * sessions (each with a track thumbnail and a link to its own page, report/<stem>.html, drawn by
 * the worker that processed it: session-page.ts), and the reasons of the failed sessions. Nothing
 * is drawn here, so its size and time grow only by a small row a session.
 */
import type { BatchSummary } from '../summary.js';
import { esc } from './html-text.js';
import { OVERVIEW_DATA_VERSION, type OverviewData } from './overview-data.js';
import { overviewTable } from './overview-table.js';
import { reportPage } from './page-shell.js';
import { SORT_SCRIPT } from './sort-script.js';

export { REPORT_CSP } from './page-shell.js';

function failures(summary: BatchSummary): string {
  const failed = summary.sessions.filter((s) => s.status === 'failed');
  if (failed.length === 0) return '';
  const items = failed
    .map((s) => {
      const w = s.warnings.length ? ` (${s.warnings.length} warning${s.warnings.length > 1 ? 's' : ''} in summary.json)` : '';
      return `<li data-session="${esc(s.name)}"><strong>${esc(s.name)}</strong> (<code>${esc(s.input)}</code>): ${esc(s.reason ?? 'unknown reason')}${w}</li>`;
    })
    .join('\n');
  return `<h2 id="failed-heading">Failed sessions (${failed.length})</h2>
<ul class="failures">
${items}
</ul>`;
}

/** @param data the overview data of the ok sessions, by session name (data of another version is left out) */
export function reportHtml(summary: BatchSummary, data: ReadonlyMap<string, OverviewData>): string {
  const current = new Map([...data].filter(([, d]) => d && d.version === OVERVIEW_DATA_VERSION));
  const t = summary.totals;
  return reportPage({
    title: `Hindcast review report: ${summary.input}`,
    generator: `${summary.tool} ${summary.version}`,
    header: `<h1>Hindcast review report</h1>
<p>Input <code>${esc(summary.input)}</code>, profile <code>${esc(summary.profile)}</code>, written ${esc(summary.createdUtc)} by ${esc(summary.tool)} ${esc(summary.version)}.
${t.sessions} session(s): ${t.ok} ok, ${t.failed} failed; ${t.fixes} fixes, ${t.outliers} flagged, ${t.bridged} bridged epochs.</p>`,
    main: `<h2 id="overview-heading">Overview</h2>
${overviewTable(summary, current)}
<p class="note">Each session's page (under <code>report/</code>) holds its figures, plots, close-ups of the flagged fixes, the flagged table and its survey section.</p>
${failures(summary)}`,
    script: SORT_SCRIPT,
  });
}
