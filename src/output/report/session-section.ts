/**
 * One session's section of the report, one function a part: key figures (figures), the plots
 * (track, sd, test statistic, residuals, speed, then any extension groups), the close-ups of the
 * flagged fixes (closeupsPart), the flagged fixes table ordered review first (flaggedTable), the
 * user's decisions (decisionsTable), the warnings, and how to feed decisions back. Failed sessions
 * get their reason and warnings. A further part is one more function in the list of
 * sessionSection.
 */
import type { SessionSummary } from '../summary.js';
import { FLAG_MARKS } from './chart-common.js';
import { trackChart } from './chart-track.js';
import { nisChart, residualChart, sdChart, speedChart } from './chart-time.js';
import { surveySectionHtml } from './survey-section.js';
import { REPORT_EXTENSIONS, type ExtensionChart, type ReportExtension } from './extensions.js';
import { esc, duration, isoTime, localTime, num, sessionAnchor, sortKey } from './html-text.js';
import { closeupSvg } from './chart-closeup.js';
import { testName } from './test-words.js';
import type { ReportPayload } from './payload.js';
import { noiseText } from './overview-table.js';
import { renderSvg } from './render-svg.js';
import { qualityNote } from './quality-note.js';

const SYMBOL_TEXT = FLAG_MARKS.map((m) => `${m.shape.replace('-', ' ')}: ${m.label}`).join('; ');

/** The plots of a session, in order. */
export function sessionCharts(p: ReportPayload, extensions: readonly ReportExtension[] = REPORT_EXTENSIONS): Array<ExtensionChart & { group?: string }> {
  const b = p.bridgedSpans;
  const charts: Array<ExtensionChart & { group?: string }> = [
    {
      title: 'Track in the local frame',
      caption: `East and north in metres, same scale on both axes. Solid line: smoothed track; dashed line: bridged (no fix, predicted); thin rings: 95% error ellipses to scale at intervals; square: start; small grey dots: raw fixes kept; symbols at the raw fix positions (${SYMBOL_TEXT}). Each flagged symbol links to its row in the table below; the close-ups show them at a scale where metres show.`,
      spec: trackChart(p.plot, p.ellipses, p.name, new Map(p.flagged.filter((f) => f.epoch >= 0).map((f) => [f.epoch, f.id]))),
    },
    {
      title: 'Standard deviation over time',
      caption: 'Horizontal (√(sd east² + sd north²)) and vertical 1-sigma of the smoothed position. Grey dashed bands: bridged spans.',
      spec: sdChart(p.plot, b, p.hasHeight),
    },
    {
      title: 'Test statistic over time',
      caption: `Review statistic of each fix against the smoothed track (normalized squared residual, χ² with one degree of freedom per measured axis) and the review's chi-square threshold (dashed). A flagged fix below the line was flagged by another test (a gate or the swap test) and not taken back: the table names the test that decided. Symbols: ${SYMBOL_TEXT}.`,
      spec: nisChart(p.plot, b),
    },
    {
      title: 'Residuals over time',
      caption: `Raw fix minus smoothed position per axis (m, symmetric-log scale so flagged fixes and small residuals both show). Symbols at the largest component: ${SYMBOL_TEXT}.`,
      spec: residualChart(p.plot, b, p.hasHeight),
    },
    {
      title: 'Speed over time',
      caption: 'Horizontal speed of the smoothed track. Grey dashed bands: bridged spans.',
      spec: speedChart(p.plot, b),
    },
  ];
  for (const x of extensions) {
    const d = p.extensions[x.id];
    if (d !== undefined) for (const c of x.charts(d, p.plot, b)) charts.push({ ...c, group: x.title });
  }
  return charts;
}

function decisionsFileName(p: ReportPayload): string {
  const base = p.file.split(/[\\/]/).pop() ?? p.name;
  return `${base.replace(/\.[^.]*$/, '')}.decisions.csv`;
}

/** A time in UTC, and in the log's zone when it has one. */
function bothTimes(p: ReportPayload, tSec: number): string {
  return p.timeZone ? `${isoTime(tSec)} (${localTime(tSec, p.timeZone)})` : isoTime(tSec);
}

