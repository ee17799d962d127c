/**
 * Survey products of a session: occupied points (session/survey/occupations.ts) and measured quantities
 * with uncertainty from whole tracks drawn from the joint smoothing posterior (simulation smoother,
 * session/survey/posterior.ts): per segment and for the whole track the horizontal and 3D length, the area
 * enclosed by a track that closes on itself, and the distance between occupied points; each as the
 * posterior mean, sd and 95% interval (draws' 2.5% and 97.5% quantiles; each draw's polyline and
 * sums come from session/survey/survey-draws.ts). Beside the lengths, what the raw fixes give: the length
 * of their polyline and the excess that the model's fix noise is expected to add to it
 * (session/survey/raw-length.ts). Lengths and areas are in the session's local transverse Mercator frame
 * (scale 1 at its centre; the scale error is below 1e-6 within 6 km of it).
 */
import { STATUS, type SessionResult } from '../result/result.js';
import type { TrackPosterior } from './posterior.js';
import { detectOccupations } from './occupations.js';
import { recentre, summarize } from './draws.js';
import type { DistanceEntry, LengthEntry, Occupation, Quantity, SurveyProducts, SurveyVertex } from '../result/survey-types.js';

export type { DistanceEntry, LengthEntry, SurveyProducts, SurveyVertex } from '../result/survey-types.js';
import { expectedStepLength, stepErrorVariance } from './raw-length.js';
import { cornerOf, legSums, legWindow, lineOfSums } from './leg-corners.js';
import { accumulateDraws, drawLengths, occupationMeans, placeVertexDraws, type LegCorners } from './survey-draws.js';

export interface SurveyOptions {
  /** Posterior draws for the measured quantities (0: none; occupations are still found). */
  draws: number;
  seed: number;
  occupationMinSec: number;
  /** Still-speed threshold (m/s); default STILL_SPEED_MPS. */
  stillSpeedMps?: number;
  /** Displacement window of the still test (s); default none. */
  stillWindowSec?: number;
  /** Vertex spacing factor; default VERTEX_SD_FACTOR. */
  vertexSdFactor?: number;
  /** Variance (m²) added to each occupied point's east, north and up (the correlated-error floor; session/check/correlated-floor.ts). */
  addedVarEnu?: [number, number, number];
}

/**
 * A track closes when its end lies within max(CLOSURE_MIN_M, CLOSURE_FRACTION × length, the gap's
 * 99% bound from the two ends' horizontal sd) of its start, and its length exceeds 4 × that tolerance.
 */
export const CLOSURE_MIN_M = 5;
export const CLOSURE_FRACTION = 0.01;
export const CLOSURE_CHI2 = 9.21;
/**
 * Lengths are measured on a polyline of vertices, not on every epoch: the posterior's velocity
 * uncertainty makes each draw wiggle between neighbouring epochs, and a polyline through every
 * epoch of a draw is longer than the track (at 1 Hz walking with 2 m fixes, +40%: measured). The
 * vertices are the occupied points (each one vertex, its average position) and, where the track
 * moves, epochs at least VERTEX_SD_FACTOR × the session's median horizontal sd (and at least
 * VERTEX_MIN_M) apart along the smoothed track, starting at each segment's first epoch (or its
 * first occupied point, when that is within the spacing of it), and its last epoch where that lies
 * beyond the simplification tolerance of the last vertex. A free vertex at a turn becomes the
 * intersection of lines fitted to the legs on either side (session/survey/leg-corners.ts).
 */
export const VERTEX_MIN_M = 5;
export const VERTEX_SD_FACTOR = 4;
/** Douglas–Peucker tolerance of the vertices, in the session's median horizontal sd (see simplifyVertices). */
export const SIMPLIFY_SD_FACTOR = 2;
/** Every pair of occupied points up to this many; beyond it, consecutive pairs only. */
export const ALL_PAIRS_MAX = 20;

/**
 * Most epoch-draws (epochs × draws) a session spends on its measured quantities: 200 draws up to
 * 25,000 epochs, at most ~0.7 s of CPU (measured 1.3–1.5 s per 10⁷ epoch-draws on the shared
 * benchmark machine: 90 ms for 200 × 3510; at 10⁷ a 100,000-epoch log spent 2.2 s of its 5.3 s
 * here); a longer log gets fewer draws, and none when fewer than MIN_DRAWS would remain (95%
 * quantiles of fewer draws say little). output.surveyDraws sets the number asked for.
 */
export const DRAW_EPOCH_BUDGET = 5_000_000;
export const MIN_DRAWS = 50;

