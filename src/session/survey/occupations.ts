/**
 * Occupied points: the periods where the receiver stood still, and the posterior of the position it
 * stood on. Still epochs are those whose smoothed horizontal speed, and vertical speed where there
 * are heights, are below STILL_SPEED_MPS, or around which the smoothed track barely moves
 * (STILL_WINDOW_SEC); a run of
 * them within a segment lasting at least `minSec` and holding at least MIN_FIXES kept fixes is an
 * occupation. Its position is the time average of the smoothed positions over the run, and its
 * covariance is that average's exact posterior covariance (session/survey/posterior.ts,
 * meanPositionVariance): the correlated fix error makes neighbouring epochs' errors correlated, so
 * the average of m fixes is worth far fewer than m independent ones. The effective number of
 * independent fixes is the variance of one fix's error (white plus correlated, the model's)
 * divided by the variance of the average.
 */
import { errorEllipse } from '../../estimation/error-ellipse.js';
import { STATUS, type SessionResult } from '../result/result.js';
import { meanPositionVariance, type TrackPosterior } from './posterior.js';
import type { Occupation } from '../result/survey-types.js';

export type { Occupation } from '../result/survey-types.js';

/**
 * Smoothed horizontal speed (m/s) below which an epoch counts as still. Walking is 1–1.6 m/s. On the
 * walking survey (12 seeds, 39 stops of ≥ 20 s) 0.3 found 0.90 of the stops (the smoothed velocity
 * of a noisy log is sluggish and hovers at 0.1–0.35 m/s in a stop), 0.4 and 0.5 all of them; 0.5
 * let the truth move at up to 0.84 m/s inside an occupation, 0.4 at most 0.5 m/s, 0.6 above 1 m/s.
 */
export const STILL_SPEED_MPS = 0.4;
/**
 * An epoch also counts as still when the smoothed track moved less than STILL_SPEED_MPS ×
 * STILL_WINDOW_SEC over the STILL_WINDOW_SEC before it or after it; a run still starts and ends on
 * epochs still by their speed. A vehicle's calibrated process noise is large (about 1.4 m²/s³ on the
 * simulated delivery vehicle) and its smoothed speed at a stop wanders between 0.1 and 1.4 m/s; its
 * position barely moves. On 6 simulated vehicle logs (22 stops of ≥ 20 s) windows of 0, 5, 8 and
 * 12 s found 0, 14, 19 and 20 stops, none while the truth moved at 1 m/s or more; the walking
 * survey's figures did not change.
 */
export const STILL_WINDOW_SEC = 8;
/**
 * An epoch is also still by its speed when the smoothed track's mean speed (displacement over time)
 * over the CENTRED_WINDOW_SEC centred on it, and over half that window, are both below
 * STILL_SPEED_MPS: a vehicle's smoothed velocity at a stop wanders (up to 1.4 m/s with its large
 * process noise) while its position barely moves, and a run must start on an epoch still by its
 * speed. Two windows, since a path that comes back to where it was one window earlier (a small
 * circle walked in that time) has no displacement over it. Measured with simulated vehicles
 * (stops of ≥ 20 s; none found while the truth moved at 1 m/s or more, before or after): seeds 1–6
 * 17 → 19 of 22 stops, seeds 7–18 35 → 37 of 39; 8 s alone found 21 and 38 but added 16
 * occupations on 16 circling-walker logs against 5 for the two windows.
 */
export const CENTRED_WINDOW_SEC = 8;
/** Fewest kept fixes in an occupation. */
export const MIN_FIXES = 3;

/**
 * Seconds dropped from a still run's end where it meets a segment's start or end: there the smoother
 * has data on one side only and its velocity lags the motion (a walker setting off in the last
 * seconds of a log still looks still). Measured on the walking survey: moving epochs at log ends.
 */
export const SEGMENT_END_TRIM_SEC = 5;

export interface StillOptions {
  minSec: number;
  speedMps?: number;
  /** Also still: moved less than speedMps × windowSec over the windowSec before or after (0: off). */
  windowSec?: number;
  endTrimSec?: number;
  /** Also still by speed: the smoothed track's mean speed over this window and over half of it, centred on the epoch, below speedMps (0: off). */
  centredWindowSec?: number;
}

