/**
 * The survey's measured polyline on whole tracks drawn from the joint smoothing posterior
 * (simulation smoother, session/survey/posterior.ts): one backward pass gathers each draw's positions at
 * the free vertices, its sums over the occupied points and over the legs of rebuilt corners, and its
 * shoelace area; then each draw's occupied points (its mean over the occupation), its rebuilt
 * corners (its own legs' lines intersected, session/survey/leg-corners.ts) and its per-segment lengths.
 * The survey products (session/survey/survey.ts) summarise these over the draws.
 */
import type { SessionResult } from '../result/result.js';
import { sampleBackward, type DrawVisitor, type TrackPosterior } from './posterior.js';
import { intersectLines, lineOfSums, type LegSums } from './leg-corners.js';
import type { Occupation, SurveyVertex } from '../result/survey-types.js';

/**
 * The rebuilt corners of a polyline (survey.ts, legCornersOf): per edge its leg window, the
 * reference point its sums are taken about, and whether a corner uses it; per vertex the corner on
 * the smoothed track, or null.
 */
export interface LegCorners {
  windows: Array<[number, number] | null>;
  ref: Array<[number, number] | null>;
  used: Uint8Array;
  at: Array<{ e: number; n: number } | null>;
}

/** What the backward pass gathers, per draw (arrays of D). */
export interface DrawSums {
  /** Per used edge: Σe, Σn, Σe², Σn², Σen about the edge's reference point (null: edge not used). */
  legAcc: Array<Float64Array[] | null>;
  /** Per axis and vertex: the draw's position (free vertices only until placeVertexDraws). */
  vPos: Float64Array[][];
  /** Per occupation and axis: the sum of the draw's positions over the occupation. */
  occSum: Float64Array[][];
  /** Twice the signed shoelace area of the whole track, closing edge last → first included. */
  area2: Float64Array;
}

/** The index of an epoch's occupation, vertex (free vertices) and used corner leg (−1: none). */
function epochIndices(N: number, occ: Occupation[], vx: SurveyVertex[], corners: LegCorners): { occAt: Int32Array; vertexAt: Int32Array; edgeAt: Int32Array } {
  // occupation of each epoch (−1: none)
  const occAt = new Int32Array(N).fill(-1);
  occ.forEach((p, i) => occAt.fill(i, p.first, p.last + 1));
  const vertexAt = new Int32Array(N).fill(-1);
  vx.forEach((v, i) => {
    if (v.occupation < 0) vertexAt[v.first] = i;
  });
  const edgeAt = new Int32Array(N).fill(-1);
  corners.windows.forEach((w, i) => {
    if (w && corners.used[i]) edgeAt.fill(i, w[0], w[1] + 1);
  });
  return { occAt, vertexAt, edgeAt };
}

/** One backward pass of D draws (seeded) gathering the DrawSums of the polyline's vertices, occupations and legs (and the area's shoelace sums when `withArea`; zeros otherwise). */
export function accumulateDraws(r: SessionResult, post: TrackPosterior, occ: Occupation[], vx: SurveyVertex[], corners: LegCorners, D: number, seed: number, withArea = true): DrawSums {
  const { occAt, vertexAt, edgeAt } = epochIndices(r.N, occ, vx, corners);
  // per used edge and draw: Σe, Σn, Σe², Σn², Σen about the edge's reference point
  const legAcc = Array.from({ length: corners.windows.length }, (_, i) => (corners.used[i] ? [0, 1, 2, 3, 4].map(() => new Float64Array(D)) : null));
  const vPos = [0, 1, 2].map(() => Array.from({ length: vx.length }, () => new Float64Array(D)));
  const occSum = occ.map(() => [new Float64Array(D), new Float64Array(D), new Float64Array(D)]);
  const area2 = new Float64Array(D);
  const acc = new DrawAccumulator(r.N, post.nAx, D, withArea, occAt, vertexAt, edgeAt, corners, legAcc, vPos, occSum, area2);
  if (D > 0) sampleBackward(post, D, seed, acc);
  acc.closeArea();
  return { legAcc, vPos, occSum, area2 };
}

/**
 * The backward pass's visitor of accumulateDraws: per epoch (last to first) the draws' shoelace
 * terms, leg sums, vertex positions and occupation sums. A class, so that its method is one
 * function for every session of a thread and the engine compiles its loops once (a closure made per
 * session is compiled again for each).
 */
class DrawAccumulator implements DrawVisitor {
  private readonly prev: [Float64Array, Float64Array];
  private readonly last: [Float64Array, Float64Array];
  constructor(
    private readonly N: number,
    private readonly nAx: number,
    private readonly D: number,
    private readonly withArea: boolean,
    private readonly occAt: Int32Array,
    private readonly vertexAt: Int32Array,
    private readonly edgeAt: Int32Array,
    private readonly corners: LegCorners,
    private readonly legAcc: Array<Float64Array[] | null>,
    private readonly vPos: Float64Array[][],
    private readonly occSum: Float64Array[][],
    private readonly area2: Float64Array,
  ) {
    this.prev = [new Float64Array(D), new Float64Array(D)];
    this.last = [new Float64Array(D), new Float64Array(D)];
  }

