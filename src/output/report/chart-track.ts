/**
 * The track in the local frame (east, north in metres, equal scale on both axes): the smoothed
 * track, solid where fixes support it and dashed across bridged spans, 95% error ellipses at
 * intervals (to scale), the raw fixes kept (small grey dots), the raw positions of flagged fixes and
 * of the user's decisions as symbols, each flagged symbol labelled "flag <id>" (its aria-label) so
 * that the page links it to its table row.
 */
import type { TopLevelSpec } from 'vega-lite';
import { STATUS } from '../../session/result/result.js';
import { CHART_WIDTH, FLAG_MARKS, flagEncoding, flagLabel, flagMark, flagSymbolPath, flagSymbolsSvg, r4 } from './chart-common.js';
import type { EllipseMark, PlotSeries } from './types.js';
import { CLOSEUP_JOIN_EPOCHS, isKeptFix } from './closeup-data.js';
import { px1, withSvgOverlay, type SvgOverlay } from './render-svg.js';

/** Bursts labelled on the track plot at most (more would cover the track; the close-ups label every fix). */
export const TRACK_LABELS_MAX = 30;

const ELLIPSE_VERTICES = 24;
/** Kept raw fixes closer than this (px) on the track plot are drawn as one dot (the dot is about 1.4 px across). */
export const KEPT_CELL_PX = 1.5;
const KEPT_LAYER = 'kept';
const ELLIPSE_LAYER = 'ellipses';
const FLAG_LAYER = 'flagged';
export const TRACK_KINDS = ['smoothed track', 'bridged (no fix)'] as const;

/** Points of a 95% ellipse (azimuth clockwise from north) around its centre, closed. */
export function ellipsePoints(e: EllipseMark, vertices = ELLIPSE_VERTICES): Array<[number, number]> {
  const az = (e.azimuthDeg * Math.PI) / 180;
  // major axis direction (east, north) = (sin az, cos az); minor axis perpendicular
  const ue = Math.sin(az), un = Math.cos(az);
  const pts: Array<[number, number]> = [];
  for (let i = 0; i <= vertices; i++) {
    const th = (2 * Math.PI * i) / vertices;
    const a = e.majorM * Math.cos(th), b = e.minorM * Math.sin(th);
    pts.push([e.east + a * ue + b * un, e.north + a * un - b * ue]);
  }
  return pts;
}

/**
 * A 95% ellipse as an SVG path of two elliptical arcs (exact, about 60 bytes), in pixels of a plot
 * with the same scale on both axes and y down: centre (x, y), semi-axes in px, azimuth of the major
 * axis clockwise from north (up), so the major axis lies (azimuth − 90)° clockwise from +x.
 */
export function ellipseArcPath(x: number, y: number, majorPx: number, minorPx: number, azimuthDeg: number): string {
  const rot = azimuthDeg - 90;
  const th = (rot * Math.PI) / 180;
  const dx = majorPx * Math.cos(th), dy = majorPx * Math.sin(th);
  const r = (v: number) => Math.round(v * 10) / 10;
  const a = `A${r(majorPx)},${r(minorPx)},${r(rot)},0,1,`;
  return `M${r(x + dx)},${r(y + dy)}${a}${r(x - dx)},${r(y - dy)}${a}${r(x + dx)},${r(y + dy)}Z`;
}

/** Domains giving the same metres per pixel on both axes, and the plot height for a fixed width. */
export function equalAxes(eMin: number, eMax: number, nMin: number, nMax: number, width: number, hMin = 260, hMax = 620): { x: [number, number]; y: [number, number]; height: number } {
  let dx = Math.max(eMax - eMin, 1);
  let dy = Math.max(nMax - nMin, 1);
  dx *= 1.06;
  dy *= 1.06;
  const height = Math.round(Math.min(hMax, Math.max(hMin, (width * dy) / dx)));
  const mPerPx = Math.max(dx / width, dy / height);
  const cx = 0.5 * (eMin + eMax), cy = 0.5 * (nMin + nMax);
  const hx = 0.5 * mPerPx * width, hy = 0.5 * mPerPx * height;
  return { x: [cx - hx, cx + hx], y: [cy - hy, cy + hy], height };
}

type Coord = number | null;
type TrackPoint = { e: Coord; n: Coord; part: number; kind: string; k: number };
type FlaggedPoint = { e: Coord; n: Coord; mark: string; label: string; listed: boolean };
type BurstLabel = { e: Coord; n: Coord; text: string; epoch: number; count: number };
type Axes = ReturnType<typeof equalAxes>;

