/**
 * A close-up of flagged fixes (closeup-data.ts) in the local frame, east and north in metres at
 * equal scale, zoomed to the burst (its flagged fixes and their smoothed positions) so that metres show: the smoothed track, its
 * 95% error ellipse at every epoch (to scale), the raw fixes kept (grey dots) and flagged (symbols
 * with their ids), and a thin line from each flagged fix to the smoothed position at its epoch.
 */
import type { TopLevelSpec } from 'vega-lite';
import { flagEncoding, flagMark, r4 } from './chart-common.js';
import { ellipsePoints, equalAxes } from './chart-track.js';
import { isKeptFix, type Closeup } from './closeup-data.js';

export const CLOSEUP_WIDTH = 300;
/** Least margin (m) around the flagged fixes in a close-up. */
export const CLOSEUP_PAD_M = 8;
/** Most ellipses drawn in one close-up (every epoch in the frame up to this, else evenly spaced), and their vertices. */
const ELLIPSES_MAX = 25;
const ELLIPSE_VERTICES = 16;

/** The label of a flagged mark (its aria-label in the SVG): "flag <id>", read by the page's script and tests. */
export function flagLabel(id: string): string {
  return `flag ${id}`;
}

export function closeupChart(c: Closeup, title: string): TopLevelSpec {
  const n = c.tSec.length;
  const flags = c.flags.map((f) => ({ e: r4(f.east), n: r4(f.north), mark: flagMark(f.status)?.label ?? 'flagged by the test', id: f.id, label: flagLabel(f.id) }));
  const offsets: Array<{ e: number | null; n: number | null; id: string; k: number }> = [];
  for (const f of c.flags) {
    offsets.push({ e: r4(f.east), n: r4(f.north), id: f.id, k: 0 });
    offsets.push({ e: r4(f.trackEast), n: r4(f.trackNorth), id: f.id, k: 1 });
  }
  // zoomed to the flagged fixes and their smoothed positions, padded by a quarter of that extent
  // and at least CLOSEUP_PAD_M (so a few-metre offset and the ellipses show); the neighbours run
  // on beyond the frame (clipped)
  let eMin = Infinity, eMax = -Infinity, nMin = Infinity, nMax = -Infinity;
  const grow = (e: number, nn: number) => {
    if (!Number.isFinite(e) || !Number.isFinite(nn)) return;
    eMin = Math.min(eMin, e);
    eMax = Math.max(eMax, e);
    nMin = Math.min(nMin, nn);
    nMax = Math.max(nMax, nn);
  };
  if (c.flags.length) for (const f of c.flags) (grow(f.east, f.north), grow(f.trackEast, f.trackNorth));
  else for (let k = 0; k < n; k++) grow(c.east[k]!, c.north[k]!);
  if (!Number.isFinite(eMin)) [eMin, eMax, nMin, nMax] = [-1, 1, -1, 1];
  const pad = Math.max(CLOSEUP_PAD_M, 0.25 * Math.max(eMax - eMin, nMax - nMin));
  const ax = equalAxes(eMin - pad, eMax + pad, nMin - pad, nMax + pad, CLOSEUP_WIDTH, 200, 360);
  // only what falls in the frame is drawn (a fast track leaves most of its neighbours outside)
  const inside = (e: number, nn: number, r = 0) => e + r >= ax.x[0] && e - r <= ax.x[1] && nn + r >= ax.y[0] && nn - r <= ax.y[1];
  const track: Array<{ e: number | null; n: number | null; k: number; run: number }> = [];
  let run = 0;
  const kept: Array<{ e: number | null; n: number | null }> = [];
  const shown = (k: number) => k >= 0 && k < n && inside(c.east[k]!, c.north[k]!);
  for (let k = 0; k < n; k++) {
    // a track vertex just outside is kept where its neighbour is inside, so the line reaches the edge
    if (shown(k - 1) || shown(k) || shown(k + 1)) {
      // a new run where the track left the frame and came back (no line across the gap)
      if (track.length && track[track.length - 1]!.k !== k - 1) run++;
      track.push({ e: r4(c.east[k]!), n: r4(c.north[k]!), k, run });
    }
    if (isKeptFix(c.status[k]!) && Number.isFinite(c.rawEast[k]!) && inside(c.rawEast[k]!, c.rawNorth[k]!)) kept.push({ e: r4(c.rawEast[k]!), n: r4(c.rawNorth[k]!) });
  }
  const within: number[] = [];
  for (let k = 0; k < n; k++) if (Number.isFinite(c.ell95MajorM[k]!) && inside(c.east[k]!, c.north[k]!, c.ell95MajorM[k]!)) within.push(k);
  const step = Math.max(1, Math.ceil(within.length / ELLIPSES_MAX));
  const ell: Array<{ e: number | null; n: number | null; id: number; k: number }> = [];
  for (let q = 0; q < within.length; q += step) {
    const k = within[q]!;
    const pts = ellipsePoints({ tSec: c.tSec[k]!, east: c.east[k]!, north: c.north[k]!, majorM: c.ell95MajorM[k]!, minorM: c.ell95MinorM[k]!, azimuthDeg: c.ell95AzimuthDeg[k]! }, ELLIPSE_VERTICES);
    pts.forEach(([e, nn], i) => ell.push({ e: r4(e), n: r4(nn), id: k, k: i }));
  }
  const x = { field: 'e', type: 'quantitative', scale: { domain: ax.x, nice: false, zero: false }, axis: { title: 'east (m)', tickCount: 5 } };
  const y = { field: 'n', type: 'quantitative', scale: { domain: ax.y, nice: false, zero: false }, axis: { title: 'north (m)', tickCount: 5 } };
  const layers: unknown[] = [
    { data: { values: ell }, mark: { type: 'line', strokeWidth: 0.7, color: '#7f8c8d', opacity: 0.7, clip: true, aria: false }, encoding: { x, y, detail: { field: 'id' }, order: { field: 'k' } } },
    { data: { values: offsets }, mark: { type: 'line', strokeWidth: 0.8, color: '#c0392b', strokeDash: [2, 2], clip: true, aria: false }, encoding: { x, y, detail: { field: 'id' }, order: { field: 'k' } } },
    { data: { values: track }, mark: { type: 'line', strokeWidth: 1.6, color: '#1f4e79', clip: true, aria: false }, encoding: { x, y, detail: { field: 'run' }, order: { field: 'k' } } },
  ];
  if (kept.length)
    layers.push({ data: { values: kept }, mark: { type: 'point', shape: 'circle', size: 14, filled: true, color: '#555555', opacity: 0.75, clip: true, aria: false }, encoding: { x, y } });
  if (flags.length) {
    layers.push({ data: { values: flags }, mark: { type: 'point', size: 70, filled: true, opacity: 0.95, clip: true }, encoding: { x, y, ...flagEncoding(), description: { field: 'label' } } });
    // ids above and below their marks by turns, so that the labels of a dense burst do not all overlap
    for (const [i, dy] of [[0, -7], [1, 13]] as const) {
      const part = flags.filter((_, q) => q % 2 === i);
      if (part.length) layers.push({ data: { values: part }, mark: { type: 'text', dx: 6, dy, align: 'left', fontSize: 10, color: '#000000', clip: true, aria: false }, encoding: { x, y, text: { field: 'id' } } });
    }
  }
  return { description: title, width: CLOSEUP_WIDTH, height: ax.height, layer: layers } as TopLevelSpec;
}