/** The draws a session of N epochs gets for `requested` (see DRAW_EPOCH_BUDGET). */
export function drawsFor(N: number, requested: number): number {
  const d = Math.min(requested, Math.floor(DRAW_EPOCH_BUDGET / Math.max(N, 1)));
  return d >= Math.min(MIN_DRAWS, requested) ? d : 0;
}

export function surveyProducts(r: SessionResult, post: TrackPosterior, o: SurveyOptions): SurveyProducts {
  const occ = detectOccupations(r, post, { minSec: o.occupationMinSec, speedMps: o.stillSpeedMps, windowSec: o.stillWindowSec }, o.addedVarEnu);
  const nSeg = post.segments.length;
  const D = drawsFor(r.N, o.draws);
  const threeD = post.nAx === 3;
  // the vertices of the measured polyline (see surveyVertices); the draws' positions at each
  const spacing = vertexSpacing(r, o.vertexSdFactor);
  const vx = surveyVertices(r, occ, post, spacing);
  // turns without a stop: the corner rebuilt from the straight legs on either side (leg-corners.ts)
  const corners = legCornersOf(r, vx, SIMPLIFY_SD_FACTOR * (spacing / VERTEX_SD_FACTOR), spacing);
  // whether the track closes is a property of the smoothed track: the draws sum the area only then
  const closure = closureOf(r);
  const sums = accumulateDraws(r, post, occ, vx, corners, D, o.seed, closure.closed);
  const means = occupationMeans(occ, sums.occSum);
  placeVertexDraws(vx, corners, sums, means, post.nAx, D);
  const drawn = drawLengths(vx, sums.vPos, nSeg, D, threeD);
  const lengths = lengthEntries(r, post, drawn, smoothedLengths(r, post, vx, corners), D, threeD);
  const c = { ...closure, areaM2: closure.closed && D > 0 ? areaOf(r, sums.area2) : null };
  const distances = D > 0 ? occupationDistances(occ, means, D, threeD) : [];
  return { draws: D, requestedDraws: o.draws, seed: o.seed, occupationMinSec: o.occupationMinSec, occupations: occ, lengths, closed: c.closed, closureGapM: c.gapM, closureToleranceM: c.toleranceM, areaM2: c.areaM2, distances, vertexSpacingM: spacing, vertices: vx };
}

/** The polyline's horizontal and 3D length per segment on the smoothed track (vertex = the smoothed positions' average over its epochs, or its rebuilt corner). */
function smoothedLengths(r: SessionResult, post: TrackPosterior, vx: SurveyVertex[], corners: LegCorners): { sH: Float64Array; s3: Float64Array } {
  const nSeg = post.segments.length;
  const sH = new Float64Array(nSeg), s3 = new Float64Array(nSeg);
  const sv = vx.map((v, i) => {
    const m = [0, 0, 0];
    for (let j = v.first; j <= v.last; j++) for (let a = 0; a < post.nAx; a++) m[a] = m[a]! + r.posEnu[a]![j]! / (v.last - v.first + 1);
    const c = corners.at[i];
    if (c) {
      m[0] = c.e;
      m[1] = c.n;
    }
    return m;
  });
  for (let i = 1; i < vx.length; i++) {
    if (vx[i]!.segment !== vx[i - 1]!.segment) continue;
    const de = sv[i]![0]! - sv[i - 1]![0]!, dn = sv[i]![1]! - sv[i - 1]![1]!, du = sv[i]![2]! - sv[i - 1]![2]!;
    const si = vx[i]!.segment;
    sH[si] = sH[si]! + Math.hypot(de, dn);
    s3[si] = s3[si]! + Math.hypot(de, dn, du);
  }
  return { sH, s3 };
}

/** The length entries: per segment, then the whole track (segment −1), from the draws (centred on the smoothed track) and the raw fixes' polyline. */
function lengthEntries(r: SessionResult, post: TrackPosterior, drawn: { lenH: Float64Array[]; len3: Float64Array[] }, smooth: { sH: Float64Array; s3: Float64Array }, D: number, threeD: boolean): LengthEntry[] {
  const { lenH, len3 } = drawn, { sH, s3 } = smooth;
  const lengths: LengthEntry[] = [];
  const totH = new Float64Array(D), tot3 = new Float64Array(D);
  let rawTot = 0, excessTot = 0, sHTot = 0, s3Tot = 0;
  for (let si = 0; si < post.segments.length; si++) {
    for (let d = 0; d < D; d++) {
      totH[d] = totH[d]! + lenH[si]![d]!;
      tot3[d] = tot3[d]! + len3[si]![d]!;
    }
    sHTot += sH[si]!;
    s3Tot += s3[si]!;
    const raw = rawPolyline(r, post, si);
    rawTot += raw.lengthM;
    excessTot += raw.expectedExcessM;
    lengths.push({ segment: si, horizontalM: D > 0 ? recentre(summarize(lenH[si]!), sH[si]!) : null, threeDM: D > 0 && threeD ? recentre(summarize(len3[si]!), s3[si]!) : null, rawHorizontalM: raw.lengthM, rawExpectedExcessM: raw.expectedExcessM });
  }
  lengths.push({ segment: -1, horizontalM: D > 0 ? recentre(summarize(totH), sHTot) : null, threeDM: D > 0 && threeD ? recentre(summarize(tot3), s3Tot) : null, rawHorizontalM: rawTot, rawExpectedExcessM: excessTot });
  return lengths;
}