/** @param flagIds the id of each listed flagged fix by its epoch in the full session */
export function trackChart(p: PlotSeries, ellipses: EllipseMark[], name: string, flagIds: ReadonlyMap<number, string> = new Map()): TopLevelSpec {
  const line = trackRuns(p);
  const ell: Array<{ e: Coord; n: Coord; id: number; k: number }> = [];
  ellipses.forEach((el, id) => ellipsePoints(el).forEach(([e, n], k) => ell.push({ e: r4(e), n: r4(n), id, k })));
  const { flagged, labels, keptAt } = flaggedFixes(p, flagIds);
  let eMin = Infinity, eMax = -Infinity, nMin = Infinity, nMax = -Infinity;
  for (const q of [...line, ...ell, ...flagged]) {
    if (q.e === null || q.n === null) continue;
    eMin = Math.min(eMin, q.e);
    eMax = Math.max(eMax, q.e);
    nMin = Math.min(nMin, q.n);
    nMax = Math.max(nMax, q.n);
  }
  if (!Number.isFinite(eMin)) [eMin, eMax, nMin, nMax] = [-1, 1, -1, 1];
  const ax = equalAxes(eMin, eMax, nMin, nMax, CHART_WIDTH);
  return withSvgOverlay({
    description: `Track of ${name} in the local frame`,
    width: CHART_WIDTH,
    height: ax.height,
    layer: trackLayers(line, flagged, labels, ax),
  } as TopLevelSpec, trackOverlay(p, keptAt, ellipses, flagged, ax));
}

/** The track as runs of one kind within a segment; a bridged run includes its neighbours so it joins up. */
function trackRuns(p: PlotSeries): TrackPoint[] {
  const line: TrackPoint[] = [];
  let part = -1;
  let prevKind = '';
  let prevSeg = -1;
  const M = p.tSec.length;
  for (let k = 0; k < M; k++) {
    const kind = p.status[k] === STATUS.bridged ? TRACK_KINDS[1] : TRACK_KINDS[0];
    if (kind !== prevKind || p.segment[k] !== prevSeg) {
      part++;
      // start the new run at the previous point so runs touch (same segment only)
      if (k > 0 && p.segment[k] === prevSeg) line.push({ e: r4(p.east[k - 1]!), n: r4(p.north[k - 1]!), part, kind, k: k - 1 });
    }
    line.push({ e: r4(p.east[k]!), n: r4(p.north[k]!), part, kind, k });
    prevKind = kind;
    prevSeg = p.segment[k]!;
  }
  return line;
}

/** The flagged fixes' marks, one text label a burst (its first id, and how many more it holds), and the kept raw fixes. */
function flaggedFixes(p: PlotSeries, flagIds: ReadonlyMap<number, string>): { flagged: FlaggedPoint[]; labels: BurstLabel[]; keptAt: number[] } {
  const flagged: FlaggedPoint[] = [];
  const labels: BurstLabel[] = [];
  const keptAt: number[] = [];
  const M = p.tSec.length;
  for (let k = 0; k < M; k++) {
    if (isKeptFix(p.status[k]!) && Number.isFinite(p.rawEast[k]!)) keptAt.push(k);
    const m = flagMark(p.status[k]!);
    // the raw fix where there is one (that is what was judged), else the smoothed position
    if (!m) continue;
    const e = Number.isFinite(p.rawEast[k]!) ? p.rawEast[k]! : p.east[k]!;
    const n = Number.isFinite(p.rawNorth[k]!) ? p.rawNorth[k]! : p.north[k]!;
    const id = flagIds.get(p.epoch[k]!);
    flagged.push({ e: r4(e), n: r4(n), mark: m.label, label: id ? flagLabel(id) : m.label, listed: id !== undefined });
    if (!id) continue;
    const last = labels.at(-1);
    if (last && p.epoch[k]! - last.epoch <= CLOSEUP_JOIN_EPOCHS) {
      last.count++;
      last.epoch = p.epoch[k]!;
    } else labels.push({ e: r4(e), n: r4(n), text: id, epoch: p.epoch[k]!, count: 1 });
  }
  for (const l of labels) if (l.count > 1) l.text += ` +${l.count - 1}`;
  return { flagged, labels, keptAt };
}

/**
 * The kept raw fixes, one dot a cell of KEPT_CELL_PX (more in one cell draw the same dot), all of
 * them one SVG path of zero-length round-capped segments; and the 95% ellipses, one path each:
 * drawn by renderSvg into the empty 'kept' and 'ellipses' layers (a chart library's element a dot
 * cost 1–2 kB and most of the plot's time); and the flagged symbols.
 */
