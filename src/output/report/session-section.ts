/**
 * One session's section of the report: key figures, the plots (track, sd, test statistic,
 * residuals, speed, then any extension groups), the flagged fixes, the user's decisions, the
 * warnings, and how to feed decisions back. Failed sessions get their reason and warnings.
 */
import type { SessionSummary } from '../summary.js';
import { FLAG_MARKS } from './chart-common.js';
import { trackChart } from './chart-track.js';
import { nisChart, residualChart, sdChart, speedChart } from './chart-time.js';
import { surveySectionHtml } from './survey-section.js';
import { REPORT_EXTENSIONS, type ExtensionChart, type ReportExtension } from './extensions.js';
import { esc, duration, isoTime, num, sessionAnchor } from './html-text.js';
import type { ReportPayload } from './payload.js';
import { noiseText } from './overview-table.js';
import { renderSvg } from './render-svg.js';

const SYMBOL_TEXT = FLAG_MARKS.map((m) => `${m.shape.replace('-', ' ')}: ${m.label}`).join('; ');

/** The plots of a session, in order. */
export function sessionCharts(p: ReportPayload, extensions: readonly ReportExtension[] = REPORT_EXTENSIONS): Array<ExtensionChart & { group?: string }> {
  const b = p.bridgedSpans;
  const charts: Array<ExtensionChart & { group?: string }> = [
    {
      title: 'Track in the local frame',
      caption: `East and north in metres, same scale on both axes. Solid line: smoothed track; dashed line: bridged (no fix, predicted); thin rings: 95% error ellipses to scale at intervals; square: start; symbols at the raw fix positions (${SYMBOL_TEXT}).`,
      spec: trackChart(p.plot, p.ellipses, p.name),
    },
    {
      title: 'Standard deviation over time',
      caption: 'Horizontal (√(sd east² + sd north²)) and vertical 1-sigma of the smoothed position. Grey dashed bands: bridged spans.',
      spec: sdChart(p.plot, b, p.hasHeight),
    },
    {
      title: 'Test statistic over time',
      caption: `Test statistic of each fix against the smoothed track (normalized squared residual, χ² with one degree of freedom per measured axis) and the chi-square threshold (dashed): fixes above it are flagged. Symbols: ${SYMBOL_TEXT}.`,
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

function figures(p: ReportPayload): string {
  const m = p.metrics;
  const rows: Array<[string, string]> = [
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

function flaggedTable(p: ReportPayload): string {
  if (p.flaggedCount === 0) return '<p>No fix was flagged.</p>';
  const rows = p.flagged
    .map((f) => {
      const who = f.reason === 'user' ? 'rejected by you' : f.reason === 'invalid' ? 'invalid fix' : 'flagged by the test';
      return `<tr><td><code>${esc(isoTime(f.tSec))}</code></td><td>${f.line}</td><td>${esc(who)}</td><td>${esc(f.status)}</td><td>${num(f.statistic, 2)}</td><td>${num(f.threshold, 2)}</td><td>${num(f.offsetM, 2)}</td><td>${esc(f.detail)}</td></tr>`;
    })
    .join('\n');
  const more = p.flaggedCount > p.flagged.length ? `<p>${p.flaggedCount - p.flagged.length} more are listed in the session's outliers.csv (all are drawn in the plots).</p>` : '';
  return `<table class="flagged"><caption>Flagged fixes (${p.flaggedCount})</caption>
<thead><tr><th>time (UTC)</th><th>source line</th><th>by</th><th>status</th><th>statistic</th><th>threshold</th><th>offset (m)</th><th>detail</th></tr></thead>
<tbody>
${rows}
</tbody></table>${more}`;
}

function decisionsTable(p: ReportPayload): string {
  const how = `<p class="howto">To overrule the tool, write <code>${esc(decisionsFileName(p))}</code> beside the log, with the header <code>time,decision,note</code> and one row per fix: the time exactly as in track.csv or outliers.csv, <code>keep</code> or <code>reject</code>, and a note; then run again. Decisions show here and as <code>user-kept</code> / <code>user-rejected</code> in the outputs.</p>`;
  if (p.decisionCount === 0) return `<p>No decisions of yours were applied to this session.</p>${how}`;
  const rows = p.decisions
    .map((d) => `<tr><td><code>${esc(isoTime(d.tSec))}</code></td><td>${d.decision === 'keep' ? 'kept by you (user-kept)' : 'rejected by you (user-rejected)'}</td><td>${num(d.statistic, 2)}</td><td>${num(d.threshold, 2)}</td></tr>`)
    .join('\n');
  const more = p.decisionCount > p.decisions.length ? `<p>${p.decisionCount - p.decisions.length} more are in the session's track.csv.</p>` : '';
  return `<table class="decisions"><caption>Your decisions applied (${p.decisionCount})</caption>
<thead><tr><th>time (UTC)</th><th>decision</th><th>statistic</th><th>threshold</th></tr></thead>
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
${figures(p)}
${decimated}
<div class="plots">${figs.join('\n')}</div>
${surveySectionHtml(s.survey)}
${flaggedTable(p)}
${decisionsTable(p)}
${warningsList(p.warnings, p.warningCount)}
</section>`;
}
