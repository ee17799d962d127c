/**
 * Corners of the measured polyline rebuilt from its straight legs. Where the walker turns without
 * stopping, the smoothed track rounds the turn: its motion model (constant velocity driven by white
 * acceleration of one calibrated density, tuned to the whole log) cannot follow a 90° turn made in
 * a few seconds, so the smoothed position at the turn lies inside it, and a vertex there shortens
 * the polyline. On the walking survey (12 seeds, vertices at turns of 45–90° without a stop) each
 * such vertex shortened the polyline by 1.5–5.5 m against the truth through the same epochs, and
 * the posterior draws do not carry that error (they scatter about the smoothed track): the length
 * intervals missed low. Away from the turn the smoothed track follows a straight leg closely, so
 * the corner is rebuilt as the intersection of the two lines fitted (total least squares: the
 * principal axis of the positions; Pearson, "On lines and planes of closest fit", Phil. Mag. 2(11),
 * 1901) to the positions of the legs on either side, leaving out CORNER_GUARD_SEC next to each
 * vertex. The same fit and intersection are applied to every posterior draw (session/survey/survey.ts),
 * so the corner's uncertainty is that of the two legs.
 *
 * A vertex gets a rebuilt corner only where both legs are straight on the smoothed track (every
 * fitted position within the simplification tolerance of its line), hold CORNER_MIN_EPOCHS epochs,
 * turn by at least CORNER_MIN_TURN_DEG, and the intersection lies after the first window and
 * before the second along the direction of travel and within the vertex spacing of the smoothed
 * vertex. Elsewhere (curves, short legs, gentle turns) the vertex stays the smoothed position.
 */

/** Seconds of each leg left out next to a vertex (the smoother's rounding of the turn). */
export const CORNER_GUARD_SEC = 6;
/** Fewest epochs in a leg's fitted window. */
export const CORNER_MIN_EPOCHS = 8;
/** Smallest change of direction (degrees) for which a corner is rebuilt (the intersection of near-parallel lines is ill-conditioned). */
export const CORNER_MIN_TURN_DEG = 20;

/** Sums of a leg's positions about a reference point (ce, cn): count, Σe, Σn, Σe², Σn², Σen. */
export interface LegSums {
  n: number;
  se: number;
  sn: number;
  see: number;
  snn: number;
  sen: number;
}

export interface Line {
  /** A point on the line (the centroid) and the unit direction. */
  pe: number;
  pn: number;
  de: number;
  dn: number;
}

/** The total-least-squares line of a leg from its sums (reference point added back). */
export function lineOfSums(s: LegSums, ce: number, cn: number): Line {
  const me = s.se / s.n, mn = s.sn / s.n;
  const cee = s.see / s.n - me * me, cnn = s.snn / s.n - mn * mn, cen = s.sen / s.n - me * mn;
  const th = 0.5 * Math.atan2(2 * cen, cee - cnn);
  return { pe: ce + me, pn: cn + mn, de: Math.cos(th), dn: Math.sin(th) };
}

/** Intersection of two lines, with the parameter along each (NaN when parallel). */
export function intersectLines(a: Line, b: Line): { e: number; n: number; sA: number; sB: number } {
  const den = a.de * b.dn - a.dn * b.de;
  const we = b.pe - a.pe, wn = b.pn - a.pn;
  const sA = (we * b.dn - wn * b.de) / den;
  const sB = (we * a.dn - wn * a.de) / den;
  return { e: a.pe + sA * a.de, n: a.pn + sA * a.dn, sA, sB };
}

/** The leg window of the edge between two vertices: epochs ≥ guard after the first's end and ≥ guard before the second's start. */
export function legWindow(tSec: ArrayLike<number>, lastOfA: number, firstOfB: number, guardSec = CORNER_GUARD_SEC): [number, number] | null {
  let j0 = lastOfA + 1, j1 = firstOfB - 1;
  while (j0 <= j1 && tSec[j0]! - tSec[lastOfA]! < guardSec) j0++;
  while (j1 >= j0 && tSec[firstOfB]! - tSec[j1]! < guardSec) j1--;
  return j1 - j0 + 1 >= CORNER_MIN_EPOCHS ? [j0, j1] : null;
}

/** Sums of positions e[j], n[j] over j0..j1 about (ce, cn). */
export function legSums(e: ArrayLike<number>, n: ArrayLike<number>, j0: number, j1: number, ce: number, cn: number): LegSums {
  const s: LegSums = { n: 0, se: 0, sn: 0, see: 0, snn: 0, sen: 0 };
  for (let j = j0; j <= j1; j++) {
    const x = e[j]! - ce, y = n[j]! - cn;
    s.n++;
    s.se += x;
    s.sn += y;
    s.see += x * x;
    s.snn += y * y;
    s.sen += x * y;
  }
  return s;
}

/** Largest distance of positions j0..j1 from a line. */
export function maxOffLine(e: ArrayLike<number>, n: ArrayLike<number>, j0: number, j1: number, l: Line): number {
  let m = 0;
  for (let j = j0; j <= j1; j++) m = Math.max(m, Math.abs((e[j]! - l.pe) * l.dn - (n[j]! - l.pn) * l.de));
  return m;
}

/**
 * The rebuilt corner of a vertex between two fitted legs, or null where it does not apply (see the
 * module comment). winA, winB: the legs' windows; lA, lB: their lines on the smoothed track;
 * (ve, vn): the smoothed vertex.
 */
export function cornerOf(e: ArrayLike<number>, n: ArrayLike<number>, winA: [number, number], winB: [number, number], lA: Line, lB: Line, ve: number, vn: number, tolM: number, spacingM: number): { e: number; n: number } | null {
  if (maxOffLine(e, n, winA[0], winA[1], lA) > tolM || maxOffLine(e, n, winB[0], winB[1], lB) > tolM) return null;
  // directions of travel
  const tA = Math.sign((e[winA[1]]! - e[winA[0]]!) * lA.de + (n[winA[1]]! - n[winA[0]]!) * lA.dn) || 1;
  const tB = Math.sign((e[winB[1]]! - e[winB[0]]!) * lB.de + (n[winB[1]]! - n[winB[0]]!) * lB.dn) || 1;
  const cosTurn = tA * tB * (lA.de * lB.de + lA.dn * lB.dn);
  if (cosTurn > Math.cos((CORNER_MIN_TURN_DEG * Math.PI) / 180)) return null;
  const x = intersectLines(lA, lB);
  if (!Number.isFinite(x.e) || !Number.isFinite(x.n)) return null;
  // after the end of leg A's window and before the start of leg B's, along the travel
  const endA = tA * ((e[winA[1]]! - lA.pe) * lA.de + (n[winA[1]]! - lA.pn) * lA.dn);
  const startB = tB * ((e[winB[0]]! - lB.pe) * lB.de + (n[winB[0]]! - lB.pn) * lB.dn);
  if (tA * x.sA < endA || tB * x.sB > startB) return null;
  if (Math.hypot(x.e - ve, x.n - vn) > spacingM) return null;
  return { e: x.e, n: x.n };
}