/** The still runs of a result: [first, last] epoch pairs, within one segment each, at least minSec long. */
export function stillRuns(r: SessionResult, o: StillOptions): Array<[number, number]> {
  const vStill = o.speedMps ?? STILL_SPEED_MPS;
  const trim = o.endTrimSec ?? SEGMENT_END_TRIM_SEC;
  const runs: Array<[number, number]> = [];
  let a = -1;
  const close = (b: number): void => {
    const seg = r.segment[a]!;
    // a run that meets its segment's start or end loses the seconds there (see SEGMENT_END_TRIM_SEC)
    let a2 = a, b2 = b;
    // a run starts and ends on an epoch still by its speed: epochs still only by the displacement
    // window reach up to a window into the motion around a stop, so they are kept only inside it
    while (a2 <= b2 && !bySpeed[a2]) a2++;
    while (b2 >= a2 && !bySpeed[b2]) b2--;
    const a1 = a2, b1 = b2;
    if (a === 0 || r.segment[a - 1] !== seg) while (a2 <= b2 && r.tSec[a2]! - r.tSec[a1]! < trim) a2++;
    if (b === r.N - 1 || r.segment[b + 1] !== seg) while (b2 >= a2 && r.tSec[b1]! - r.tSec[b2]! < trim) b2--;
    if (b2 > a2 && r.tSec[b2]! - r.tSec[a2]! >= o.minSec) {
      let fixes = 0;
      for (let j = a2; j <= b2; j++) if (r.status[j] === STATUS.kept || r.status[j] === STATUS.userKept) fixes++;
      if (fixes >= MIN_FIXES) runs.push([a2, b2]);
    }
    a = -1;
  };
  const winSec = o.windowSec ?? STILL_WINDOW_SEC;
  const centreSec = o.centredWindowSec ?? CENTRED_WINDOW_SEC;
  const bySpeed = new Uint8Array(r.N);
  // the epochs winSec before and after j within its segment (two pointers)
  let jb = 0, jf = 0;
  const disp = (a0: number, b0: number): number => {
    const h = Math.hypot(r.posEnu[0][b0]! - r.posEnu[0][a0]!, r.posEnu[1][b0]! - r.posEnu[1][a0]!);
    return r.hasHeight ? Math.max(h, Math.abs(r.posEnu[2][b0]! - r.posEnu[2][a0]!)) : h;
  };
  for (let j = 0; j < r.N; j++) {
    // still horizontally and, with heights, vertically too (a hovering drone that climbs is not standing)
    let still = Math.hypot(r.velEnu[0][j]!, r.velEnu[1][j]!) < vStill && (!r.hasHeight || Math.abs(r.velEnu[2][j]!) < vStill);
    if (!still && centreSec > 0) still = centredSpeed(r, j, centreSec) < vStill && centredSpeed(r, j, centreSec / 2) < vStill;
    bySpeed[j] = still ? 1 : 0;
    if (!still && winSec > 0) {
      while (r.tSec[j]! - r.tSec[jb]! > winSec || r.segment[jb] !== r.segment[j]) jb++;
      if (jf < j) jf = j;
      while (jf + 1 < r.N && r.segment[jf + 1] === r.segment[j] && r.tSec[jf + 1]! - r.tSec[j]! <= winSec) jf++;
      const lim = vStill * winSec;
      const back = r.tSec[j]! - r.tSec[jb]! >= winSec - 1e-6 ? disp(jb, j) : Infinity;
      const fwd = r.tSec[jf]! - r.tSec[j]! >= winSec - 1e-6 ? disp(j, jf) : Infinity;
      still = Math.min(back, fwd) < lim;
    }
    if (a >= 0 && (!still || r.segment[j] !== r.segment[a])) close(j - 1);
    if (still && a < 0) a = j;
  }
  if (a >= 0) close(r.N - 1);
  return runs;
}

/**
 * Occupations with their positions and exact posterior uncertainty, plus `addedVarEnu` (m² east,
 * north, up: an offset shared by the whole occupation, which its average keeps in full).
 */
