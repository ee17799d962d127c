/**
 * The report's pages as text: the overview report.html (cautions, the table of sessions with a
 * thumbnail and a link each, the failures) and each session's page report/<stem>.html (plots,
 * close-ups, tables), all self-contained.
 */
import { describe, expect, test, beforeAll } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { overviewData, reportHtml, reportPayload, sessionPageHtml, sessionPageName, writeReport, writeSessionPage, REPORT_FILE } from '../../src/output/report/index.js';
import { CAUTION } from '../../src/output/caution.js';
import { buildSummary, okEntry } from '../../src/output/summary.js';
import type { ReportExtension } from '../../src/output/report/extensions.js';
import { seriesChart } from '../../src/output/report/chart-time.js';
import { esc } from '../../src/output/report/html-text.js';
import { batch, session } from './fixtures.js';

const PLOTS_PER_SESSION = 5;
/** roll/pitch, heading, attitude sd, accelerometer bias, gyroscope bias */
const IMU_PLOTS = 5;
const CTX = { tool: 'hindcast', version: '0.0.0-test', profile: 'default' };

let html: string;
/** Each ok session's page, in the order of the summary. */
let pages: string[];
let b: ReturnType<typeof batch>;
beforeAll(async () => {
  b = batch();
  html = reportHtml(b.summary, b.overviews);
  pages = [];
  for (const s of b.summary.sessions) if (s.status === 'ok') pages.push(await sessionPageHtml(s, b.payloads.get(s.name), CTX));
});

const okSessions = () => b.summary.sessions.filter((s) => s.status === 'ok');

function sections(h: string): string[] {
  return h.split('<section class="session').slice(1);
}

