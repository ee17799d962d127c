import { describe, expect, test, beforeAll } from 'vitest';
import { mkdtempSync, readdirSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { reportHtml, reportPayload, writeReport, REPORT_FILE } from '../../src/output/report/index.js';
import { CAUTION } from '../../src/output/caution.js';
import { buildSummary, okEntry } from '../../src/output/summary.js';
import type { ReportExtension } from '../../src/output/report/extensions.js';
import { seriesChart } from '../../src/output/report/chart-time.js';
import { esc } from '../../src/output/report/html-text.js';
import { batch, session } from './fixtures.js';

const PLOTS_PER_SESSION = 5;
/** roll/pitch, heading, attitude sd, accelerometer bias, gyroscope bias */
const IMU_PLOTS = 5;

let html: string;
let b: ReturnType<typeof batch>;
beforeAll(async () => {
  b = batch();
  html = await reportHtml(b.summary, b.payloads);
});

function sections(h: string): string[] {
  return h.split('<section class="session').slice(1);
}

describe('report.html', () => {
  test('is self-contained: nothing is loaded, no address but the SVG namespaces', () => {
    expect(html).not.toMatch(/<link\b|<iframe\b|<img\b|<object\b|<embed\b|@import/i);
    // url() only for references inside the page (SVG clip paths), and those ids are unique
    for (const m of html.matchAll(/url\(([^)]*)\)/g)) expect(m[1]).toMatch(/^#[\w-]+$/);
    const ids = [...html.matchAll(/\bid="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set(ids).size).toBe(ids.length);
    for (const m of html.matchAll(/url\(#([\w-]+)\)/g)) expect(ids).toContain(m[1]);
    expect(html).not.toMatch(/\bsrc\s*=/i);
    // every href is an anchor in the page
    for (const m of html.matchAll(/\bhref\s*=\s*"([^"]*)"/gi)) expect(m[1]!.startsWith('#')).toBe(true);
    const urls = [...html.matchAll(/\b(?:https?|ftp|wss?):\/\/[^\s"'<>)]+/gi)].map((m) => m[0]);
    expect(new Set(urls)).toEqual(new Set(['http://www.w3.org/2000/svg', 'http://www.w3.org/1999/xlink']));
    expect(html).toContain(`http-equiv="Content-Security-Policy" content="default-src 'none';`);
  });

  test('states the cautions at the top and the bottom', () => {
    const n = html.split(esc(CAUTION)).length - 1;
    expect(n).toBe(2);
    expect(CAUTION).toMatch(/not for navigation or safety-of-life use/);
    expect(CAUTION).toMatch(/checked against control and against the local rules of licensed practice/);
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

  test('every ok session has its plots drawn as SVG, the failed one its reason', () => {
    const secs = sections(html);
    expect(secs).toHaveLength(b.summary.sessions.length);
    for (const [i, s] of b.summary.sessions.entries()) {
      // the plots (the close-ups are figures of their own)
      const svgs = secs[i]!.split('<figure class="plot"').length - 1;
      if (s.status === 'ok') {
        expect(svgs).toBe(s.name.endsWith('-imu') ? PLOTS_PER_SESSION + IMU_PLOTS : PLOTS_PER_SESSION);
        // drawn from the data: lines and symbols, not empty frames
        expect((secs[i]!.match(/role-mark/g) ?? []).length).toBeGreaterThanOrEqual(PLOTS_PER_SESSION * 2);
      } else {
        expect(svgs).toBe(0);
        expect(secs[i]).toContain('no time column found');
      }
    }
  });

  test('flagged fixes are drawn with their own symbols; bridged spans dashed', () => {
    const sec = sections(html)[0]!;
    expect(sec).toContain('flagged by the test');
    expect(sec).toContain('bridged (no fix)');
    // the legend and marks use distinct shapes and a dash pattern
    expect(sec).toMatch(/stroke-dasharray="6,4"/);
  });

  test('a thinned session says so; all its flagged fixes are still listed', () => {
    const i = b.summary.sessions.findIndex((s) => s.name.startsWith('drone'));
    const sec = sections(html)[i]!;
    const p = b.payloads.get(b.summary.sessions[i]!.name)!;
    expect(sec).toMatch(new RegExp(`Plots show ${p.plot.tSec.length} of ${p.epochs} epochs`));
    expect((sec.split('<table class="flagged')[1]!.split('</table>')[0]!.match(/<tr id=/g) ?? []).length).toBe(p.flaggedCount);
  });

  test('names and texts are escaped', async () => {
    const r = { ...session('vehicle', 7, { durationSec: 300 }).result, name: 'a&b <i>x</i>"' };
    const h = await reportHtml(buildSummary('t', 'in<put>', 'default', [okEntry(r, 'x.csv', [], 0)]), new Map([[r.name, reportPayload(r)]]));
    expect(h).not.toContain('<i>x</i>');
    expect(h).toContain('a&amp;b &lt;i&gt;x&lt;/i&gt;&quot;');
    expect(h).toContain('in&lt;put&gt;');
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
    const h = await reportHtml(buildSummary('t', 'in', 'default', [okEntry(r, 'x.csv', [], 0)]), new Map([[r.name, p]]), [ext]);
    const sec = sections(h)[0]!;
    expect(sec.split('<figure class="plot"').length - 1).toBe(PLOTS_PER_SESSION + 1);
    expect(sec).toContain('<h3>Attitude (test extension)</h3>');
  });

  test('an IMU-aided session gets its attitude and bias plots (the IMU extension)', () => {
    const i = b.summary.sessions.findIndex((s) => s.name.endsWith('-imu'));
    const sec = sections(html)[i]!;
    expect(sec).toContain('<h3>IMU: attitude and sensor biases</h3>');
    for (const t of ['Roll and pitch over time', 'Heading over time', 'Attitude standard deviation over time', 'Accelerometer bias over time', 'Gyroscope bias over time'])
      expect(sec).toContain(`<strong>${t}.</strong>`);
    // sessions without IMU fields have none of it
    expect(sections(html)[0]).not.toContain('IMU: attitude');
  });

  test('a payload of another version is not drawn', async () => {
    const r = session('vehicle', 7, { durationSec: 300 }).result;
    const p = { ...reportPayload(r), version: -1 };
    const h = await reportHtml(buildSummary('t', 'in', 'default', [okEntry(r, 'x.csv', [], 0)]), new Map([[r.name, p]]));
    expect(sections(h)[0]).toContain('No plot data of this version');
  });

  test('writeReport writes report.html atomically, leaving no temporary', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'hindcast-report-'));
    await writeReport(dir, b.summary, b.payloads);
    expect(readdirSync(dir)).toEqual([REPORT_FILE]);
    const text = readFileSync(join(dir, REPORT_FILE), 'utf8');
    expect(text.startsWith('<!DOCTYPE html>')).toBe(true);
    expect(sections(text)).toHaveLength(b.summary.sessions.length);
  });
});
