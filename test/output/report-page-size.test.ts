/**
 * A long log's session page stays small (the plots are drawn at what a screen shows: thinned
 * epochs, one path where a point each would do, coordinates to 0.1 px) and still holds every
 * flagged fix: its id on the track plot, its row in the table, its close-up link. And the compact
 * drawing helpers draw the same shapes as the plain ones.
 */
import { describe, expect, test } from 'vitest';
import { reportPayload, sessionPageHtml } from '../../src/output/report/index.js';
import { okEntry } from '../../src/output/summary.js';
import { ellipseArcPath, ellipsePoints } from '../../src/output/report/chart-track.js';
import { roundSvgGeometry, straightRunsOut } from '../../src/output/report/render-svg.js';
import { session } from './fixtures.js';

/** The page of a one-hour 1 Hz log measured 380 kB (1.35 MB before the plots were thinned); this bound leaves room for wording. */
const ONE_HOUR_PAGE_MAX_BYTES = 450_000;

describe('the page of a one-hour 1 Hz log', () => {
  const r = session('vehicle', 9000, { durationSec: 3600 }, 'long').result;
  const p = reportPayload(r);
  const page = sessionPageHtml(okEntry(r, 'long.csv', [], 0), p, { tool: 'hindcast', version: 't', profile: 'default' });

  test('stays under the size bound and draws no element a plotted point', async () => {
    const html = await page;
    expect(p.flagged.length).toBeGreaterThan(20);
    expect(Buffer.byteLength(html)).toBeLessThanOrEqual(ONE_HOUR_PAGE_MAX_BYTES);
    const track = html.split('<figure class="plot">')[1]!.split('</figure>')[0]!;
    // one path a listed flagged fix, the rest (line runs, dots, ellipses, axes, legend) a few hundred at most, for 3600 epochs
    expect((track.match(/<path\b/g) ?? []).length).toBeLessThan(p.flagged.length + 300);
    // no coordinate with more than one decimal in any drawn path
    expect(html).not.toMatch(/ d="[^"]*\d\.\d\d/);
  });

  test('still holds every flagged fix: its mark on the track plot, its table row, its close-up', async () => {
    const html = await page;
    const track = html.split('<figure class="plot">')[1]!.split('</figure>')[0]!;
    for (const f of p.flagged) {
      expect(html, f.id).toContain(`<tr id="session-1-${f.id}" data-flag="${f.id}"`);
      if (f.epoch >= 0) expect(track, f.id).toContain(`aria-label="flag ${f.id}"`);
      if (f.closeup >= 0) {
        const fig = html.split(`id="session-1-closeup-${f.closeup + 1}"`)[1]!.split('</figure>')[0]!;
        expect(fig, f.id).toContain(`aria-label="flag ${f.id}"`);
      }
    }
  });
});

describe('compact drawing', () => {
  test('an ellipse as two SVG arcs starts and turns at the ends of the major axis of the polygon ellipse (SVG 1.1, 9.3.8 elliptical arc; y down)', () => {
    const e = { tSec: 0, east: 10, north: -4, majorM: 6, minorM: 2, azimuthDeg: 30 };
    // pixels: x = east, y = −north (one pixel a metre)
    const pts = ellipsePoints(e, 4).map(([x, n]) => [x, -n] as const);
    const d = ellipseArcPath(e.east, -e.north, e.majorM, e.minorM, e.azimuthDeg);
    const nums = d.match(/-?\d+(\.\d+)?/g)!.map(Number);
    const r1 = (v: number) => Math.round(v * 10) / 10;
    // M at the major axis end (vertex 0), first arc to the opposite end (vertex 2), radii and rotation (azimuth − 90°)
    expect(nums.slice(0, 2)).toEqual([r1(pts[0]![0]), r1(pts[0]![1])]);
    expect(nums.slice(2, 5)).toEqual([6, 2, -60]);
    expect(nums.slice(7, 9)).toEqual([r1(pts[2]![0]), r1(pts[2]![1])]);
  });

  test('a polyline without its straight runs keeps its corners and ends; other paths are left alone (common practice)', () => {
    expect(straightRunsOut('M0,5L1,5L2,5L3,5L4,7L4,8L4,9L5,9')).toBe('M0,5L3,5L4,7L4,9L5,9');
    expect(straightRunsOut('M1.2,0A1.2,1.2,0,1,1,-1.2,0')).toBe('M1.2,0A1.2,1.2,0,1,1,-1.2,0');
    expect(roundSvgGeometry('<path transform="translate(506.21329607161243,112.6)" d="M0.04,1.26L2,3"/><text>2619.4726</text>')).toBe('<path transform="translate(506.2,112.6)" d="M0,1.3L2,3"/><text>2619.4726</text>');
  });
});