/** The checks every page of the report passes: nothing loaded, ids unique, links only as given. */
function selfContained(h: string, href: (link: string) => boolean): void {
  expect(h).not.toMatch(/<link\b|<iframe\b|<img\b|<object\b|<embed\b|@import/i);
  // url() only for references inside the page (SVG clip paths), and those ids are unique
  for (const m of h.matchAll(/url\(([^)]*)\)/g)) expect(m[1]).toMatch(/^#[\w-]+$/);
  const ids = [...h.matchAll(/\bid="([^"]+)"/g)].map((m) => m[1]);
  expect(new Set(ids).size).toBe(ids.length);
  for (const m of h.matchAll(/url\(#([\w-]+)\)/g)) expect(ids).toContain(m[1]);
  expect(h).not.toMatch(/\bsrc\s*=/i);
  for (const m of h.matchAll(/\bhref\s*=\s*"([^"]*)"/gi)) expect(href(m[1]!), m[1]).toBe(true);
  const urls = [...h.matchAll(/\b(?:https?|ftp|wss?):\/\/[^\s"'<>)]+/gi)].map((m) => m[0]);
  for (const u of urls) expect(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']).toContain(u);
  expect(h).toContain(`http-equiv="Content-Security-Policy" content="default-src 'none';`);
}

describe('report.html and the session pages', () => {
  test('are self-contained: nothing is loaded, no address but the SVG namespaces; the overview links only to session pages, a page only to its own parts and the overview', () => {
    const pageLinks = new Set(okSessions().map((s) => sessionPageName(s.name)));
    selfContained(html, (l) => l.startsWith('#') || pageLinks.has(l));
    for (const p of pages) selfContained(p, (l) => l.startsWith('#') || l === '../report.html');
  });

  test('state the cautions at the top and the bottom', () => {
    for (const h of [html, ...pages]) expect(h.split(esc(CAUTION)).length - 1).toBe(2);
    expect(CAUTION).toMatch(/not for navigation or safety-of-life use/);
    expect(CAUTION).toMatch(/checked against control and against the local rules of licensed practice/);
  });

  test('the overview draws no chart: one small track thumbnail and one page link per ok session', () => {
    expect(sections(html)).toHaveLength(0);
    expect(html).not.toContain('<figure');
    const rows = html.split('<tbody>')[1]!.split('</tbody>')[0]!.split('<tr').slice(1);
    for (const [i, s] of b.summary.sessions.entries()) {
      const thumbs = rows[i]!.match(/<svg [^>]*class="thumbnail"/g) ?? [];
      const links = [...rows[i]!.matchAll(/href="([^"]+)"/g)].map((m) => m[1]);
      if (s.status === 'ok') {
        expect(thumbs, s.name).toHaveLength(1);
        expect(rows[i]).toContain(`aria-label="Track of ${esc(s.name)}"`);
        expect(links).toEqual([sessionPageName(s.name)]);
      } else {
        expect(thumbs).toHaveLength(0);
        expect(links).toEqual([]);
      }
    }
    // the whole overview of five sessions: a few kilobytes a row (common practice: keep inline thumbnails small)
    expect(html.length).toBeLessThan(40_000);
  });

  test('the overview lists each failed session with its reason', () => {
    const failed = html.split('<ul class="failures">')[1]!.split('</ul>')[0]!;
    expect(failed).toContain('<strong>broken</strong>');
    expect(failed).toContain('no time column found');
  });

  test('overview: one row per session, failed ones included, with the columns asked for', () => {
    const table = html.slice(html.indexOf('<table class="overview'), html.indexOf('</table>'));
    const rows = table.split('<tbody>')[1]!.split('<tr').slice(1);
    expect(rows).toHaveLength(b.summary.sessions.length);
    expect(rows.filter((r) => r.includes('class="failed"'))).toHaveLength(1);
    for (const h of ['session', 'status', 'length (km)', 'duration (h:mm:ss)', 'flagged', 'bridged (s)', 'median 95% ellipse (m)', 'worst 95% ellipse (m)', 'calibrated noise h / v', 'warnings'])
      expect(table).toContain(`<button type="button">${esc(h)}</button>`);
    // numbers sort on data-sort: the length in metres
    const v = b.results[0]!;
    expect(rows[0]).toContain(`data-sort="${v.metrics.lengthM}"`);
  });

  test('every ok session\'s page has its one section with its plots drawn as SVG', () => {
    for (const [i, s] of okSessions().entries()) {
      const secs = sections(pages[i]!);
      expect(secs, s.name).toHaveLength(1);
      // the plots (the close-ups are figures of their own)
      const svgs = secs[0]!.split('<figure class="plot"').length - 1;
      expect(svgs).toBe(s.name.endsWith('-imu') ? PLOTS_PER_SESSION + IMU_PLOTS : PLOTS_PER_SESSION);
      // drawn from the data: lines and symbols, not empty frames
      expect((secs[0]!.match(/role-mark/g) ?? []).length).toBeGreaterThanOrEqual(PLOTS_PER_SESSION * 2);
      expect(pages[i]).toContain(`<title>Hindcast review report: ${esc(s.name)}</title>`);
    }
  });

  test('a failed session\'s section gives its reason', async () => {
    const s = b.summary.sessions.find((x) => x.status === 'failed')!;
    expect(sections(await sessionPageHtml(s, undefined, CTX))[0]).toContain('no time column found');
  });

  test('flagged fixes are drawn with their own symbols; bridged spans dashed', () => {
    const sec = sections(pages[0]!)[0]!;
    expect(sec).toContain('flagged by the test');
    expect(sec).toContain('bridged (no fix)');
    // the legend and marks use distinct shapes and a dash pattern
    expect(sec).toMatch(/stroke-dasharray="6,4"/);
  });

  test('a thinned session says so; all its flagged fixes are still listed', () => {
    const i = okSessions().findIndex((s) => s.name.startsWith('drone'));
    const sec = sections(pages[i]!)[0]!;
    const p = b.payloads.get(okSessions()[i]!.name)!;
    expect(sec).toMatch(new RegExp(`Plots show ${p.plot.tSec.length} of ${p.epochs} epochs`));
    expect((sec.split('<table class="flagged')[1]!.split('</table>')[0]!.match(/<tr id=/g) ?? []).length).toBe(p.flaggedCount);
  });

  test('names and texts are escaped', async () => {
    const r = { ...session('vehicle', 7, { durationSec: 300 }).result, name: 'a&b <i>x</i>"' };
    const p = reportPayload(r);
    const entry = okEntry(r, 'x<y>.csv', [sessionPageName(r.name)], 0);
    const h = reportHtml(buildSummary('t', 'in<put>', 'default', [entry]), new Map([[r.name, overviewData(p)]]));
    const page = await sessionPageHtml(entry, p, CTX);
    for (const x of [h, page]) {
      expect(x).not.toContain('<i>x</i>');
      expect(x).toContain('a&amp;b &lt;i&gt;x&lt;/i&gt;&quot;');
    }
    expect(h).toContain('in&lt;put&gt;');
    expect(page).toContain('x&lt;y&gt;.csv');
    // the link to the page is percent-encoded (RFC 3986 §2.1), the "/" kept as the path separator of a subfolder
    expect(h).toContain('href="report/a%26b%20%3Ci%3Ex%3C/i%3E%22.html"');
  });

  test('an extension adds its group of plots to the sessions that have its data', async () => {
    const r = session('vehicle', 7, { durationSec: 300 }).result;
    const ext: ReportExtension = {
      id: 'fake-imu',
      title: 'Attitude (test extension)',
      collect: (_res, epochs) => ({ yawDeg: Float64Array.from(epochs, (j) => (j * 3) % 360) }),
      charts: (d, plot, spans) => [{ title: 'Yaw', caption: 'test', spec: seriesChart(plot, [{ name: 'yaw', values: d.yawDeg as Float64Array }], spans, { description: 'yaw', yTitle: 'yaw (deg)' }) }],
    };
    const p = reportPayload(r);
    p.extensions['fake-imu'] = ext.collect(r, p.plot.epoch)!;
    const h = await sessionPageHtml(okEntry(r, 'x.csv', [], 0), p, CTX, [ext]);
    const sec = sections(h)[0]!;
    expect(sec.split('<figure class="plot"').length - 1).toBe(PLOTS_PER_SESSION + 1);
    expect(sec).toContain('<h3>Attitude (test extension)</h3>');
  });

  test('an IMU-aided session gets its attitude and bias plots (the IMU extension)', () => {
    const i = okSessions().findIndex((s) => s.name.endsWith('-imu'));
    const sec = sections(pages[i]!)[0]!;
    expect(sec).toContain('<h3>IMU: attitude and sensor biases</h3>');
    for (const t of ['Roll and pitch over time', 'Heading over time', 'Attitude standard deviation over time', 'Accelerometer bias over time', 'Gyroscope bias over time'])
      expect(sec).toContain(`<strong>${t}.</strong>`);
    // sessions without IMU fields have none of it
    expect(sections(pages[0]!)[0]).not.toContain('IMU: attitude');
  });

  test('a payload or overview data of another version is not drawn', async () => {
    const r = session('vehicle', 7, { durationSec: 300 }).result;
    const p = { ...reportPayload(r), version: -1 };
    const entry = okEntry(r, 'x.csv', [sessionPageName(r.name)], 0);
    expect(sections(await sessionPageHtml(entry, p, CTX))[0]).toContain('No plot data of this version');
    const h = reportHtml(buildSummary('t', 'in', 'default', [entry]), new Map([[r.name, { ...overviewData(reportPayload(r)), version: -1 }]]));
    expect(h).not.toContain('class="thumbnail"');
    expect(h).toContain(`href="${sessionPageName(r.name)}"`);
  });

  test('writeReport writes report.html and writeSessionPage report/<stem>.html atomically, leaving no temporary', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-report-'));
    await writeReport(dir, b.summary, b.overviews);
    const s = okSessions()[0]!;
    expect(await writeSessionPage(dir, s, b.payloads.get(s.name)!, CTX)).toBe(sessionPageName(s.name));
    expect(readdirSync(dir).sort()).toEqual(['report', REPORT_FILE]);
    expect(readdirSync(join(dir, 'report'))).toEqual([`${s.name}.html`]);
    const text = readFileSync(join(dir, REPORT_FILE), 'utf8');
    expect(text.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(text.split('<tbody>')[1]!.split('<tr').length - 1).toBe(b.summary.sessions.length);
    expect(sections(readFileSync(join(dir, 'report', `${s.name}.html`), 'utf8'))).toHaveLength(1);
  });
});
