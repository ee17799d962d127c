/**
 * Recorded truth trajectories as TruthTrack: lines "point3 <t s> <X> <Y> <Z> …" (ECEF metres, as
 * in the smartLoc ground-truth files, CC BY-SA 4.0, see test/fixtures/smartloc/SOURCE.md), converted
 * to ENU at the first point and resampled by linear interpolation onto a uniform grid, so the
 * simulator can degrade real vehicle dynamics with its own error model.
 */
import { ecefToGeodetic, EnuFrame } from '../geodesy/ecef.js';
import type { TruthTrack } from './truth.js';

export interface RecordedTruth {
  truth: TruthTrack;
  /** Geodetic origin of the ENU frame (lat, lon degrees; h m). */
  origin: [number, number, number];
}

export function parsePoint3Truth(text: string, dtSec = 0.2): RecordedTruth {
  const t: number[] = [];
  const xyz: Array<[number, number, number]> = [];
  for (const line of text.split(/\r?\n/)) {
    const f = line.trim().split(/\s+/);
    if (f[0] !== 'point3' || f.length < 5) continue;
    const tt = Number(f[1]);
    const p: [number, number, number] = [Number(f[2]), Number(f[3]), Number(f[4])];
    if (![tt, ...p].every(Number.isFinite)) continue;
    if (t.length && tt <= t[t.length - 1]!) continue;
    t.push(tt);
    xyz.push(p);
  }
  if (t.length < 2) throw new Error('recorded truth: fewer than two points');
  const origin = ecefToGeodetic(...xyz[0]!);
  const frame = new EnuFrame(...origin);
  const enu = xyz.map((p) => frame.ecefToEnu(...p));
  const t0 = t[0]!;
  const duration = t[t.length - 1]! - t0;
  const M = Math.floor(duration / dtSec) + 1;
  const e = new Float64Array(M), n = new Float64Array(M), u = new Float64Array(M);
  let j = 0;
  for (let k = 0; k < M; k++) {
    const tk = t0 + k * dtSec;
    while (j < t.length - 2 && t[j + 1]! < tk) j++;
    const f = Math.min(Math.max((tk - t[j]!) / (t[j + 1]! - t[j]!), 0), 1);
    e[k] = enu[j]![0] + f * (enu[j + 1]![0] - enu[j]![0]);
    n[k] = enu[j]![1] + f * (enu[j + 1]![1] - enu[j]![1]);
    u[k] = enu[j]![2] + f * (enu[j + 1]![2] - enu[j]![2]);
  }
  return { truth: { dtSec, e, n, u, durationSec: (M - 1) * dtSec }, origin };
}