  visit(j: number, _seg: number, pos: Float64Array[]): void {
    const { D, prev, last, area2 } = this;
    const e = pos[0]!, n = pos[1]!;
    if (this.withArea && j === this.N - 1) {
      last[0].set(e);
      last[1].set(n);
    } else if (this.withArea)
      for (let d = 0; d < D; d++) {
        // shoelace term of the edge j → j + 1 (across segment gaps too: the polygon is the whole track)
        area2[d] = area2[d]! + (e[d]! * prev[1][d]! - prev[0][d]! * n[d]!);
      }
    const ei = this.edgeAt[j]!;
    if (ei >= 0) {
      const acc = this.legAcc[ei]!, ce = this.corners.ref[ei]![0]!, cn = this.corners.ref[ei]![1]!;
      const s0 = acc[0]!, s1 = acc[1]!, s2 = acc[2]!, s3 = acc[3]!, s4 = acc[4]!;
      for (let d = 0; d < D; d++) {
        const x = e[d]! - ce, y = n[d]! - cn;
        s0[d] = s0[d]! + x;
        s1[d] = s1[d]! + y;
        s2[d] = s2[d]! + x * x;
        s3[d] = s3[d]! + y * y;
        s4[d] = s4[d]! + x * y;
      }
    }
    const vi = this.vertexAt[j]!;
    if (vi >= 0) for (let a = 0; a < this.nAx; a++) this.vPos[a]![vi]!.set(pos[a]!);
    const oi = this.occAt[j]!;
    if (oi >= 0) {
      const sum = this.occSum[oi]!;
      for (let a = 0; a < this.nAx; a++) {
        const p = pos[a]!, t = sum[a]!;
        for (let d = 0; d < D; d++) t[d] = t[d]! + p[d]!;
      }
    }
    if (this.withArea) {
      prev[0].set(e);
      prev[1].set(n);
    }
  }

  /** The closing edge last → first (prev holds epoch 0 once the pass is done). */
  closeArea(): void {
    const { D, prev, last, area2 } = this;
    if (this.withArea) for (let d = 0; d < D; d++) area2[d] = area2[d]! + (last[0][d]! * prev[1][d]! - prev[0][d]! * last[1][d]!);
  }
}

/** Each draw's occupied points: its mean position over the occupation (per occupation, axis and draw). */
export function occupationMeans(occ: Occupation[], occSum: Float64Array[][]): Float64Array[][] {
  return occ.map((p, i) => {
    const m = p.last - p.first + 1;
    return occSum[i]!.map((sum) => sum.map((v) => v / m));
  });
}

/** The draws' positions at the occupation vertices (their means) and at the rebuilt corners, into s.vPos. */
export function placeVertexDraws(vx: SurveyVertex[], corners: LegCorners, s: DrawSums, means: Float64Array[][], nAx: number, D: number): void {
  const { legAcc, vPos } = s;
  // occupation vertices: the draws' mean over the occupation
  vx.forEach((v, i) => {
    if (v.occupation >= 0) for (let a = 0; a < nAx; a++) vPos[a]![i]!.set(means[v.occupation]![a]!);
  });
  // rebuilt corners: each draw's own legs' lines intersected (a draw whose lines are parallel keeps its epoch)
  const sums: LegSums = { n: 0, se: 0, sn: 0, see: 0, snn: 0, sen: 0 };
  const drawLine = (ei: number, d: number) => {
    const acc = legAcc[ei]!, w = corners.windows[ei]!;
    sums.n = w[1] - w[0] + 1;
    sums.se = acc[0]![d]!;
    sums.sn = acc[1]![d]!;
    sums.see = acc[2]![d]!;
    sums.snn = acc[3]![d]!;
    sums.sen = acc[4]![d]!;
    return lineOfSums(sums, corners.ref[ei]![0]!, corners.ref[ei]![1]!);
  };
  vx.forEach((v, i) => {
    if (!corners.at[i]) return;
    for (let d = 0; d < D; d++) {
      const x = intersectLines(drawLine(i - 1, d), drawLine(i, d));
      if (Number.isFinite(x.e) && Number.isFinite(x.n)) {
        vPos[0]![i]![d] = x.e;
        vPos[1]![i]![d] = x.n;
      }
    }
  });
}

/** Each draw's horizontal and 3D polyline length per segment (3D left at 0 without a vertical axis). */
export function drawLengths(vx: SurveyVertex[], vPos: Float64Array[][], nSeg: number, D: number, threeD: boolean): { lenH: Float64Array[]; len3: Float64Array[] } {
  const lenH = Array.from({ length: nSeg }, () => new Float64Array(D));
  const len3 = Array.from({ length: nSeg }, () => new Float64Array(D));
  for (let i = 1; i < vx.length; i++) {
    if (vx[i]!.segment !== vx[i - 1]!.segment) continue;
    const lh = lenH[vx[i]!.segment]!, l3 = len3[vx[i]!.segment]!;
    for (let d = 0; d < D; d++) {
      const de = vPos[0]![i]![d]! - vPos[0]![i - 1]![d]!, dn = vPos[1]![i]![d]! - vPos[1]![i - 1]![d]!;
      const h2 = de * de + dn * dn;
      lh[d] = lh[d]! + Math.sqrt(h2);
      if (threeD) l3[d] = l3[d]! + Math.sqrt(h2 + (vPos[2]![i]![d]! - vPos[2]![i - 1]![d]!) ** 2);
    }
  }
  return { lenH, len3 };
}
