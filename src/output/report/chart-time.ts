/**
 * Charts over time (UTC): horizontal and vertical sd, the test statistic with its gate threshold,
 * residuals raw − smoothed, speed; and `seriesChart`, the generic lines-over-time chart that they
 * and report extensions (IMU, …) are built from. Series are told apart by dash as well as colour;
 * lines break between segments and where a series has no value; bridged spans are grey dashed bands.
 */
import type { TopLevelSpec } from 'vega-lite';
import { bridgedBands, CHART_WIDTH, flagEncoding, flaggedRows, flagSymbolsSvg, r4, TIME_CHART_HEIGHT, timeX } from './chart-common.js';
import { withSvgOverlay, type SvgOverlay } from './render-svg.js';

const FLAG_LAYER = 'flags';
import type { PlotSeries } from './types.js';

const DASHES: number[][] = [[1, 0], [6, 3], [2, 2], [8, 3, 2, 3]];
const COLORS = ['#1f4e79', '#d35400', '#117a65', '#6c3483'];

export interface SeriesSpec {
  name: string;
  values: ArrayLike<number>;
}

export interface SeriesChartOptions {
  description: string;
  yTitle: string;
  /** Vega-Lite scale type of y ('linear', 'symlog', …). */
  yScale?: Record<string, unknown>;
  /** Flagged epochs: their y value at plotted point k (non-finite: not drawn). */
  flaggedY?: (k: number) => number;
  /** Break a line where consecutive values jump by more than this (e.g. 180 for a heading wrapping at 360°). */
  breakJump?: number;
}

/**
 * Leave out the inner rows of a stretch of equal values within one line (a constant threshold, a
 * steady sd): the line drawn is the same, with two points where there were hundreds.
 */
function dropFlatRuns(rows: Array<{ t: number; v: number | null; s: string; run: number }>): void {
  let w = 0;
  for (let i = 0; i < rows.length; i++) {
    const a = rows[i - 1], b = rows[i]!, c = rows[i + 1];
    const inner = a && c && a.run === b.run && c.run === b.run && a.v === b.v && c.v === b.v;
    if (!inner) rows[w++] = b;
  }
  rows.length = w;
}

/** Lines over time, one per series (dash and colour by series), broken between segments. */
export function seriesChart(p: PlotSeries, series: SeriesSpec[], bridged: Array<[number, number]>, opt: SeriesChartOptions): TopLevelSpec {
  // a line is broken where a series has no value (e.g. no residual across a bridged span) and between segments
  const rows: Array<{ t: number; v: number | null; s: string; run: number }> = [];
  let run = 0;
  for (const s of series) {
    let open = false;
    let last = NaN;
    for (let k = 0; k < p.tSec.length; k++) {
      const v = s.values[k]!;
      const jump = opt.breakJump !== undefined && Math.abs(v - last) > opt.breakJump;
      if (open && (!Number.isFinite(v) || p.segment[k] !== p.segment[k - 1] || jump)) {
        run++;
        open = false;
      }
      if (!Number.isFinite(v)) continue;
      rows.push({ t: p.tSec[k]! * 1000, v: r4(v), s: s.name, run });
      open = true;
      last = v;
    }
    run++;
  }
  dropFlatRuns(rows);
  const names = series.map((s) => s.name);
  const y = { field: 'v', type: 'quantitative', scale: { zero: false, ...(opt.yScale ?? {}) }, axis: { title: opt.yTitle } };
  const layers: unknown[] = [];
  const bands = bridgedBands(bridged);
  if (bands) layers.push(bands);
  layers.push({
    data: { values: rows },
    mark: { type: 'line', strokeWidth: 1.1, clip: true },
    encoding: {
      x: timeX('t'),
      y,
      detail: { field: 'run' },
      color: { field: 's', type: 'nominal', scale: { domain: names, range: COLORS.slice(0, names.length) }, legend: { title: null, orient: 'bottom' } },
      strokeDash: { field: 's', type: 'nominal', scale: { domain: names, range: DASHES.slice(0, names.length) }, legend: { title: null, orient: 'bottom' } },
    },
  });
  let overlay: SvgOverlay | undefined;
  if (opt.flaggedY) {
    const flagged = flaggedRows(p, opt.flaggedY);
    if (flagged.length) {
      // the symbols (shape and fill by kind, legend as before) drawn by renderSvg as one path a
      // kind into the empty 'flags' layer: an element a symbol cost about 300 bytes
      layers.push({
        name: FLAG_LAYER,
        data: { values: [] },
        mark: { type: 'point', size: 50, filled: true, clip: true, aria: false },
        encoding: { x: timeX('t'), y: { field: 'v', type: 'quantitative' }, ...flagEncoding() },
      });
      overlay = (scale) => ({ [FLAG_LAYER]: flagSymbolsSvg(flagged, scale('x'), scale('y'), CHART_WIDTH, TIME_CHART_HEIGHT) });
    }
  }
  const spec = {
    description: opt.description,
    width: CHART_WIDTH,
    height: TIME_CHART_HEIGHT,
    layer: layers,
  } as TopLevelSpec;
  return overlay ? withSvgOverlay(spec, overlay) : spec;
}

export function sdChart(p: PlotSeries, bridged: Array<[number, number]>, hasHeight: boolean): TopLevelSpec {
  const series: SeriesSpec[] = [{ name: 'horizontal sd', values: p.sdHorizontalM }];
  if (hasHeight) series.push({ name: 'vertical sd', values: p.sdUpM });
  return seriesChart(p, series, bridged, { description: 'Standard deviation of the smoothed position over time', yTitle: 'sd (m)' });
}

export function nisChart(p: PlotSeries, bridged: Array<[number, number]>): TopLevelSpec {
  return seriesChart(
    p,
    [
      { name: 'review statistic of the fix against the smoothed track', values: p.nis },
      { name: 'review threshold (chi-square)', values: p.nisThreshold },
    ],
    bridged,
    { description: 'Two-sided test statistic of each fix against the smoothed track and its chi-square threshold', yTitle: 'test statistic (χ², symlog scale)', yScale: { type: 'symlog' }, flaggedY: (k) => p.nis[k]! },
  );
}

export function residualChart(p: PlotSeries, bridged: Array<[number, number]>, hasHeight: boolean): TopLevelSpec {
  const series: SeriesSpec[] = [
    { name: 'east', values: p.resEast },
    { name: 'north', values: p.resNorth },
  ];
  if (hasHeight) series.push({ name: 'up', values: p.resUp });
  // a flagged fix is marked at its largest component
  const biggest = (k: number): number => {
    let best = NaN;
    for (const s of series) {
      const v = s.values[k]!;
      if (Number.isFinite(v) && !(Math.abs(v) <= Math.abs(best))) best = v;
    }
    return best;
  };
  return seriesChart(p, series, bridged, { description: 'Residuals, raw fix minus smoothed position', yTitle: 'raw − smoothed (m, symlog)', yScale: { type: 'symlog' }, flaggedY: biggest });
}

export function speedChart(p: PlotSeries, bridged: Array<[number, number]>): TopLevelSpec {
  return seriesChart(p, [{ name: 'horizontal speed', values: p.speedMps }], bridged, { description: 'Smoothed horizontal speed', yTitle: 'speed (m/s)', yScale: { zero: true } });
}