/** Whether the smoothed track closes on itself (see CLOSURE_MIN_M), with its end-to-start gap and tolerance. */
function closureOf(r: SessionResult): { closed: boolean; gapM: number; toleranceM: number } {
  // closure on the smoothed track
  const gap = r.N > 1 ? Math.hypot(r.posEnu[0][r.N - 1]! - r.posEnu[0][0]!, r.posEnu[1][r.N - 1]! - r.posEnu[1][0]!) : NaN;
  let smoothLen = 0;
  for (let j = 1; j < r.N; j++) if (r.segment[j] === r.segment[j - 1]) smoothLen += Math.hypot(r.posEnu[0][j]! - r.posEnu[0][j - 1]!, r.posEnu[1][j]! - r.posEnu[1][j - 1]!);
  // the gap's own uncertainty: the two ends' horizontal variances (χ²₂ at 0.99 = 9.21)
  const vEnds = r.N > 1 ? (r.sdEnu[0][0]! ** 2 + r.sdEnu[1][0]! ** 2 + r.sdEnu[0][r.N - 1]! ** 2 + r.sdEnu[1][r.N - 1]! ** 2) / 2 : 0;
  const tol = Math.max(CLOSURE_MIN_M, CLOSURE_FRACTION * smoothLen, Math.sqrt(CLOSURE_CHI2 * vEnds));
  return { closed: r.N > 3 && gap <= tol && smoothLen > 4 * tol, gapM: gap, toleranceM: tol };
}

/** The enclosed area of a closed track: the draws' shoelace sums, centred on the smoothed polygon's area. */
function areaOf(r: SessionResult, area2: Float64Array): Quantity {
  // the smoothed polygon's area (shoelace, closing edge last → first)
  let a2 = 0;
  for (let j = 0; j < r.N; j++) {
    const k = j + 1 < r.N ? j + 1 : 0;
    a2 += r.posEnu[0][j]! * r.posEnu[1][k]! - r.posEnu[0][k]! * r.posEnu[1][j]!;
  }
  return recentre(summarize(area2.map((v) => Math.abs(v) / 2)), Math.abs(a2) / 2);
}

/** The distances between occupied points (every pair up to ALL_PAIRS_MAX, else consecutive ones) from each draw's means, centred on the occupations' positions. */
function occupationDistances(occ: Occupation[], means: Float64Array[][], D: number, threeD: boolean): DistanceEntry[] {
  const distances: DistanceEntry[] = [];
  const pairs: Array<[number, number]> = [];
  if (occ.length <= ALL_PAIRS_MAX) for (let a = 0; a < occ.length; a++) for (let b = a + 1; b < occ.length; b++) pairs.push([a, b]);
  else for (let a = 0; a + 1 < occ.length; a++) pairs.push([a, a + 1]);
  for (const [a, b] of pairs) {
    const h = new Float64Array(D), t = new Float64Array(D);
    for (let d = 0; d < D; d++) {
      const de = means[a]![0]![d]! - means[b]![0]![d]!, dn = means[a]![1]![d]! - means[b]![1]![d]!;
      h[d] = Math.hypot(de, dn);
      if (threeD) t[d] = Math.hypot(de, dn, means[a]![2]![d]! - means[b]![2]![d]!);
    }
    const pa = occ[a]!.posEnu, pb = occ[b]!.posEnu;
    const eh = Math.hypot(pa[0] - pb[0], pa[1] - pb[1]), e3 = Math.hypot(pa[0] - pb[0], pa[1] - pb[1], pa[2] - pb[2]);
    distances.push({ from: occ[a]!.id, to: occ[b]!.id, horizontalM: recentre(summarize(h), eh), threeDM: threeD ? recentre(summarize(t), e3) : null });
  }
  return distances;
}

