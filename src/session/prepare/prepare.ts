/**
 * A session's fixes prepared once for every stage that reads them: validity, the user's keep/reject
 * decisions, the local frame and height reference, projected positions, per-fix noise factors,
 * segments at gaps, and each segment's epoch grid and filter inputs under a set of axis parameters.
 */
import type { InputWarning } from '../../errors.js';
import type { HindcastConfig } from '../../config/schema.js';
import type { FixSeries } from '../../input/fix-series.js';
import { makeLocalFrame, sessionCentre } from '../../geodesy/local-frame.js';
import type { SegmentData } from '../../estimation/track-filter.js';
import { selectKth } from '../../estimation/select.js';
import { epochGrid, nominalIntervalSec, splitAtJumps, splitSegments, type JumpSplit } from './segments.js';
import { factorsWithExponents, fixSigmaFactors } from './fix-noise.js';
import { validFixes } from './valid-fixes.js';
import type { AxisParams } from './axis-params.js';

/** Prepared, projected fixes shared by calibration and the final run. */
export interface PreparedSession {
  series: FixSeries;
  valid: Uint8Array;
  invalidWhy: string[];
  /** Fixes offered to the filter (valid and not rejected by the user). */
  offered: Uint8Array;
  /** 1 for fixes the user kept (no gate). */
  forced: Uint8Array;
  /** 1 for fixes the user rejected. */
  userRejected: Uint8Array;
  frame: ReturnType<typeof makeLocalFrame>;
  heightRefM: number;
  hasHeight: boolean;
  e: Float64Array;
  n: Float64Array;
  u: Float64Array;
  factors: ReturnType<typeof fixSigmaFactors>;
  intervalSec: number;
  segments: Array<[number, number]>;
  /** Splits at impossible jumps that persist (segments.ts splitAtJumps), in fix order. */
  jumps: JumpSplit[];
  /** Epoch grid of each segment (filled on first use: the grid depends on the session and the bridge factor only). */
  grids: Map<string, { tSec: Float64Array; fix: Int32Array }>;
}

export function prepareSession(s: FixSeries, cfg: HindcastConfig, userDecisions?: Map<number, 'keep' | 'reject'>): PreparedSession {
  const { valid, why } = validFixes(s);
  const offered = valid.slice();
  const forced = new Uint8Array(s.n);
  const userRejected = new Uint8Array(s.n);
  if (userDecisions)
    for (const [i, d] of userDecisions) {
      if (d === 'reject') {
        offered[i] = 0;
        userRejected[i] = 1;
      } else if (valid[i]) forced[i] = 1;
    }
  // e, n, u serve first as the scratch of the medians (centre, height reference), then are set to
  // NaN and filled: the same medians, without three more arrays of fresh memory (24 MB at 1M fixes)
  const e = new Float64Array(s.n);
  const n = new Float64Array(s.n);
  const u = new Float64Array(s.n);
  const [lat0, lon0] = sessionCentre(s.latDeg, s.lonDeg, valid, [e, n]);
  const frame = makeLocalFrame(lat0, lon0);
  // the valid heights in order, in a typed array (the values a list of them would hold)
  const hs = u;
  let nh = 0;
  if (s.heightM) for (let i = 0; i < s.n; i++) if (valid[i] && Number.isFinite(s.heightM[i]!)) hs[nh++] = s.heightM[i]!;
  // the median order statistic, selected without sorting (the value of the sorted array)
  const hasHeight = nh > 0;
  const heightRefM = hasHeight ? selectKth(hs.subarray(0, nh), nh >> 1) : 0;
  e.fill(NaN);
  n.fill(NaN);
  u.fill(NaN);
  const out = [0, 0];
  for (let i = 0; i < s.n; i++) {
    if (!valid[i]) continue;
    frame.forward(s.lonDeg[i]!, s.latDeg[i]!, out);
    e[i] = out[0]!;
    n[i] = out[1]!;
    if (hasHeight && s.heightM) u[i] = s.heightM[i]! - heightRefM;
  }
  const intervalSec = nominalIntervalSec(s.tSec, offered);
  const { segments, jumps } = splitAtJumps(splitSegments(s.tSec, offered, cfg.segments.maxGapSec), s.tSec, e, n, offered);
  return { series: s, valid, invalidWhy: why, offered, forced, userRejected, frame, heightRefM, hasHeight, e, n, u, factors: fixSigmaFactors(s), intervalSec, segments, jumps, grids: new Map() };
}

