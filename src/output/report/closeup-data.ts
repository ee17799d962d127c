/**
 * Close-ups of the flagged fixes: the full-rate epochs around each burst of flagged fixes (flagged
 * epochs of one segment at most CLOSEUP_JOIN_EPOCHS apart form one burst), with
 * CLOSEUP_NEIGHBOURS epochs on each side: the smoothed track, its 95% ellipses, the raw fixes kept
 * and flagged, in the local frame (m). Bursts are chosen "review first" (the smallest margin of
 * their fixes first) up to CLOSEUPS_MAX a session, then listed in time order.
 */
import { STATUS, type OutlierRecord, type SessionResult } from '../../session/result/result.js';

/** Close-ups drawn per session (the rest of the flagged fixes are in the table and the track plot). */
export const CLOSEUPS_MAX = 24;
/** Epochs shown on each side of a burst. */
export const CLOSEUP_NEIGHBOURS = 12;
/** Flagged epochs at most this many epochs apart share a close-up. */
export const CLOSEUP_JOIN_EPOCHS = 8;
/** Most epochs of one close-up (a longer burst is cut around its review-first fix). */
export const CLOSEUP_MAX_EPOCHS = 240;

export interface CloseupFlag {
  id: string;
  east: number;
  north: number;
  /** Smoothed position at its epoch (the offset drawn as a line). */
  trackEast: number;
  trackNorth: number;
  status: number;
  tSec: number;
}

export interface Closeup {
  /** Ids of the flagged fixes it shows, in time order. */
  ids: string[];
  /** Epoch range [first, last] of the full session. */
  epochs: [number, number];
  tSec: Float64Array;
  status: Uint8Array;
  east: Float64Array;
  north: Float64Array;
  /** Raw fix per epoch (NaN: none). */
  rawEast: Float64Array;
  rawNorth: Float64Array;
  ell95MajorM: Float32Array;
  ell95MinorM: Float32Array;
  ell95AzimuthDeg: Float32Array;
  flags: CloseupFlag[];
  /** Smallest margin of its fixes (review-first key; NaN when none has one). */
  margin: number;
}

/**
 * The close-ups of a session from its listed flagged fixes (`listed`, with the epoch of each fix
 * in `epochOfFix`, −1 for none). Only fixes with a raw position in the track are drawn.
 */
export function closeups(r: SessionResult, listed: OutlierRecord[], epochOfFix: Map<number, number>): Closeup[] {
  const raw = r.rawEnu;
  if (!raw) return [];
  const drawn = listed
    .map((o) => ({ o, j: epochOfFix.get(o.fix) ?? -1 }))
    .filter(({ j }) => j >= 0 && Number.isFinite(raw[0][j]!) && Number.isFinite(raw[1][j]!))
    .sort((a, b) => a.j - b.j);
  // bursts: flagged epochs of one segment close together
  const bursts: Array<typeof drawn> = [];
  for (const d of drawn) {
    const last = bursts.at(-1)?.at(-1);
    if (last && d.j - last.j <= CLOSEUP_JOIN_EPOCHS && r.segment[d.j] === r.segment[last.j]) bursts.at(-1)!.push(d);
    else bursts.push([d]);
  }
  const key = (b: typeof drawn) => b.reduce((m, d) => (Number.isFinite(d.o.margin) && d.o.margin < m ? d.o.margin : m), Infinity);
  const chosen = bursts
    .map((b) => ({ b, m: key(b) }))
    .sort((x, y) => x.m - y.m || x.b[0]!.j - y.b[0]!.j)
    .slice(0, CLOSEUPS_MAX)
    .sort((x, y) => x.b[0]!.j - y.b[0]!.j);
  return chosen.map(({ b, m }) => {
    const seg = r.segment[b[0]!.j]!;
    let j0 = Math.max(0, b[0]!.j - CLOSEUP_NEIGHBOURS);
    let j1 = Math.min(r.N - 1, b.at(-1)!.j + CLOSEUP_NEIGHBOURS);
    if (j1 - j0 + 1 > CLOSEUP_MAX_EPOCHS) {
      // a long burst: centred on its review-first fix
      const centre = b.reduce((best, d) => (d.o.margin < best.o.margin ? d : best), b[0]!).j;
      j0 = Math.max(0, centre - (CLOSEUP_MAX_EPOCHS >> 1));
      j1 = Math.min(r.N - 1, j0 + CLOSEUP_MAX_EPOCHS - 1);
    }
    while (r.segment[j0] !== seg) j0++;
    while (r.segment[j1] !== seg) j1--;
    const c: Closeup = {
      ids: [],
      epochs: [j0, j1],
      tSec: r.tSec.slice(j0, j1 + 1),
      status: r.status.slice(j0, j1 + 1),
      east: r.posEnu[0].slice(j0, j1 + 1),
      north: r.posEnu[1].slice(j0, j1 + 1),
      rawEast: raw[0].slice(j0, j1 + 1),
      rawNorth: raw[1].slice(j0, j1 + 1),
      ell95MajorM: Float32Array.from(r.ell95MajorM.subarray(j0, j1 + 1)),
      ell95MinorM: Float32Array.from(r.ell95MinorM.subarray(j0, j1 + 1)),
      ell95AzimuthDeg: Float32Array.from(r.ell95AzimuthDeg.subarray(j0, j1 + 1)),
      flags: [],
      margin: m,
    };
    for (const { o, j } of b) {
      if (j < j0 || j > j1) continue;
      c.ids.push(o.id);
      c.flags.push({ id: o.id, east: raw[0][j]!, north: raw[1][j]!, trackEast: r.posEnu[0][j]!, trackNorth: r.posEnu[1][j]!, status: r.status[j]!, tSec: r.tSec[j]! });
    }
    return c;
  });
}

/** Whether an epoch's raw fix was kept in the track (drawn as a plain dot in the close-ups and the track plot). */
export function isKeptFix(status: number): boolean {
  return status === STATUS.kept || status === STATUS.userKept;
}