/**
 * The rebuilt corners of a polyline's vertices (session/survey/leg-corners.ts): per edge (vertex i to
 * i + 1 of one segment) its leg window, the reference point its sums are taken about, and whether a
 * corner uses it; per vertex the corner on the smoothed track, or null. Marks each rebuilt vertex's
 * `corner` with its two windows.
 */
export function legCornersOf(r: SessionResult, vx: SurveyVertex[], tolM: number, spacingM: number): LegCorners {
  const nV = vx.length;
  const e = r.posEnu[0], n = r.posEnu[1];
  const windows: Array<[number, number] | null> = [];
  const ref: Array<[number, number] | null> = [];
  const lines = [];
  for (let i = 0; i + 1 < nV; i++) {
    const w = vx[i]!.segment === vx[i + 1]!.segment ? legWindow(r.tSec, vx[i]!.last, vx[i + 1]!.first) : null;
    windows.push(w);
    ref.push(w ? [e[w[0]]!, n[w[0]]!] : null);
    lines.push(w ? lineOfSums(legSums(e, n, w[0], w[1], e[w[0]]!, n[w[0]]!), e[w[0]]!, n[w[0]]!) : null);
  }
  const used = new Uint8Array(Math.max(nV - 1, 0));
  const at: Array<{ e: number; n: number } | null> = vx.map(() => null);
  for (let i = 1; i + 1 < nV; i++) {
    const v = vx[i]!;
    const wA = windows[i - 1], wB = windows[i];
    if (v.occupation >= 0 || !wA || !wB) continue;
    const c = cornerOf(e, n, wA, wB, lines[i - 1]!, lines[i]!, e[v.first]!, n[v.first]!, tolM, spacingM);
    if (!c) continue;
    at[i] = c;
    used[i - 1] = 1;
    used[i] = 1;
    v.corner = { legA: wA, legB: wB };
  }
  return { windows, ref, used, at };
}

/** The spacing of the measured polyline's vertices for a result (see VERTEX_SD_FACTOR). */
export function vertexSpacing(r: SessionResult, factor = VERTEX_SD_FACTOR): number {
  const sd = r.metrics?.medianSdHorizontalM;
  return Math.max(VERTEX_MIN_M, factor * (Number.isFinite(sd) ? sd! : 0));
}

/** The vertices of the measured polyline, in time order (see VERTEX_SD_FACTOR). */
export function surveyVertices(r: SessionResult, occ: Occupation[], post: TrackPosterior, spacing = vertexSpacing(r)): SurveyVertex[] {
  const occAt = new Int32Array(r.N).fill(-1);
  occ.forEach((p, i) => occAt.fill(i, p.first, p.last + 1));
  const out: SurveyVertex[] = [];
  const endTol = SIMPLIFY_SD_FACTOR * (spacing / VERTEX_SD_FACTOR);
  for (let si = 0; si < post.segments.length; si++) {
    const sp = post.segments[si]!;
    const j0 = sp.epoch0, j1 = sp.epoch0 + sp.data.N - 1;
    let le = NaN, ln = NaN, lastOcc = -1;
    for (let j = j0; j <= j1; j++) {
      const oi = occAt[j]!;
      if (oi >= 0) {
        if (oi !== lastOcc) {
          const p = occ[oi]!;
          // the segment's first epoch within the spacing of its first occupied point: that point starts it
          const prev = out[out.length - 1];
          if (prev && prev.segment === si && prev.occupation < 0 && prev.first === j0 && Math.hypot(p.posEnu[0] - le, p.posEnu[1] - ln) < spacing) out.pop();
          out.push({ segment: si, first: p.first, last: p.last, occupation: oi });
          le = p.posEnu[0];
          ln = p.posEnu[1];
          lastOcc = oi;
        }
        continue;
      }
      const e = r.posEnu[0][j]!, n = r.posEnu[1][j]!;
      // the segment's last epoch ends the polyline when it lies beyond the simplification tolerance
      // of the last vertex (the walked stub after the last vertex was otherwise lost: up to a
      // spacing, 0–10 m a segment on the walking survey); within it, an end near an occupied point
      // or the last vertex would add the difference of two noisy positions of one place
      if (j === j0 || !(Math.hypot(e - le, n - ln) < (j === j1 ? endTol : spacing))) {
        out.push({ segment: si, first: j, last: j, occupation: -1 });
        le = e;
        ln = n;
        lastOcc = -1;
      }
    }
  }
  return simplifyVertices(r, out, occ, SIMPLIFY_SD_FACTOR * (spacing / VERTEX_SD_FACTOR));
}

