/**
 * A close-up of flagged fixes (closeup-data.ts) in the local frame, east and north in metres at
 * equal scale, zoomed to the burst (its flagged fixes and their smoothed positions) so that metres
 * show: the smoothed track, its 95% error ellipse at every epoch (to scale), the raw fixes kept
 * (grey dots) and flagged (symbols with their ids), and a thin line from each flagged fix to the
 * smoothed position at its epoch. Written as SVG text directly (a page holds up to CLOSEUPS_MAX of
 * them, and a chart library's view costs about 18 ms each): one path per kind of line, one per
 * ellipse, one for all kept dots, one symbol per flagged fix (aria-label "flag <id>"), style by the
 * page's CSS classes (CLOSEUP_STYLE), coordinates to 0.1 px; axis ticks from Vega's linear scale.
 */
import { scale as vegaScale } from 'vega';
import { FLAG_MARKS, flagLabel, flagMark, flagSymbolPath } from './chart-common.js';
import { ellipseArcPath, equalAxes } from './chart-track.js';
import { isKeptFix, type Closeup } from './closeup-data.js';
import { esc } from './html-text.js';

export const CLOSEUP_WIDTH = 300;
/** Least margin (m) around the flagged fixes in a close-up. */
export const CLOSEUP_PAD_M = 8;
/** Most ellipses drawn in one close-up (every epoch in the frame up to this, else evenly spaced). */
const ELLIPSES_MAX = 25;

/** The close-ups' style, shared by all of them through the page's style sheet (page-shell.ts). */
export const CLOSEUP_STYLE = `
svg.cu { font: 10px sans-serif; }
svg.cu .fr { fill: #fff; stroke: #ddd; }
svg.cu .gr { stroke: #eee; stroke-width: 1; }
svg.cu .ax { stroke: #888; fill: none; }
svg.cu .el { fill: none; stroke: #7f8c8d; stroke-width: .7; opacity: .7; }
svg.cu .of { fill: none; stroke: #c0392b; stroke-width: .8; stroke-dasharray: 2 2; }
svg.cu .tr { fill: none; stroke: #1f4e79; stroke-width: 1.6; stroke-linejoin: round; }
svg.cu .kd { fill: none; stroke: #555; stroke-width: 3.6; stroke-linecap: round; opacity: .75; }
svg.cu .id { fill: #000; }
svg.cu .tt { font-size: 11px; font-weight: bold; fill: #333; }
`;

const MARGIN = { left: 46, right: 8, top: 6, bottom: 36 };

/** A number as SVG coordinate text, to 0.1 px. */
function c1(v: number): string {
  return String(Math.round(v * 10) / 10);
}