/** The epoch grid of a segment (computed once per session and bridge factor). */
export function segmentGrid(ps: PreparedSession, seg: [number, number], bridgeFactor: number): { tSec: Float64Array; fix: Int32Array } {
  const key = `${seg[0]}:${seg[1]}:${bridgeFactor}`;
  let grid = ps.grids.get(key);
  if (!grid) {
    grid = epochGrid(ps.series.tSec, seg[0], seg[1], ps.intervalSec, bridgeFactor);
    ps.grids.set(key, grid);
  }
  return grid;
}

/** Build the filter inputs of one segment. */
export function segmentData(ps: PreparedSession, seg: [number, number], p: AxisParams, bridgeFactor: number): { data: SegmentData; fix: Int32Array } {
  const grid = segmentGrid(ps, seg, bridgeFactor);
  const N = grid.tSec.length;
  const { z, r, use } = fillSegment(ps, grid.fix, p, 0, N);
  return { data: { N, tSec: grid.tSec, z, r, use }, fix: grid.fix };
}

/**
 * The filter inputs of the epochs from..to−1 of a segment: the same values as
 * sliceSegment(segmentData(…).data, from, to), without building the rest of the segment (the
 * calibration reads four chunks of 1000 epochs from segments of up to millions).
 */
export function segmentDataRange(ps: PreparedSession, seg: [number, number], p: AxisParams, bridgeFactor: number, from: number, to: number): SegmentData {
  const grid = segmentGrid(ps, seg, bridgeFactor);
  const { z, r, use } = fillSegment(ps, grid.fix, p, from, to);
  return { N: to - from, tSec: grid.tSec.subarray(from, to), z, r, use };
}

/** Measurements, variances and use of the grid epochs from..to−1 (arrays indexed from `from`). */
function fillSegment(ps: PreparedSession, fix: Int32Array, p: AxisParams, from: number, to: number): { z: Float64Array[]; r: Float64Array[]; use: Uint8Array } {
  const N = to - from;
  const nAx = ps.hasHeight ? 3 : 2;
  const z = Array.from({ length: nAx }, () => new Float64Array(N).fill(NaN));
  const r = Array.from({ length: nAx }, () => new Float64Array(N).fill(NaN));
  const use = new Uint8Array(N);
  // the per-fix factors under the parameters' quality-column exponents (perAxis itself at 1, 1)
  const perAxis = factorsWithExponents(ps.series, ps.factors, p.hdopExponent, p.satsExponent, p.fixQualityExponent, p.reportedExponent);
  for (let k = 0; k < N; k++) {
    const i = fix[from + k]!;
    if (i < 0 || !ps.offered[i]) continue;
    use[k] = ps.forced[i] ? 2 : 1;
    z[0]![k] = ps.e[i]!;
    z[1]![k] = ps.n[i]!;
    if (nAx === 3) z[2]![k] = ps.u[i]!;
    for (let a = 0; a < nAx; a++) {
      // σ = base · factor (base: white sigma in m, or the scale of reported sigmas)
      const sigma = (a < 2 ? p.sigmaHorizontalM : p.sigmaVerticalM) * perAxis[a]![i]!;
      r[a]![k] = sigma * sigma;
    }
  }
  return { z, r, use };
}

/** The epochs from..to−1 of a segment's filter inputs (views, no copy). */
export function sliceSegment(d: SegmentData, from: number, to: number): SegmentData {
  return { N: to - from, tSec: d.tSec.subarray(from, to), z: d.z.map((a) => a.subarray(from, to)), r: d.r.map((a) => a.subarray(from, to)), use: d.use.subarray(from, to) };
}

/** One warning per split at a jump (segments.ts splitAtJumps), naming the line of the first fix after it. */
export function jumpWarnings(ps: PreparedSession): InputWarning[] {
  return ps.jumps.map((j) => ({
    file: ps.series.file,
    line: ps.series.line[j.fix],
    code: 'jump',
    message: `the fixes jump ${(j.distanceM / 1000).toFixed(1)} km in ${j.dtSec.toFixed(1)} s and stay there (faster than any platform moves): a new segment starts here (a log joined from two places, or a receiver that re-acquired far off)`,
  }));
}
