/**
 * Library access to the joint posterior: whole tracks drawn from it (sampleTracks) and the posterior
 * of any function of a track (measure), each as estimate (posterior mean), sd and 95% interval
 * (the 2.5% and 97.5% sample quantiles). Draws come from the simulation smoother
 * (session/survey/posterior.ts), seeded: the same seed gives the same draws.
 */
import { NumericalError } from '../../errors.js';
import type { SessionResult } from '../result/result.js';
import { posteriorOf, sampleBackward, type TrackPosterior } from './posterior.js';
import type { Quantity } from '../result/survey-types.js';
import type { CorrelatedFloor } from '../result/correlated-floor-info.js';
import { GaussianSource } from '../../estimation/gaussian-rng.js';

export type { Quantity } from '../result/survey-types.js';

/** One drawn track: every epoch of the result, in the local frame and as geodetic coordinates. */
export interface DrawnTrack {
  /** East, north, up (m) in the session's local frame (up relative to its height reference; NaN without height). */
  posEnu: [Float64Array, Float64Array, Float64Array];
  latDeg: Float64Array;
  lonDeg: Float64Array;
  /** Height (m) in the session's height reference; NaN without height. */
  heightM: Float64Array;
}

export interface TrackDraws {
  seed: number;
  /** Epoch times (s, Unix), shared by every draw (the result's). */
  tSec: Float64Array;
  /** Segment of each epoch (the result's). */
  segment: Int32Array;
  draws: DrawnTrack[];
}

function requirePosterior(r: SessionResult): TrackPosterior {
  const p = posteriorOf(r);
  if (!p) throw new NumericalError(`${r.name}: no joint posterior is held for this result (IMU-aided sessions have none yet; the batch releases it after writing)`);
  return p;
}

/**
 * The correlated-error floor (session/check/correlated-floor.ts) as the draws carry it: one offset
 * per draw, segment and axis, N(0, Δ), shared by every epoch of the segment. Each epoch's variance
 * over the draws is then the reported one (smoothed + Δ), and lengths, areas and distances within
 * a segment, which a common offset does not move, keep the smoother's. Seeded from the draws' seed.
 */
function addFloorOffsets(result: SessionResult, post: TrackPosterior, draws: DrawnTrack[], seed: number): void {
  const f = result.info.correlatedFloor as CorrelatedFloor | undefined;
  if (!f) return;
  const sd = [f.addedSdM.horizontal, f.addedSdM.horizontal, f.addedSdM.vertical];
  if (!sd.some((s) => s > 0)) return;
  const g = new GaussianSource((seed * 2654435761 + 0x5bd1e995) >>> 0);
  for (const t of draws)
    for (const sp of post.segments) {
      const j0 = sp.epoch0, j1 = sp.epoch0 + sp.data.N;
      for (let a = 0; a < post.nAx; a++) {
        const off = sd[a]! * g.normal();
        const p = t.posEnu[a]!;
        for (let j = j0; j < j1; j++) p[j] = p[j]! + off;
      }
    }
}

/** `n` whole tracks drawn from the smoothing posterior of `result`, seeded. */
export function sampleTracks(result: SessionResult, n: number, seed = 1): TrackDraws {
  const post = requirePosterior(result);
  const N = post.N;
  const draws: DrawnTrack[] = [];
  for (let d = 0; d < n; d++) {
    const up = new Float64Array(N).fill(NaN);
    draws.push({ posEnu: [new Float64Array(N), new Float64Array(N), up], latDeg: new Float64Array(N), lonDeg: new Float64Array(N), heightM: new Float64Array(N).fill(NaN) });
  }
  sampleBackward(post, n, seed, (j, _seg, pos) => {
    for (let a = 0; a < post.nAx; a++) {
      const p = pos[a]!;
      for (let d = 0; d < n; d++) draws[d]!.posEnu[a]![j] = p[d]!;
    }
  });
  addFloorOffsets(result, post, draws, seed);
  const ll = [0, 0];
  for (const t of draws)
    for (let j = 0; j < N; j++) {
      post.frame.inverse(t.posEnu[0][j]!, t.posEnu[1][j]!, ll);
      t.lonDeg[j] = ll[0]!;
      t.latDeg[j] = ll[1]!;
      if (post.hasHeight) t.heightM[j] = t.posEnu[2][j]! + post.heightRefM;
    }
  return { seed, tSec: result.tSec, segment: result.segment, draws };
}

/**
 * The posterior of fn(track) from `n` draws (default 200, seed 1): mean, sd and the 95% interval.
 * fn sees each drawn track with the epoch times and segments (draws.tSec, draws.segment).
 */
export function measure(result: SessionResult, fn: (track: DrawnTrack, draws: TrackDraws) => number, n = 200, seed = 1): Quantity {
  const td = sampleTracks(result, n, seed);
  const v = new Float64Array(n);
  for (let d = 0; d < n; d++) v[d] = fn(td.draws[d]!, td);
  return summarize(v);
}

/** Mean, sd (n − 1) and the 2.5% / 97.5% quantiles (linear interpolation between order statistics, "type 7"; Hyndman & Fan 1996). */
export function summarize(values: Float64Array): Quantity {
  const n = values.length;
  if (n === 0) return { estimate: NaN, sd: NaN, lo95: NaN, hi95: NaN, draws: 0 };
  let m = 0;
  for (let i = 0; i < n; i++) m += values[i]!;
  m /= n;
  let ss = 0;
  for (let i = 0; i < n; i++) ss += (values[i]! - m) ** 2;
  const s = Float64Array.from(values).sort();
  return { estimate: m, sd: n > 1 ? Math.sqrt(ss / (n - 1)) : 0, lo95: quantileSorted(s, 0.025), hi95: quantileSorted(s, 0.975), draws: n };
}

/**
 * A quantity whose estimate is its value on the smoothed (posterior mean) track, with the draws'
 * spread around their own mean carried over to it: sd as drawn, interval [est + q₂.₅ − m̄, est + q₉₇.₅ − m̄].
 * For a length the draws' mean exceeds the length of the mean track (each draw wiggles about it and
 * |·| is convex: Jensen's inequality), by more than the track's own length error on straight walks.
 */
export function recentre(q: Quantity, estimate: number): Quantity {
  return { estimate, drawMean: q.estimate, sd: q.sd, lo95: estimate + q.lo95 - q.estimate, hi95: estimate + q.hi95 - q.estimate, draws: q.draws };
}

export function quantileSorted(s: Float64Array, p: number): number {
  const h = (s.length - 1) * p;
  const i = Math.floor(h);
  const f = h - i;
  return i + 1 < s.length ? s[i]! + f * (s[i + 1]! - s[i]!) : s[i]!;
}