/**
 * Douglas–Peucker simplification (Douglas & Peucker, "Algorithms for the reduction of the number of
 * points required to represent a digitized line or its caricature", The Canadian Cartographer 10(2),
 * 1973) of the vertices between anchors (occupied points and each segment's first and last vertex,
 * always kept): a vertex stays only where the smoothed track leaves the chord by more than tolM.
 * On a straight walk the smoothed track's own small wiggles (its estimation error, slowly varying)
 * otherwise lengthen it; a real turn leaves the chord by far more than the track's sd.
 */
export function simplifyVertices(r: SessionResult, vx: SurveyVertex[], occ: Occupation[], tolM: number): SurveyVertex[] {
  if (!(tolM > 0) || vx.length < 3) return vx;
  const pe = vx.map((v) => (v.occupation >= 0 ? occ[v.occupation]!.posEnu[0] : r.posEnu[0][v.first]!));
  const pn = vx.map((v) => (v.occupation >= 0 ? occ[v.occupation]!.posEnu[1] : r.posEnu[1][v.first]!));
  const keep = new Uint8Array(vx.length);
  for (let i = 0; i < vx.length; i++) {
    const v = vx[i]!;
    if (v.occupation >= 0 || i === 0 || i === vx.length - 1 || vx[i - 1]!.segment !== v.segment || vx[i + 1]!.segment !== v.segment) keep[i] = 1;
  }
  // an explicit stack of [a, b] ranges between kept vertices
  const stack: number[] = [];
  let a = 0;
  for (let b = 1; b < vx.length; b++) {
    if (!keep[b]) continue;
    if (b - a > 1 && vx[a]!.segment === vx[b]!.segment) stack.push(a, b);
    a = b;
  }
  while (stack.length > 0) {
    const hi = stack.pop()!, lo = stack.pop()!;
    const dx = pe[hi]! - pe[lo]!, dy = pn[hi]! - pn[lo]!;
    const L = Math.hypot(dx, dy);
    let worst = -1, dmax = tolM;
    for (let i = lo + 1; i < hi; i++) {
      const ex = pe[i]! - pe[lo]!, ey = pn[i]! - pn[lo]!;
      // distance from the chord (from the end point when the chord has no length)
      const d = L > 0 ? Math.abs(ex * dy - ey * dx) / L : Math.hypot(ex, ey);
      if (d > dmax) {
        dmax = d;
        worst = i;
      }
    }
    if (worst < 0) continue;
    keep[worst] = 1;
    if (worst - lo > 1) stack.push(lo, worst);
    if (hi - worst > 1) stack.push(worst, hi);
  }
  return vx.filter((_, i) => keep[i] === 1);
}

/**
 * The polyline of a segment's kept raw fixes (horizontal length, m) and the excess the model
 * expects the noise to add to it: Σ (E|ν + δ| − ν) over its steps, ν the smoothed step between the
 * two fixes' epochs, δ's variance from the fixes' white variances and the correlated error.
 */
export function rawPolyline(r: SessionResult, post: TrackPosterior, si: number): { lengthM: number; expectedExcessM: number } {
  const sp = post.segments[si]!;
  const gm = sp.models[0]!.params.gm;
  const gmSigma = gm ? gm.sigmaM : 0, gmTau = gm ? gm.tauSec : 0;
  const raw = r.rawEnu;
  let len = 0, excess = 0;
  let jp = -1;
  for (let k = 0; k < sp.data.N; k++) {
    const j = sp.epoch0 + k;
    const st = r.status[j];
    if (!(st === STATUS.kept || st === STATUS.userKept) || !raw || !Number.isFinite(raw[0][j]!)) continue;
    if (jp >= 0) {
      len += Math.hypot(raw[0][j]! - raw[0][jp]!, raw[1][j]! - raw[1][jp]!);
      const nu = Math.hypot(r.posEnu[0][j]! - r.posEnu[0][jp]!, r.posEnu[1][j]! - r.posEnu[1][jp]!);
      const kp = jp - sp.epoch0;
      const rk = (sp.data.r[0]![k]! + sp.data.r[1]![k]!) / 2, rp = (sp.data.r[0]![kp]! + sp.data.r[1]![kp]!) / 2;
      const s2 = stepErrorVariance(rk, rp, r.tSec[j]! - r.tSec[jp]!, gmSigma, gmTau);
      excess += expectedStepLength(nu, s2) - nu;
    }
    jp = j;
  }
  return { lengthM: len, expectedExcessM: excess };
}
