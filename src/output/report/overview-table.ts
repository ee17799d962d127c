/**
 * The batch overview: one row per session (ok or failed) with what tells at a glance whether it
 * needs a look: its name linking to its page (report/<stem>.html), a track thumbnail, status, what
 * to look at, length, duration, flagged fixes, bridged time, median and worst 95% ellipse,
 * calibrated noise, decisions, warnings. Sortable by any column with a heading button
 * (sort-script.ts). Reads only the summary entries and the small per-session overview data.
 */
import type { BatchSummary, SessionSummary } from '../summary.js';
import { esc, duration, num, sortKey } from './html-text.js';
import { calibratedNoise, type CalibratedNoise } from './payload.js';
import type { OverviewData, OverviewFacts } from './overview-data.js';
import { sessionPageHref, sessionPageName } from './page-path.js';
import { thumbnailSvg } from './thumbnail.js';

type P = OverviewFacts | undefined;

/** "1.25 / 2.40 m" */
export function noiseText(c: CalibratedNoise): string {
  return `${num(c.horizontal, 2)} / ${num(c.vertical, 2)} ${c.unit}`;
}

interface Column {
  head: string;
  /** 'num' columns sort numerically on data-sort; 'none' columns do not sort. */
  type: 'num' | 'text' | 'none';
  cell(s: SessionSummary, p: OverviewData | undefined): { text: string; sort: string; html?: string; cls?: string };
}

/** What to look at in a session, in words (empty when nothing stands out). */
export function attention(s: SessionSummary, p: P): string[] {
  if (s.status === 'failed') return s.stale ? ['failed', 'outputs of an earlier run kept (stale)'] : ['failed'];
  const m = s.metrics;
  const out: string[] = [];
  if (m && m.outlierCount > 0) out.push(`${m.outlierCount} flagged`);
  if (p && p.decisionCount > 0) out.push(`${p.decisionCount} decided by you`);
  if (m && m.reacquisitions > 0) out.push(`${m.reacquisitions} re-acquisition${m.reacquisitions > 1 ? 's' : ''}`);
  if (m && m.segmentCount > 1) out.push(`${m.segmentCount} segments`);
  if (s.warnings.length > 0) out.push(`${s.warnings.length} warning${s.warnings.length > 1 ? 's' : ''}`);
  return out;
}

function bridgedSec(s: SessionSummary, p: P): number {
  if (p) return p.bridgedSec;
  const m = s.metrics;
  return m ? m.bridgedCount * m.nominalIntervalSec : NaN;
}

const COLUMNS: Column[] = [
  {
    head: 'session', type: 'text',
    cell: (s) => {
      const page = sessionPage(s);
      const link = page === null ? esc(s.name) : `<a href="${esc(sessionPageHref(s.name))}">${esc(s.name)}</a>${page === 'stale' ? ' (page of an earlier run)' : ''}`;
      return { text: s.name, sort: s.name, html: link };
    },
  },
  {
    head: 'track', type: 'none',
    cell: (s, p) => (p && p.thumbnail.lines.length > 0 ? { text: '', sort: '', html: thumbnailSvg(p.thumbnail, `Track of ${s.name}`), cls: 'thumb' } : { text: '–', sort: '' }),
  },
  { head: 'status', type: 'text', cell: (s) => ({ text: s.stale ? 'failed, stale outputs kept' : s.status, sort: s.status }) },
  {
    head: 'look at', type: 'text',
    cell: (s, p) => {
      const a = attention(s, p);
      return { text: a.length ? a.join(', ') : 'nothing stands out', sort: String(a.length).padStart(3, '0') + a.join(',') };
    },
  },
  { head: 'length (km)', type: 'num', cell: (s) => ({ text: num(s.metrics ? s.metrics.lengthM / 1000 : NaN, 3), sort: sortKey(s.metrics?.lengthM) }) },
  { head: 'duration (h:mm:ss)', type: 'num', cell: (s) => ({ text: duration(s.metrics?.durationSec), sort: sortKey(s.metrics?.durationSec) }) },
  { head: 'fixes', type: 'num', cell: (s) => ({ text: s.metrics ? String(s.metrics.fixCount) : '–', sort: sortKey(s.metrics?.fixCount) }) },
  { head: 'flagged', type: 'num', cell: (s) => ({ text: s.metrics ? String(s.metrics.outlierCount) : '–', sort: sortKey(s.metrics?.outlierCount) }) },
  {
    head: 'bridged (s)', type: 'num',
    cell: (s, p) => {
      const b = s.status === 'ok' ? bridgedSec(s, p) : NaN;
      return { text: num(b, 1), sort: sortKey(b) };
    },
  },
  { head: 'median 95% ellipse (m)', type: 'num', cell: (s) => ({ text: num(s.metrics?.medianEll95MajorM, 2), sort: sortKey(s.metrics?.medianEll95MajorM) }) },
  { head: 'worst 95% ellipse (m)', type: 'num', cell: (s) => ({ text: num(s.metrics?.worstEll95MajorM, 2), sort: sortKey(s.metrics?.worstEll95MajorM) }) },
  {
    head: 'calibrated noise h / v', type: 'num',
    cell: (s, p) => {
      const c = p?.calibratedNoise ?? calibratedNoise(s.info);
      return c ? { text: noiseText(c), sort: sortKey(c.horizontal) } : { text: 'not calibrated', sort: '' };
    },
  },
  { head: 'your decisions', type: 'num', cell: (_s, p) => ({ text: p ? String(p.decisionCount) : '–', sort: sortKey(p?.decisionCount) }) },
  { head: 'warnings', type: 'num', cell: (s) => ({ text: String(s.warnings.length), sort: String(s.warnings.length) }) },
];

/** Whether a session's page is on disk as one of its outputs: 'current', 'stale' (an earlier run's, kept), or null. */
export function sessionPage(s: SessionSummary): 'current' | 'stale' | null {
  const page = sessionPageName(s.name);
  if (s.status === 'ok') return s.outputs?.includes(page) ? 'current' : null;
  return s.staleOutputs?.includes(page) ? 'stale' : null;
}

export function overviewTable(summary: BatchSummary, data: ReadonlyMap<string, OverviewData>): string {
  const head = COLUMNS.map((c, i) =>
    c.type === 'none' ? `<th scope="col" data-col="${i}">${esc(c.head)}</th>` : `<th scope="col" data-type="${c.type}" data-col="${i}" aria-sort="none"><button type="button">${esc(c.head)}</button></th>`,
  ).join('');
  const rows = summary.sessions
    .map((s) => {
      const p = data.get(s.name);
      const cells = COLUMNS.map((c, ci) => {
        const v = c.cell(s, p);
        const tag = ci === 0 ? 'th scope="row"' : 'td';
        const end = ci === 0 ? 'th' : 'td';
        return `<${tag}${v.cls ? ` class="${v.cls}"` : ''} data-sort="${esc(v.sort)}">${v.html ?? esc(v.text)}</${end}>`;
      }).join('');
      return `<tr class="${s.status === 'failed' ? 'failed' : 'ok'}">${cells}</tr>`;
    })
    .join('\n');
  return `<table class="overview sortable" id="overview">
<caption>Sessions of this batch. Select a session to open its page (plots, close-ups, flagged fixes); select a column heading to sort by it, again to reverse.</caption>
<thead><tr>${head}</tr></thead>
<tbody>
${rows}
</tbody>
</table>`;
}
