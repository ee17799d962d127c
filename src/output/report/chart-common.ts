/**
 * What the report's charts share: sizes, the UTC time axis, and the marks that tell flagged fixes,
 * user decisions and bridged spans apart by shape and dash as well as by colour (so they read in
 * grey print and for colour-blind readers).
 */
import { STATUS } from '../../session/result/result.js';
import type { PlotSeries } from './types.js';

export const CHART_WIDTH = 620;
export const TIME_CHART_HEIGHT = 170;

/** Marker of each kind of flagged epoch: legend label, symbol shape, colour. */
export const FLAG_MARKS: ReadonlyArray<{ status: number; label: string; shape: string; color: string }> = [
  { status: STATUS.outlier, label: 'flagged by the test', shape: 'cross', color: '#c0392b' },
  { status: STATUS.userRejected, label: 'rejected by you', shape: 'triangle-down', color: '#7d3c98' },
  { status: STATUS.userKept, label: 'kept by you', shape: 'diamond', color: '#1e8449' },
];

export function flagMark(status: number): (typeof FLAG_MARKS)[number] | undefined {
  return FLAG_MARKS.find((m) => m.status === status);
}

/**
 * Shape-and-fill encoding of the `mark` field of flagged-epoch rows (fill, not color, so its scale
 * and legend stay apart from the colour of the lines and merge with the shape legend).
 */
export function flagEncoding(): Record<string, unknown> {
  const domain = FLAG_MARKS.map((m) => m.label);
  return {
    shape: { field: 'mark', type: 'nominal', scale: { domain, range: FLAG_MARKS.map((m) => m.shape) }, legend: { title: null, orient: 'bottom' } },
    fill: { field: 'mark', type: 'nominal', scale: { domain, range: FLAG_MARKS.map((m) => m.color) }, legend: { title: null, orient: 'bottom' } },
  };
}

/** x encoding of time: UTC, labelled hh:mm:ss. */
export function timeX(field = 't'): Record<string, unknown> {
  return { field, type: 'temporal', scale: { type: 'utc' }, axis: { title: 'time (UTC)', format: '%H:%M:%S', labelOverlap: true } };
}

/** Grey, dash-outlined bands over the bridged spans (no fix: the track is a prediction there). */
export function bridgedBands(spans: Array<[number, number]>): Record<string, unknown> | null {
  if (spans.length === 0) return null;
  return {
    data: { values: spans.map(([a, b]) => ({ t: a * 1000, t2: b * 1000 })) },
    mark: { type: 'rect', fill: '#999999', fillOpacity: 0.18, stroke: '#666666', strokeDash: [3, 3], strokeWidth: 0.8 },
    encoding: { x: timeX('t'), x2: { field: 't2' } },
  };
}

/** Flagged epochs of the plotted series with a y value from `y(k)` (rows with a non-finite y are left out). */
export function flaggedRows(p: PlotSeries, y: (k: number) => number): Array<{ t: number; y: number; mark: string }> {
  const rows: Array<{ t: number; y: number; mark: string }> = [];
  for (let k = 0; k < p.tSec.length; k++) {
    const m = flagMark(p.status[k]!);
    if (!m) continue;
    const v = y(k);
    if (Number.isFinite(v)) rows.push({ t: p.tSec[k]! * 1000, y: v, mark: m.label });
  }
  return rows;
}

/** Outline of each symbol shape about 7 px across, relative to its centre (SVG path after an M to the centre). */
const SYMBOL_OUTLINE: Record<string, string> = {
  cross: 'm-3.5,-1.4v2.8h2.1v2.1h2.8v-2.1h2.1v-2.8h-2.1v-2.1h-2.8v2.1z',
  'triangle-down': 'm-4,-2.6h8l-4,6.9z',
  diamond: 'm0,-4.5l3.9,4.5l-3.9,4.5l-3.9,-4.5z',
};

/**
 * Flagged rows as SVG symbols, one path a kind (shape and colour of FLAG_MARKS), at the pixels of
 * the given scales; rows outside the w × h plot area are left out.
 */
export function flagSymbolsSvg(rows: ReadonlyArray<{ t: number; y: number; mark: string }>, sx: (v: number) => number, sy: (v: number) => number, w: number, h: number, opacity = 0.7): string {
  let out = '';
  for (const m of FLAG_MARKS) {
    let d = '';
    for (const r of rows) {
      if (r.mark !== m.label) continue;
      const x = sx(r.t), y = sy(r.y);
      if (x >= -5 && x <= w + 5 && y >= -5 && y <= h + 5) d += `M${Math.round(x * 10) / 10},${Math.round(y * 10) / 10}${SYMBOL_OUTLINE[m.shape]}`;
    }
    if (d) out += `<path d="${d}" fill="${m.color}" opacity="${opacity}"/>`;
  }
  return out;
}

/**
 * One flagged symbol as an SVG path of its own (the page's script and the tests find it by its
 * aria-label, "flag <id>" for a listed fix), centred at pixel (x, y).
 */
export function flagSymbolPath(x: number, y: number, mark: (typeof FLAG_MARKS)[number], label: string, opacity: number): string {
  return `<path role="graphics-symbol" aria-roledescription="point" aria-label="${label.replace(/&/g, '&amp;').replace(/"/g, '&quot;').replace(/</g, '&lt;')}" d="M${Math.round(x * 10) / 10},${Math.round(y * 10) / 10}${SYMBOL_OUTLINE[mark.shape]}" fill="${mark.color}" opacity="${opacity}"/>`;
}

/** Round for chart data (keeps the inline SVG data small). */
export function r4(v: number): number | null {
  return Number.isFinite(v) ? Math.round(v * 1e4) / 1e4 : null;
}

/** The label of a flagged mark (its aria-label in the SVG): "flag <id>", read by the page's script and tests. */
export function flagLabel(id: string): string {
  return `flag ${id}`;
}