function figures(p: ReportPayload): string {
  const m = p.metrics;
  const t0 = p.plot.tSec.length ? p.plot.tSec[0]! : NaN;
  const t1 = p.plot.tSec.length ? p.plot.tSec[p.plot.tSec.length - 1]! : NaN;
  const rows: Array<[string, string]> = [
    ['start', bothTimes(p, t0)],
    ['end', bothTimes(p, t1)],
    ['time zone of the log', p.timeZone ? `${p.timeZone} (times below in UTC and in this zone)` : 'times as written in the log (with their offset) or UTC; shown in UTC'],
    ['fixes / epochs', `${m.fixCount} / ${m.epochCount}`],
    ['segments', String(m.segmentCount)],
    ['duration', duration(m.durationSec)],
    ['nominal interval (s)', num(m.nominalIntervalSec, 3)],
    ['length (km)', num(m.lengthM / 1000, 3)],
    ['flagged fixes', `${m.outlierCount} (of which invalid: ${m.invalidCount})`],
    ['bridged epochs / time (s)', `${m.bridgedCount} / ${num(p.bridgedSec, 1)}`],
    ['median horizontal sd (m)', num(m.medianSdHorizontalM, 3)],
    ['95% ellipse major, median / worst (m)', `${num(m.medianEll95MajorM, 2)} / ${num(m.worstEll95MajorM, 2)}`],
    ['rms residual horizontal / up (m)', `${num(m.rmsResidualHorizontalM, 2)} / ${num(m.rmsResidualUpM, 2)}`],
    ['re-acquisitions', String(m.reacquisitions)],
    ['calibrated fix noise h / v', p.calibratedNoise ? noiseText(p.calibratedNoise) : 'not calibrated (profile values)'],
    ['noise calibration', p.calibrationLine ?? 'none recorded'],
    ...p.facts,
  ];
  return `<dl class="figures">${rows.map(([k, v]) => `<dt>${esc(k)}</dt><dd>${esc(v)}</dd>`).join('')}</dl>`;
}

/** The DOM id of a flagged fix's table row (the session's anchor and the fix's id). */
export function flagRowId(anchor: string, id: string): string {
  return `${anchor}-${id}`;
}

/** The DOM id of a close-up figure. */
export function closeupId(anchor: string, i: number): string {
  return `${anchor}-closeup-${i + 1}`;
}

/** Review first: the smallest margin first (closest to its threshold), fixes without a test last, then in time order. */
export function reviewOrder(rows: readonly ReportPayload['flagged'][number][]): ReportPayload['flagged'][number][] {
  const m = (v: number) => (Number.isFinite(v) ? v : Infinity);
  return [...rows].sort((a, b) => m(a.margin) - m(b.margin) || a.tSec - b.tSec);
}

/** A sort key to 7 significant digits (the table shows 2 decimals; a key of 17 digits only costs bytes). */
function sortKey7(v: number): string {
  return sortKey(Number.isFinite(v) ? +v.toPrecision(7) : v);
}

