/**
 * What the report's charts share: sizes, the UTC time axis, and the marks that tell flagged fixes,
 * user decisions and bridged spans apart by shape and dash as well as by colour (so they read in
 * grey print and for colour-blind readers).
 */
import { STATUS } from '../../session/result.js';
import type { PlotSeries } from './payload.js';

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

/** Round for chart data (keeps the inline SVG data small). */
export function r4(v: number): number | null {
  return Number.isFinite(v) ? Math.round(v * 1e4) / 1e4 : null;
}
