/**
 * <stem>.geojson per RFC 7946 (Butler et al., 2016): a FeatureCollection with the smoothed track as
 * one LineString per segment (a MultiLineString where it crosses the antimeridian, §3.1.9), the
 * flagged fixes (not the invalid ones, which have no position) as Points, and optionally every epoch as a Point carrying its sd and 95% ellipse for
 * styling in a GIS. Positions are [lon, lat(, ellipsoidal height)] (§3.1.1), WGS84, no "crs" member
 * (§4); bbox = [west, south, (min height,) east, north(, max height)] with 2·n values for n
 * dimensions (§5), west > east when the box crosses the antimeridian (§5.2); coordinate decimals
 * configurable (§11.2). Property names carry their units (_m, _s, _mps, _deg).
 *
 * This file builds the collection as an object tree (the library's sessionGeoJson); the CLI streams
 * the same bytes without building it (geojson-chunks.ts).
 */
import { formatIsoUtc } from '../time/parse-time.js';
import { STATUS_NAMES, type OutlierRecord, type SessionResult } from '../session/result/result.js';
import { cutAtAntimeridian, longitudeExtent, mappable, METRE_DECIMALS, round, val, type Position } from './geojson-geometry.js';
import { occupationFeatures } from './geojson-occupations.js';
import { includedLayers, type GeoJsonOptions } from './geojson-options.js';
import { segmentCount, segmentStats } from './geojson-segments.js';

export { cutAtAntimeridian, longitudeExtent } from './geojson-geometry.js';
export { geoJsonOptions, type GeoJsonLayer, type GeoJsonOptions } from './geojson-options.js';
export { sessionGeoJsonChunks, sessionGeoJsonText } from './geojson-chunks.js';

export function sessionGeoJson(r: SessionResult, opt: GeoJsonOptions): object {
  const d = opt.decimals;
  const layers = includedLayers(opt);
  const box = new PositionBox();
  const features: object[] = [];
  if (layers.track) for (const f of trackFeatures(r, d, box, opt.only === 'track')) features.push(f);
  if (layers.flags)
    for (const o of r.outliers) {
      // an invalid fix has no position worth mapping (a (0, 0) placeholder, out of range): outliers.csv lists it
      if (o.reason === 'invalid') continue;
      const p = position(r, d, o.lonDeg, o.latDeg, o.heightM);
      if (!p) continue;
      box.extend(p);
      features.push({ type: 'Feature', geometry: { type: 'Point', coordinates: p }, properties: flaggedFixProperties(r, o) });
    }
  if (layers.occupations) features.push(...occupationFeatures(r, d));
  // the occupations layer alone takes the track's box (an occupied point is an average of track epochs)
  if (opt.only === 'occupations')
    for (let k = 0; k < r.N; k++) {
      const p = position(r, d, r.lonDeg[k]!, r.latDeg[k]!, r.heightM[k]!);
      if (p) box.extend(p);
    }
  if (layers.epochs)
    for (let k = 0; k < r.N; k++) {
      const p = position(r, d, r.lonDeg[k]!, r.latDeg[k]!, r.heightM[k]!);
      if (!p) continue;
      // the epochs are the track's positions: the bbox already holds them unless they are alone
      if (!layers.track) box.extend(p);
      features.push({ type: 'Feature', geometry: { type: 'Point', coordinates: p }, properties: epochProperties(r, k) });
    }
  const fc: Record<string, unknown> = { type: 'FeatureCollection' };
  const bbox = box.bbox();
  if (bbox) fc.bbox = bbox;
  fc.features = features;
  return fc;
}

/** The bounding box of the positions mapped (RFC 7946 §5). */
class PositionBox {
  private readonly lons: number[] = [];
  private south = Infinity;
  private north = -Infinity;
  private zMin = Infinity;
  private zMax = -Infinity;
  private threeD = false;

  extend(p: Position): void {
    this.lons.push(p[0]!);
    this.south = Math.min(this.south, p[1]!);
    this.north = Math.max(this.north, p[1]!);
    if (p.length > 2) {
      this.threeD = true;
      this.zMin = Math.min(this.zMin, p[2]!);
      this.zMax = Math.max(this.zMax, p[2]!);
    }
  }

  /** [west, south, (zMin,) east, north(, zMax)], or null when nothing was mapped. */
  bbox(): number[] | null {
    const we = longitudeExtent(this.lons);
    if (!we) return null;
    return this.threeD ? [we[0], this.south, this.zMin, we[1], this.north, this.zMax] : [we[0], this.south, we[1], this.north];
  }
}