/** The close-up as SVG text; `title` is its accessible name, `domId` a prefix unique in the page (its clip path's id). */
export function closeupSvg(c: Closeup, title: string, domId: string): string {
  const n = c.tSec.length;
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
  const W = CLOSEUP_WIDTH, H = ax.height;
  const px = (e: number) => ((e - ax.x[0]) / (ax.x[1] - ax.x[0])) * W;
  const py = (nn: number) => H - ((nn - ax.y[0]) / (ax.y[1] - ax.y[0])) * H;
  const at = (e: number, nn: number) => `${c1(px(e))},${c1(py(nn))}`;
  // only what falls in the frame is drawn (a fast track leaves most of its neighbours outside)
  const inside = (e: number, nn: number, r = 0) => e + r >= ax.x[0] && e - r <= ax.x[1] && nn + r >= ax.y[0] && nn - r <= ax.y[1];
  const shown = (k: number) => k >= 0 && k < n && inside(c.east[k]!, c.north[k]!);
  // the track: a vertex just outside is kept where its neighbour is inside, so the line reaches the
  // edge; a new subpath where the track left the frame and came back (no line across the gap)
  let track = '';
  let last = -2;
  let kept = '';
  for (let k = 0; k < n; k++) {
    if ((shown(k - 1) || shown(k) || shown(k + 1)) && Number.isFinite(c.east[k]!) && Number.isFinite(c.north[k]!)) {
      track += `${last === k - 1 ? 'L' : 'M'}${at(c.east[k]!, c.north[k]!)}`;
      last = k;
    }
    if (isKeptFix(c.status[k]!) && Number.isFinite(c.rawEast[k]!) && inside(c.rawEast[k]!, c.rawNorth[k]!)) kept += `M${at(c.rawEast[k]!, c.rawNorth[k]!)}h0`;
  }
  const within: number[] = [];
  for (let k = 0; k < n; k++) if (Number.isFinite(c.ell95MajorM[k]!) && inside(c.east[k]!, c.north[k]!, c.ell95MajorM[k]!)) within.push(k);
  const step = Math.max(1, Math.ceil(within.length / ELLIPSES_MAX));
  const pxPerM = W / (ax.x[1] - ax.x[0]);
  const ells: string[] = [];
  for (let q = 0; q < within.length; q += step) {
    const k = within[q]!;
    ells.push(`<path class="el" d="${ellipseArcPath(px(c.east[k]!), py(c.north[k]!), c.ell95MajorM[k]! * pxPerM, c.ell95MinorM[k]! * pxPerM, c.ell95AzimuthDeg[k]!)}"/>`);
  }
  let offsets = '';
  for (const f of c.flags) if ([f.east, f.north, f.trackEast, f.trackNorth].every(Number.isFinite)) offsets += `M${at(f.east, f.north)}L${at(f.trackEast, f.trackNorth)}`;
  const marks: string[] = [];
  const ids: string[] = [];
  c.flags.forEach((f, q) => {
    if (!Number.isFinite(f.east) || !Number.isFinite(f.north)) return;
    const m = flagMark(f.status) ?? FLAG_MARKS[0]!;
    marks.push(flagSymbolPath(px(f.east), py(f.north), m, flagLabel(f.id), 0.95));
    // ids above and below their marks by turns, so that the labels of a dense burst do not all overlap
    ids.push(`<text class="id" x="${c1(px(f.east) + 6)}" y="${c1(py(f.north) + (q % 2 === 0 ? -7 : 13))}">${esc(f.id)}</text>`);
  });
  // axes: ticks of Vega's linear scale (nice round metres), grid lines, labels, titles
  const xs = vegaScale('linear')().domain(ax.x);
  const ys = vegaScale('linear')().domain(ax.y);
  const xt = xs.ticks(5) as number[], yt = ys.ticks(5) as number[];
  const xf = xs.tickFormat(5) as (v: number) => string, yf = ys.tickFormat(5) as (v: number) => string;
  const grid = xt.map((v) => `M${c1(px(v))},0V${H}`).join('') + yt.map((v) => `M0,${c1(py(v))}H${W}`).join('');
  const ticks = xt.map((v) => `M${c1(px(v))},${H}v5`).join('') + yt.map((v) => `M0,${c1(py(v))}h-5`).join('');
  const xl = xt.map((v) => `<text x="${c1(px(v))}" y="${H + 15}" text-anchor="middle">${esc(xf(v))}</text>`).join('');
  const yl = yt.map((v) => `<text x="-7" y="${c1(py(v) + 3)}" text-anchor="end">${esc(yf(v))}</text>`).join('');
  const clip = `${domId}-clip`;
  const w = W + MARGIN.left + MARGIN.right, h = H + MARGIN.top + MARGIN.bottom;
  return `<svg xmlns="http://www.w3.org/2000/svg" class="cu" width="${w}" height="${h}" viewBox="0 0 ${w} ${h}" role="graphics-document document" aria-label="${esc(title)}">`
    + `<defs><clipPath id="${clip}"><rect width="${W}" height="${H}"/></clipPath></defs>`
    + `<g transform="translate(${MARGIN.left},${MARGIN.top})">`
    + `<rect class="fr" width="${W}" height="${H}"/><path class="gr" d="${grid}"/>`
    + `<g clip-path="url(#${clip})" aria-hidden="true">${ells.join('')}${offsets ? `<path class="of" d="${offsets}"/>` : ''}${track ? `<path class="tr" d="${track}"/>` : ''}${kept ? `<path class="kd" d="${kept}"/>` : ''}</g>`
    + `<g clip-path="url(#${clip})">${marks.join('')}<g aria-hidden="true">${ids.join('')}</g></g>`
    + `<g aria-hidden="true"><path class="ax" d="M0,${H}H${W}M0,0V${H}${ticks}"/>${xl}${yl}`
    + `<text class="tt" x="${W / 2}" y="${H + 31}" text-anchor="middle">east (m)</text>`
    + `<text class="tt" transform="translate(-34,${H / 2}) rotate(-90)" text-anchor="middle">north (m)</text></g>`
    + `</g></svg>`;
}