function flaggedTable(p: ReportPayload, anchor: string): string {
  if (p.flaggedCount === 0) return '<p>No fix was flagged.</p>';
  const zone = p.timeZone;
  const rows = reviewOrder(p.flagged)
    .map((f) => {
      const shot = f.closeup >= 0 ? `<a href="#${closeupId(anchor, f.closeup)}">close-up ${f.closeup + 1}</a>` : '–';
      const local = zone ? `<td data-sort="${sortKey(f.tSec)}"><code>${esc(localTime(f.tSec, zone))}</code></td>` : '';
      const margin = Number.isFinite(f.margin) ? `${(100 * f.margin).toFixed(1)}%` : '–';
      const summary = `${isoTime(f.tSec)} UTC, ${testName(f.test)}${Number.isFinite(f.statistic) ? ` ${num(f.statistic, 2)} > ${num(f.threshold, 2)}` : ''}`;
      return `<tr id="${esc(flagRowId(anchor, f.id))}" data-flag="${esc(f.id)}" data-summary="${esc(summary)}"><td data-sort="${esc(f.id)}"><strong>${esc(f.id)}</strong></td><td data-sort="${sortKey(f.tSec)}"><code>${esc(isoTime(f.tSec))}</code></td>${local}<td data-sort="${f.line}">${f.line}</td><td data-sort="${esc(testName(f.test))}">${esc(testName(f.test))}</td><td data-sort="${sortKey7(f.statistic)}">${num(f.statistic, 2)}</td><td data-sort="${sortKey7(f.threshold)}">${num(f.threshold, 2)}</td><td data-sort="${sortKey7(f.margin)}">${margin}</td><td data-sort="${sortKey7(f.offsetM)}">${num(f.offsetM, 2)}</td><td data-sort="${esc(f.status)}">${esc(f.status)}</td><td data-sort="${esc(f.note ?? '')}">${esc(f.note ?? '')}</td><td>${shot}</td><td>${esc(f.detail)}</td></tr>`;
    })
    .join('\n');
  const more = p.flaggedCount > p.flagged.length ? `<p>${p.flaggedCount - p.flagged.length} more are listed in the session's outliers.csv (all are drawn in the plots).</p>` : '';
  const th = (label: string, type: 'num' | 'text') => `<th data-type="${type}" aria-sort="none"><button type="button">${esc(label)}</button></th>`;
  const marginTh = `<th data-type="num" aria-sort="ascending"><button type="button">margin</button></th>`;
  return `<table class="flagged sortable"><caption>Flagged fixes (${p.flaggedCount}), review first: the smallest margin (closest to its test's threshold) at the top. Press a heading to sort.</caption>
<thead><tr>${th('id', 'text')}${th('time (UTC)', 'num')}${zone ? th(`time (${zone})`, 'num') : ''}${th('source line', 'num')}${th('deciding test', 'text')}${th('statistic', 'num')}${th('threshold', 'num')}${marginTh}${th('offset (m)', 'num')}${th('status', 'text')}${th('your note', 'text')}<th>close-up</th><th>why</th></tr></thead>
<tbody>
${rows}
</tbody></table>${more}
<p class="note">Statistic and threshold are those of the deciding test (its margin: statistic / threshold − 1). Gates and review: χ² of the fix against a prediction or the smoothed track, one degree of freedom per measured axis; swap test: the capped χ² sum of the neighbourhood with the fix's run kept, against the same sum with it left out. outliers.csv holds the same ids and figures.</p>`;
}

/** The close-ups of the flagged fixes, one figure a burst. */
async function closeupsPart(p: ReportPayload, anchor: string): Promise<string> {
  if (p.closeups.length === 0) return '';
  const figs: string[] = [];
  for (let i = 0; i < p.closeups.length; i++) {
    const c = p.closeups[i]!;
    const title = `Close-up ${i + 1}: ${c.ids.join(', ')}`;
    const svg = closeupSvg(c, title, closeupId(anchor, i));
    const when = `${bothTimes(p, c.tSec[0]!)} to ${isoTime(c.tSec[c.tSec.length - 1]!).slice(11)}`;
    const links = c.ids.map((id) => `<a href="#${esc(flagRowId(anchor, id))}">${esc(id)}</a>`).join(', ');
    figs.push(`<figure class="closeup" id="${closeupId(anchor, i)}" data-ids="${esc(c.ids.join(' '))}"><figcaption><strong>Close-up ${i + 1}</strong> (${links}), ${esc(when)}.</figcaption>${svg}</figure>`);
  }
  const more = p.flagged.some((f) => f.closeup < 0 && f.epoch >= 0) ? ' Flagged fixes without a close-up are in the table and the track plot.' : '';
  return `<h3>Close-ups of the flagged fixes (${p.closeups.length})</h3>
<p class="note">Each flagged fix with its neighbours, east and north in metres at equal scale: smoothed track (line), its 95% error ellipse at each epoch (grey rings), raw fixes kept (grey dots), flagged fixes (symbols as in the track plot's legend, labelled with their id) and their offset from the smoothed position (dotted). Review first: the close-ups of the fixes closest to their threshold are drawn first when there are more bursts than close-ups.${more}</p>
<div class="closeups">${figs.join('\n')}</div>`;
}