export function detectOccupations(r: SessionResult, post: TrackPosterior, opts: StillOptions, addedVarEnu: [number, number, number] = [0, 0, 0]): Occupation[] {
  const out: Occupation[] = [];
  const ll = [0, 0];
  for (const [first, last] of stillRuns(r, opts)) {
    const si = r.segment[first]!;
    const sp = post.segments[si]!;
    const k0 = first - sp.epoch0, k1 = last - sp.epoch0;
    const m = last - first + 1;
    const mean = [0, 0, 0];
    for (let a = 0; a < post.nAx; a++) {
      let s = 0;
      for (let j = first; j <= last; j++) s += r.posEnu[a]![j]!;
      mean[a] = s / m;
    }
    if (post.nAx < 3) mean[2] = NaN;
    const v = meanPositionVariance(sp, k0, k1);
    for (let a = 0; a < 3; a++) v[a] = v[a]! + addedVarEnu[a]!;
    const sd: [number, number, number] = [Math.sqrt(v[0]!), Math.sqrt(v[1]!), post.nAx > 2 ? Math.sqrt(v[2]!) : NaN];
    const el = errorEllipse(v[0]!, v[1]!, 0);
    // one fix's horizontal error variance: white (the fix's own r) plus the correlated part's σ²
    let rSum = 0, nFix = 0;
    const gm = sp.models[0]!.params.gm;
    const gmVar = (gm && gm.sigmaM > 0 && gm.tauSec > 0 ? gm.sigmaM ** 2 : 0) + (addedVarEnu[0]! + addedVarEnu[1]!) / 2;
    for (let k = k0; k <= k1; k++) {
      if (sp.data.use[k] === 0) continue;
      rSum += (sp.data.r[0]![k]! + sp.data.r[1]![k]!) / 2;
      nFix++;
    }
    const fixVar = (nFix > 0 ? rSum / nFix : NaN) + gmVar;
    post.frame.inverse(mean[0]!, mean[1]!, ll);
    out.push({
      id: `P${out.length + 1}`,
      segment: si,
      first,
      last,
      startSec: r.tSec[first]!,
      endSec: r.tSec[last]!,
      durationSec: r.tSec[last]! - r.tSec[first]!,
      fixCount: nFix,
      latDeg: ll[1]!,
      lonDeg: ll[0]!,
      heightM: post.hasHeight ? mean[2]! + post.heightRefM : NaN,
      posEnu: [mean[0]!, mean[1]!, mean[2]!],
      sdEnu: sd,
      ell95MajorM: el.majorM,
      ell95MinorM: el.minorM,
      ell95AzimuthDeg: el.azimuthDeg,
      effectiveFixes: fixVar / ((v[0]! + v[1]!) / 2),
    });
  }
  return out;
}

/**
 * The smoothed track's mean speed over the centreSec centred on epoch j (its displacement from the
 * epoch centreSec/2 before to the one centreSec/2 after, over their time apart; the larger of the
 * horizontal and, with heights, vertical): Infinity where the window leaves j's segment.
 */
function centredSpeed(r: SessionResult, j: number, centreSec: number): number {
  const half = centreSec / 2;
  let a = j, b = j;
  while (a > 0 && r.segment[a - 1] === r.segment[j] && r.tSec[j]! - r.tSec[a]! < half) a--;
  while (b < r.N - 1 && r.segment[b + 1] === r.segment[j] && r.tSec[b]! - r.tSec[j]! < half) b++;
  const span = r.tSec[b]! - r.tSec[a]!;
  if (r.tSec[j]! - r.tSec[a]! < half - 1e-6 || r.tSec[b]! - r.tSec[j]! < half - 1e-6 || !(span > 0)) return Infinity;
  const h = Math.hypot(r.posEnu[0][b]! - r.posEnu[0][a]!, r.posEnu[1][b]! - r.posEnu[1][a]!);
  const d = r.hasHeight ? Math.max(h, Math.abs(r.posEnu[2][b]! - r.posEnu[2][a]!)) : h;
  return d / span;
}
