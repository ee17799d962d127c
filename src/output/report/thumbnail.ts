/**
 * The overview's track thumbnail of a session: the smoothed track in the local frame (east, north,
 * equal scale, north up) thinned to at most THUMBNAIL_POINTS points (every n-th plotted epoch, the
 * first and last of each segment kept), in a small box of whole-pixel-tenth coordinates, drawn as
 * an inline SVG polyline per segment. A few kilobytes a session, so a 500-session overview stays small.
 */
import { esc } from './html-text.js';

export const THUMBNAIL_POINTS = 200;
export const THUMBNAIL_WIDTH = 96;
export const THUMBNAIL_HEIGHT = 64;
const PAD = 3;

export interface Thumbnail {
  /** One polyline per segment: x, y pairs in the box (y down), 0.1 px steps. */
  lines: number[][];
}

/** The thumbnail of a track given per plotted epoch (east, north in metres, segment number). */
export function thumbnailOf(east: ArrayLike<number>, north: ArrayLike<number>, segment: ArrayLike<number>, maxPoints = THUMBNAIL_POINTS): Thumbnail {
  const n = east.length;
  const pick: number[] = [];
  const usable = (k: number) => Number.isFinite(east[k]!) && Number.isFinite(north[k]!);
  if (n > 0) {
    // segment ends are kept; the rest evenly, so the total stays within maxPoints
    const ends = new Set<number>();
    for (let k = 0; k < n; k++) if (k === 0 || k === n - 1 || segment[k] !== segment[k - 1] || segment[k] !== segment[k + 1]) ends.add(k);
    if (ends.size >= maxPoints) {
      // very many segments: drop to every n-th of the ends
      const all = [...ends].sort((a, b) => a - b);
      const step = all.length / maxPoints;
      for (let i = 0; i < maxPoints; i++) pick.push(all[Math.floor(i * step)]!);
    } else {
      const step = Math.max(1, n / (maxPoints - ends.size));
      const chosen = new Set(ends);
      for (let x = 0; x < n && chosen.size < maxPoints; x += step) chosen.add(Math.floor(x));
      pick.push(...[...chosen].sort((a, b) => a - b));
    }
  }
  const idx = pick.filter(usable);
  let eMin = Infinity, eMax = -Infinity, nMin = Infinity, nMax = -Infinity;
  for (const k of idx) {
    eMin = Math.min(eMin, east[k]!);
    eMax = Math.max(eMax, east[k]!);
    nMin = Math.min(nMin, north[k]!);
    nMax = Math.max(nMax, north[k]!);
  }
  if (idx.length === 0) return { lines: [] };
  const w = THUMBNAIL_WIDTH - 2 * PAD, h = THUMBNAIL_HEIGHT - 2 * PAD;
  const scale = Math.min(w / Math.max(eMax - eMin, 1e-6), h / Math.max(nMax - nMin, 1e-6));
  const x0 = PAD + 0.5 * (w - scale * (eMax - eMin));
  const y0 = PAD + 0.5 * (h - scale * (nMax - nMin));
  const r1 = (v: number) => Math.round(v * 10) / 10;
  const lines: number[][] = [];
  let prevSeg: number | undefined;
  for (const k of idx) {
    if (segment[k] !== prevSeg) lines.push([]);
    prevSeg = segment[k];
    lines.at(-1)!.push(r1(x0 + scale * (east[k]! - eMin)), r1(y0 + scale * (nMax - north[k]!)));
  }
  return { lines };
}

/** Number of points of a thumbnail. */
export function thumbnailPoints(t: Thumbnail): number {
  return t.lines.reduce((a, l) => a + l.length / 2, 0);
}

export function thumbnailSvg(t: Thumbnail, label: string): string {
  const polys = t.lines
    .map((l) => {
      const pts: string[] = [];
      for (let i = 0; i < l.length; i += 2) pts.push(`${l[i]},${l[i + 1]}`);
      // a segment of one point still shows, as a dot
      return pts.length === 1 ? `<circle cx="${l[0]}" cy="${l[1]}" r="1.5" fill="#1f4e79"/>` : `<polyline points="${pts.join(' ')}"/>`;
    })
    .join('');
  return `<svg xmlns="http://www.w3.org/2000/svg" class="thumbnail" viewBox="0 0 ${THUMBNAIL_WIDTH} ${THUMBNAIL_HEIGHT}" width="${THUMBNAIL_WIDTH}" height="${THUMBNAIL_HEIGHT}" role="img" aria-label="${esc(label)}"><g fill="none" stroke="#1f4e79" stroke-width="1.2" stroke-linejoin="round">${polys}</g></svg>`;
}
