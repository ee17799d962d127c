/**
 * <stem>.geojson per RFC 7946 (Butler et al., 2016): a FeatureCollection with the smoothed track as
 * one LineString per segment (a MultiLineString where it crosses the antimeridian, §3.1.9) and the
 * flagged fixes as Points. Positions are [lon, lat, height] (§3.1.1), WGS84, no "crs" member (§4),
 * bbox = [west, south, east, north] (§5); coordinate decimals configurable (§11.2).
 */
import { formatIsoUtc } from '../time/parse-time.js';
import { STATUS, type SessionResult } from '../session/result.js';

type Position = number[];

function round(v: number, d: number): number {
  const f = 10 ** d;
  return Math.round(v * f) / f;
}

/**
 * Split a line of positions where consecutive longitudes jump by more than 180°, inserting the
 * interpolated crossing point at ±180 on both sides (RFC 7946 §3.1.9).
 */
export function cutAtAntimeridian(line: Position[]): Position[][] {
  const parts: Position[][] = [];
  let cur: Position[] = [];
  for (let i = 0; i < line.length; i++) {
    const p = line[i]!;
    if (cur.length > 0) {
      const q = cur[cur.length - 1]!;
      const d = p[0]! - q[0]!;
      if (Math.abs(d) > 180) {
        // crossing: east→west when d < −180 (e.g. 179 → −179)
        const edge = d < 0 ? 180 : -180;
        const pLonUnwrapped = p[0]! + (d < 0 ? 360 : -360);
        const f = (edge - q[0]!) / (pLonUnwrapped - q[0]!);
        const lat = q[1]! + f * (p[1]! - q[1]!);
        const mid: Position = [edge, lat];
        if (q.length > 2 && p.length > 2) mid.push(q[2]! + f * (p[2]! - q[2]!));
        cur.push(mid);
        parts.push(cur);
        const other = mid.slice();
        other[0] = -edge;
        cur = [other];
      }
    }
    cur.push(p);
  }
  if (cur.length) parts.push(cur);
  return parts.filter((pt) => pt.length >= 2);
}

export interface GeoJsonOptions {
  decimals: number;
}

export function sessionGeoJson(r: SessionResult, opt: GeoJsonOptions): object {
  const d = opt.decimals;
  const features: object[] = [];
  let west = Infinity, east = -Infinity, south = Infinity, north = -Infinity;
  const nSeg = r.N > 0 ? r.segment[r.N - 1]! + 1 : 0;
  let j = 0;
  for (let s = 0; s < nSeg; s++) {
    const line: Position[] = [];
    const j0 = j;
    let sumSd = 0;
    let nSd = 0;
    let bridged = 0;
    let outl = 0;
    while (j < r.N && r.segment[j] === s) {
      const p: Position = [round(r.lonDeg[j]!, d), round(r.latDeg[j]!, d)];
      if (r.hasHeight) p.push(round(r.heightM[j]!, 3));
      line.push(p);
      west = Math.min(west, p[0]!);
      east = Math.max(east, p[0]!);
      south = Math.min(south, p[1]!);
      north = Math.max(north, p[1]!);
      sumSd += Math.hypot(r.sdEnu[0][j]!, r.sdEnu[1][j]!);
      nSd++;
      if (r.status[j] === STATUS.bridged) bridged++;
      if (r.status[j] === STATUS.outlier) outl++;
      j++;
    }
    if (line.length === 1) line.push(line[0]!.slice());
    const parts = cutAtAntimeridian(line);
    const geometry = parts.length === 1 ? { type: 'LineString', coordinates: parts[0] } : { type: 'MultiLineString', coordinates: parts };
    features.push({
      type: 'Feature',
      geometry,
      properties: {
        kind: 'track-segment',
        session: r.name,
        segment: s + 1,
        start_time: formatIsoUtc(r.tSec[j0]!),
        end_time: formatIsoUtc(r.tSec[j - 1]!),
        epochs: j - j0,
        bridged_epochs: bridged,
        flagged_epochs: outl,
        mean_sd_horizontal_m: round(sumSd / Math.max(nSd, 1), 3),
      },
    });
  }
  for (const o of r.outliers) {
    const p: Position = [round(o.lonDeg, d), round(o.latDeg, d)];
    if (r.hasHeight && Number.isFinite(o.heightM)) p.push(round(o.heightM, 3));
    if (!(Math.abs(o.latDeg) <= 90 && Math.abs(o.lonDeg) <= 180)) continue;
    features.push({
      type: 'Feature',
      geometry: { type: 'Point', coordinates: p },
      properties: {
        kind: 'flagged-fix',
        session: r.name,
        time: formatIsoUtc(o.tSec),
        source_line: o.line,
        reason: o.reason,
        statistic: Number.isFinite(o.statistic) ? round(o.statistic, 3) : null,
        threshold: Number.isFinite(o.threshold) ? round(o.threshold, 3) : null,
        offset_m: Number.isFinite(o.offsetM) ? round(o.offsetM, 3) : null,
        detail: o.detail,
      },
    });
  }
  const fc: Record<string, unknown> = { type: 'FeatureCollection' };
  if (Number.isFinite(west)) fc.bbox = [west, south, east, north];
  fc.features = features;
  return fc;
}