function trackOverlay(p: PlotSeries, keptAt: number[], ellipses: EllipseMark[], flagged: FlaggedPoint[], ax: Axes): SvgOverlay {
  return (scale) => {
    const sx = scale('x'), sy = scale('y');
    const cells = new Set<string>();
    let dots = '';
    for (const k of keptAt) {
      const x = sx(p.rawEast[k]!), y = sy(p.rawNorth[k]!);
      if (!(x >= 0 && x <= CHART_WIDTH && y >= 0 && y <= ax.height)) continue;
      const key = `${Math.floor(x / KEPT_CELL_PX)},${Math.floor(y / KEPT_CELL_PX)}`;
      if (cells.has(key)) continue;
      cells.add(key);
      dots += `M${px1(x)},${px1(y)}h0`;
    }
    let rings = '';
    const pxPerM = sx(1) - sx(0);
    for (const el of ellipses)
      if ([el.east, el.north, el.majorM, el.minorM, el.azimuthDeg].every(Number.isFinite)) rings += `<path d="${ellipseArcPath(sx(el.east), sy(el.north), el.majorM * pxPerM, el.minorM * pxPerM, el.azimuthDeg)}"/>`;
    // a listed fix (with an id, linked to its row) one path each; the unlisted ones one path a kind
    let symbols = '';
    const unlisted: Array<{ t: number; y: number; mark: string }> = [];
    for (const f of flagged) {
      if (f.e === null || f.n === null) continue;
      const m = FLAG_MARKS.find((q) => q.label === f.mark)!;
      if (f.listed) symbols += flagSymbolPath(sx(f.e), sy(f.n), m, f.label, 0.9);
      else unlisted.push({ t: f.e, y: f.n, mark: f.mark });
    }
    symbols += flagSymbolsSvg(unlisted, sx, sy, CHART_WIDTH, ax.height, 0.9);
    return {
      ...(flagged.length ? { [FLAG_LAYER]: symbols } : {}),
      [KEPT_LAYER]: dots ? `<path d="${dots}" fill="none" stroke="#777777" stroke-width="2.8" stroke-linecap="round" opacity="0.55"/>` : '',
      [ELLIPSE_LAYER]: rings ? `<g fill="none" stroke="#5d6d7e" stroke-width="0.8" opacity="0.8">${rings}</g>` : '',
    };
  };
}

/** The chart's layers: the empty layers the overlay draws into, the track, its start, the burst labels. */
function trackLayers(line: TrackPoint[], flagged: FlaggedPoint[], labels: BurstLabel[], ax: Axes): unknown[] {
  const x = { field: 'e', type: 'quantitative', scale: { domain: ax.x, nice: false, zero: false }, axis: { title: 'east (m)' } };
  const y = { field: 'n', type: 'quantitative', scale: { domain: ax.y, nice: false, zero: false }, axis: { title: 'north (m)' } };
  const start = line.length ? [{ e: line[0]!.e, n: line[0]!.n, label: 'start' }] : [];
  const layers: unknown[] = [
    {
      name: KEPT_LAYER,
      data: { values: [] },
      mark: { type: 'point', clip: true, aria: false },
      encoding: { x, y },
    },
    {
      name: ELLIPSE_LAYER,
      data: { values: [] },
      mark: { type: 'line', clip: true, aria: false },
      encoding: { x, y },
    },
    {
      data: { values: line },
      mark: { type: 'line', strokeWidth: 1.6, color: '#1f4e79', clip: true },
      encoding: {
        x, y, detail: { field: 'part' }, order: { field: 'k' },
        strokeDash: { field: 'kind', type: 'nominal', scale: { domain: [...TRACK_KINDS], range: [[1, 0], [6, 4]] }, legend: { title: null, orient: 'bottom' } },
      },
    },
    {
      data: { values: start },
      mark: { type: 'point', shape: 'square', size: 70, filled: false, color: '#000000', strokeWidth: 1.5 },
      encoding: { x, y },
    },
    {
      data: { values: start },
      mark: { type: 'text', dx: 8, dy: -8, align: 'left', fontSize: 11 },
      encoding: { x, y, text: { field: 'label' } },
    },
  ];
  // the flagged symbols (legend from the empty layer's scales) drawn by the overlay, one path each
  if (flagged.length)
    layers.push({
      name: FLAG_LAYER,
      data: { values: [] },
      mark: { type: 'point', size: 60, filled: true, opacity: 0.9, clip: true },
      encoding: { x, y, ...flagEncoding() },
    });
  if (labels.length && labels.length <= TRACK_LABELS_MAX)
    layers.push({
      data: { values: labels },
      mark: { type: 'text', dx: 6, dy: -6, align: 'left', fontSize: 10, color: '#7b241c', clip: true, aria: false },
      encoding: { x, y, text: { field: 'text' } },
    });
  return layers;
}