function decisionsTable(p: ReportPayload): string {
  const how = `<p class="howto">To overrule the tool, write <code>${esc(decisionsFileName(p))}</code> beside the log, with the header <code>time,decision,note</code> and one row per fix: the time exactly as in track.csv or outliers.csv, <code>keep</code> or <code>reject</code>, and a note; then run again. Decisions show here and as <code>user-kept</code> / <code>user-rejected</code> in the outputs.</p>`;
  if (p.decisionCount === 0) return `<p>No decisions of yours were applied to this session.</p>${how}`;
  const rows = p.decisions
    .map((d) => `<tr><td><code>${esc(isoTime(d.tSec))}</code></td>${p.timeZone ? `<td><code>${esc(localTime(d.tSec, p.timeZone))}</code></td>` : ''}<td>${d.decision === 'keep' ? 'kept by you (user-kept)' : 'rejected by you (user-rejected)'}</td><td>${num(d.statistic, 2)}</td><td>${num(d.threshold, 2)}</td><td>${esc(d.note ?? '')}</td></tr>`)
    .join('\n');
  const more = p.decisionCount > p.decisions.length ? `<p>${p.decisionCount - p.decisions.length} more are in the session's track.csv.</p>` : '';
  return `<table class="decisions"><caption>Your decisions applied (${p.decisionCount})</caption>
<thead><tr><th>time (UTC)</th>${p.timeZone ? `<th>time (${esc(p.timeZone)})</th>` : ''}<th>decision</th><th>review statistic</th><th>review threshold</th><th>your note</th></tr></thead>
<tbody>
${rows}
</tbody></table>${more}${how}`;
}

function warningsList(w: SessionSummary['warnings'], count: number): string {
  if (count === 0) return '';
  const items = w.map((x) => `<li>${esc(x.line !== undefined ? `line ${x.line}: ` : '')}${esc(x.message)} <span class="code">(${esc(x.code)})</span></li>`).join('');
  const more = count > w.length ? `<li>… ${count - w.length} more in summary.json</li>` : '';
  return `<h3>Warnings (${count})</h3><ul class="warnings">${items}${more}</ul>`;
}

export async function sessionSection(s: SessionSummary, p: ReportPayload | undefined, i: number, extensions: readonly ReportExtension[] = REPORT_EXTENSIONS): Promise<string> {
  const id = sessionAnchor(i);
  const head = `<h2>${esc(s.name)} <span class="status">${esc(s.status)}</span></h2>`;
  if (s.status === 'failed')
    return `<section class="session failed" id="${id}" data-session="${esc(s.name)}">${head}<p class="reason">Failed: ${esc(s.reason ?? 'unknown reason')}</p>${warningsList(s.warnings, s.warnings.length)}</section>`;
  if (!p) return `<section class="session" id="${id}" data-session="${esc(s.name)}">${head}<p>No plot data of this version of Hindcast was kept for this session; run the batch again with --force to draw it.</p>${warningsList(s.warnings, s.warnings.length)}</section>`;
  const charts = sessionCharts(p, extensions);
  const figs: string[] = [];
  let group: string | undefined;
  for (const c of charts) {
    if (c.group && c.group !== group) {
      figs.push(`<h3>${esc(c.group)}</h3>`);
      group = c.group;
    }
    const svg = await renderSvg(c.spec);
    figs.push(`<figure class="plot"><figcaption><strong>${esc(c.title)}.</strong> ${esc(c.caption)}</figcaption>${svg}</figure>`);
  }
  const decimated = p.plot.tSec.length < p.epochs ? `<p class="note">Plots show ${p.plot.tSec.length} of ${p.epochs} epochs (thinned for drawing; every flagged fix and decision is drawn).</p>` : '';
  return `<section class="session" id="${id}" data-session="${esc(s.name)}">${head}
${qualityNote(s)}
${figures(p)}
${decimated}
<div class="plots">${figs.join('\n')}</div>
${surveySectionHtml(s.survey)}
${await closeupsPart(p, id)}
${flaggedTable(p, id)}
${decisionsTable(p)}
${warningsList(p.warnings, p.warningCount)}
</section>`;
}
