/**
 * The batch overview: one row per session (ok or failed) with what tells at a glance whether it
 * needs a look: status, what to look at, length, duration, flagged fixes, bridged time, median and
 * worst 95% ellipse, calibrated noise, decisions, warnings. Sortable by any column (sort-script.ts).
 */
import type { BatchSummary, SessionSummary } from '../summary.js';
import { esc, duration, num, sessionAnchor, sortKey } from './html-text.js';
import { calibratedNoise, type CalibratedNoise, type ReportPayload } from './payload.js';

/** "1.25 / 2.40 m" */
export function noiseText(c: CalibratedNoise): string {
  return `${num(c.horizontal, 2)} / ${num(c.vertical, 2)} ${c.unit}`;
}

interface Column {
  head: string;
  /** 'num' columns sort numerically on data-sort. */
  type: 'num' | 'text';
  cell(s: SessionSummary, p: ReportPayload | undefined, i: number): { text: string; sort: string; html?: string };
}

/** What to look at in a session, in words (empty when nothing stands out). */
export function attention(s: SessionSummary, p: ReportPayload | undefined): string[] {
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

function bridgedSec(s: SessionSummary, p: ReportPayload | undefined): number {
  if (p) return p.bridgedSec;
  const m = s.metrics;
  return m ? m.bridgedCount * m.nominalIntervalSec : NaN;
}

const COLUMNS: Column[] = [
  {
    head: 'session', type: 'text',
    cell: (s, _p, i) => ({ text: s.name, sort: s.name, html: `<a href="#${sessionAnchor(i)}">${esc(s.name)}</a>` }),
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

export function overviewTable(summary: BatchSummary, payloads: Map<string, ReportPayload>): string {
  const head = COLUMNS.map((c, i) => `<th scope="col" data-type="${c.type}" data-col="${i}" aria-sort="none"><button type="button">${esc(c.head)}</button></th>`).join('');
  const rows = summary.sessions
    .map((s, i) => {
      const p = payloads.get(s.name);
      const cells = COLUMNS.map((c, ci) => {
        const v = c.cell(s, p, i);
        const tag = ci === 0 ? 'th scope="row"' : 'td';
        const end = ci === 0 ? 'th' : 'td';
        return `<${tag} data-sort="${esc(v.sort)}">${v.html ?? esc(v.text)}</${end}>`;
      }).join('');
      return `<tr class="${s.status === 'failed' ? 'failed' : 'ok'}">${cells}</tr>`;
    })
    .join('\n');
  return `<table class="overview sortable" id="overview">
<caption>Sessions of this batch. Select a column heading to sort by it; select it again to reverse.</caption>
<thead><tr>${head}</tr></thead>
<tbody>
${rows}
</tbody>
</table>`;
}