/** A rounded [lon, lat(, height)], or null when the position is out of range. */
function position(r: SessionResult, d: number, lon: number, lat: number, h: number): Position | null {
  if (!mappable(lon, lat)) return null;
  const p: Position = [round(lon, d), round(lat, d)];
  if (r.hasHeight && Number.isFinite(h)) p.push(round(h, METRE_DECIMALS));
  return p;
}

type Geometry = { type: string; coordinates: unknown };

/** One feature per segment with a mapped position; `oneType`: all MultiLineStrings when one needs it. */
function trackFeatures(r: SessionResult, d: number, box: PositionBox, oneType: boolean): object[] {
  const nSeg = segmentCount(r);
  const segments: Array<{ geometry: Geometry; properties: object }> = [];
  let j = 0;
  for (let s = 0; s < nSeg; s++) {
    const j0 = j;
    const st = segmentStats(r, s, j0);
    j = st.end;
    const line: Position[] = [];
    for (let k = j0; k < j; k++) {
      const p = position(r, d, r.lonDeg[k]!, r.latDeg[k]!, r.heightM[k]!);
      if (p) {
        line.push(p);
        box.extend(p);
      }
    }
    if (line.length === 0) continue;
    if (line.length === 1) line.push(line[0]!.slice());
    const parts = cutAtAntimeridian(line, d);
    const geometry: Geometry = parts.length === 1 ? { type: 'LineString', coordinates: parts[0] } : { type: 'MultiLineString', coordinates: parts };
    segments.push({
      geometry,
      properties: {
        kind: 'track-segment',
        session: r.name,
        segment: s + 1,
        start_time: formatIsoUtc(r.tSec[j0]!),
        end_time: formatIsoUtc(r.tSec[j - 1]!),
        duration_s: val(r.tSec[j - 1]! - r.tSec[j0]!, 3),
        length_m: val(st.lengthM, METRE_DECIMALS),
        epochs: j - j0,
        bridged_epochs: st.bridged,
        flagged_epochs: st.flagged,
        mean_sd_horizontal_m: val(st.sumSd / Math.max(j - j0, 1), METRE_DECIMALS),
      },
    });
  }
  // the track layer alone holds one geometry type: all MultiLineStrings when one segment needs it
  const multi = oneType && segments.some((g) => g.geometry.type === 'MultiLineString');
  return segments.map((g) => ({
    type: 'Feature',
    geometry: multi && g.geometry.type === 'LineString' ? { type: 'MultiLineString', coordinates: [g.geometry.coordinates] } : g.geometry,
    properties: g.properties,
  }));
}

function flaggedFixProperties(r: SessionResult, o: OutlierRecord): object {
  return {
    kind: 'flagged-fix',
    id: o.id,
    session: r.name,
    time: formatIsoUtc(o.tSec),
    source_line: o.line,
    reason: o.reason,
    decided_by: o.reason === 'user' ? 'user' : 'hindcast',
    test: o.test,
    statistic: val(o.testStatistic, 3),
    threshold: val(o.testThreshold, 3),
    margin: val(o.margin, 4),
    review_statistic: val(o.statistic, 3),
    readmit_threshold: val(o.readmitThreshold, 3),
    offset_m: val(o.offsetM, METRE_DECIMALS),
    offset_up_m: val(o.offsetUpM, METRE_DECIMALS),
    note: o.note ?? null,
    detail: o.detail,
  };
}

function epochProperties(r: SessionResult, k: number): object {
  return {
    kind: 'epoch',
    session: r.name,
    time: formatIsoUtc(r.tSec[k]!),
    status: STATUS_NAMES[r.status[k]!],
    segment: r.segment[k]! + 1,
    sd_east_m: val(r.sdEnu[0][k]!, METRE_DECIMALS),
    sd_north_m: val(r.sdEnu[1][k]!, METRE_DECIMALS),
    sd_up_m: r.hasHeight ? val(r.sdEnu[2][k]!, METRE_DECIMALS) : null,
    sd_horizontal_m: val(Math.hypot(r.sdEnu[0][k]!, r.sdEnu[1][k]!), METRE_DECIMALS),
    ell95_major_m: val(r.ell95MajorM[k]!, METRE_DECIMALS),
    ell95_minor_m: val(r.ell95MinorM[k]!, METRE_DECIMALS),
    ell95_azimuth_deg: val(r.ell95AzimuthDeg[k]!, 1),
    speed_mps: val(Math.hypot(r.velEnu[0][k]!, r.velEnu[1][k]!), METRE_DECIMALS),
  };
}
