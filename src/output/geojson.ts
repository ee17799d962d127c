/**
 * <stem>.geojson per RFC 7946 (Butler et al., 2016): a FeatureCollection with the smoothed track as
 * one LineString per segment (a MultiLineString where it crosses the antimeridian, §3.1.9), the
 * flagged fixes (not the invalid ones, which have no position) as Points, and optionally every epoch as a Point carrying its sd and 95% ellipse for
 * styling in a GIS. Positions are [lon, lat(, ellipsoidal height)] (§3.1.1), WGS84, no "crs" member
 * (§4); bbox = [west, south, (min height,) east, north(, max height)] with 2·n values for n
 * dimensions (§5), west > east when the box crosses the antimeridian (§5.2); coordinate decimals
 * configurable (§11.2). Property names carry their units (_m, _s, _mps, _deg).
 */
import type { HindcastConfig } from '../config/schema.js';
import { formatIsoUtc } from '../time/parse-time.js';
import { STATUS, STATUS_NAMES, type SessionResult } from '../session/result.js';
import { ByteChunks, chunksToString, POW10, utf8 } from './byte-chunks.js';
import { occupationFeatures } from './geojson-occupations.js';

type Position = number[];

/** Decimals of heights (m) and of metric properties: 1 mm. */
const METRE_DECIMALS = 3;

function round(v: number, d: number): number {
  const f = POW10[d]!;
  return Math.round(v * f) / f;
}

/** A rounded number, or null for a missing value (JSON has no NaN). */
function val(v: number, d: number): number | null {
  return Number.isFinite(v) ? round(v, d) : null;
}

/**
 * Split a line of positions where consecutive longitudes jump by more than 180°, inserting the
 * interpolated crossing point at ±180 on both sides (RFC 7946 §3.1.9). `decimals` rounds the
 * interpolated latitude and height like the other positions.
 */
export function cutAtAntimeridian(line: Position[], decimals = 12): Position[][] {
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
        const lat = round(q[1]! + f * (p[1]! - q[1]!), decimals);
        const mid: Position = [edge, lat];
        if (q.length > 2 && p.length > 2) mid.push(round(q[2]! + f * (p[2]! - q[2]!), METRE_DECIMALS));
        if (q[0] !== edge) cur.push(mid);
        if (cur.length >= 2) parts.push(cur);
        const other = mid.slice();
        other[0] = -edge;
        cur = p[0] === -edge ? [] : [other];
      }
    }
    cur.push(p);
  }
  if (cur.length) parts.push(cur);
  return parts.filter((pt) => pt.length >= 2);
}

/**
 * West and east of the smallest longitude interval holding all the given longitudes: the
 * complement of the largest gap between them on the circle. West > east when the interval crosses
 * the antimeridian (RFC 7946 §5.2).
 */
export function longitudeExtent(lons: ArrayLike<number>): [number, number] | null {
  const all = new Float64Array(lons.length);
  let n = 0;
  // smallest and largest as the sort orders them (−0 before +0)
  let lo = Infinity, hi = -Infinity;
  for (let i = 0; i < lons.length; i++) {
    const v = lons[i]!;
    if (Number.isFinite(v)) {
      all[n++] = v;
      if (v < lo || (v === lo && Object.is(v, -0))) lo = v;
      if (v > hi || (v === hi && Object.is(hi, -0))) hi = v;
    }
  }
  if (n === 0) return null;
  // values spanning under 170° (every track that is not near-global): the gap across the
  // antimeridian, (lo + 360) − hi > 190, exceeds every gap between sorted neighbours (each at most
  // hi − lo, floating-point subtraction being monotone), so the loop below would keep it: no sort
  if (hi - lo < 170) return [lo, hi];
  const a = all.subarray(0, n).sort();
  // the gap across the antimeridian, from the easternmost round to the westernmost
  let gap = a[0]! + 360 - a[a.length - 1]!;
  let west = a[0]!, east = a[a.length - 1]!;
  for (let i = 1; i < a.length; i++) {
    const g = a[i]! - a[i - 1]!;
    if (g > gap) {
      gap = g;
      west = a[i]!;
      east = a[i - 1]!;
    }
  }
  return [west, east];
}

/**
 * One geometry type per file for desktop GIS and shapefiles (geojson-layers.ts): the track
 * segments only (every one a LineString, or every one a MultiLineString when one crosses the
 * antimeridian), the flagged fixes only (Points), or the epochs only (Points).
 */
export type GeoJsonLayer = 'track' | 'flags' | 'occupations' | 'epochs';

export interface GeoJsonOptions {
  /** Decimal places of degrees (7 ≈ 1 cm, 6 ≈ 10 cm). */
  decimals: number;
  /** Also one Point per epoch with sd and ellipse properties. */
  points?: boolean;
  /** Only this layer (its own bbox); absent: every feature in one collection. */
  only?: GeoJsonLayer;
}

export function geoJsonOptions(cfg: HindcastConfig): GeoJsonOptions {
  return { decimals: cfg.output.geojsonDecimals, points: cfg.output.points };
}

export function sessionGeoJson(r: SessionResult, opt: GeoJsonOptions): object {
  const d = opt.decimals;
  const features: object[] = [];
  const lons: number[] = [];
  let south = Infinity, north = -Infinity, zMin = Infinity, zMax = -Infinity;
  let threeD = false;
  const extend = (p: Position) => {
    lons.push(p[0]!);
    south = Math.min(south, p[1]!);
    north = Math.max(north, p[1]!);
    if (p.length > 2) {
      threeD = true;
      zMin = Math.min(zMin, p[2]!);
      zMax = Math.max(zMax, p[2]!);
    }
  };
  const position = (lon: number, lat: number, h: number): Position | null => {
    if (!(Math.abs(lat) <= 90 && Math.abs(lon) <= 180)) return null;
    const p: Position = [round(lon, d), round(lat, d)];
    if (r.hasHeight && Number.isFinite(h)) p.push(round(h, METRE_DECIMALS));
    return p;
  };
  const nSeg = r.N > 0 ? r.segment[r.N - 1]! + 1 : 0;
  const withTrack = !opt.only || opt.only === 'track';
  const withFlags = !opt.only || opt.only === 'flags';
  const withEpochs = opt.only ? opt.only === 'epochs' : !!opt.points;
  const withOccupations = !opt.only || opt.only === 'occupations';
  let j = 0;
  const segments: Array<{ geometry: { type: string; coordinates: unknown }; properties: object }> = [];
  for (let s = 0; s < nSeg && withTrack; s++) {
    const line: Position[] = [];
    const j0 = j;
    let sumSd = 0;
    let bridged = 0;
    let flagged = 0;
    let lengthM = 0;
    while (j < r.N && r.segment[j] === s) {
      const p = position(r.lonDeg[j]!, r.latDeg[j]!, r.heightM[j]!);
      if (p) {
        line.push(p);
        extend(p);
      }
      sumSd += Math.hypot(r.sdEnu[0][j]!, r.sdEnu[1][j]!);
      if (r.status[j] === STATUS.bridged) bridged++;
      if (r.status[j] === STATUS.outlier || r.status[j] === STATUS.userRejected) flagged++;
      if (j > j0) lengthM += Math.hypot(r.posEnu[0][j]! - r.posEnu[0][j - 1]!, r.posEnu[1][j]! - r.posEnu[1][j - 1]!);
      j++;
    }
    if (line.length === 0) continue;
    if (line.length === 1) line.push(line[0]!.slice());
    const parts = cutAtAntimeridian(line, d);
    const geometry: { type: string; coordinates: unknown } = parts.length === 1 ? { type: 'LineString', coordinates: parts[0] } : { type: 'MultiLineString', coordinates: parts };
    segments.push({
      geometry,
      properties: {
        kind: 'track-segment',
        session: r.name,
        segment: s + 1,
        start_time: formatIsoUtc(r.tSec[j0]!),
        end_time: formatIsoUtc(r.tSec[j - 1]!),
        duration_s: val(r.tSec[j - 1]! - r.tSec[j0]!, 3),
        length_m: val(lengthM, METRE_DECIMALS),
        epochs: j - j0,
        bridged_epochs: bridged,
        flagged_epochs: flagged,
        mean_sd_horizontal_m: val(sumSd / Math.max(j - j0, 1), METRE_DECIMALS),
      },
    });
  }
  // the track layer alone holds one geometry type: all MultiLineStrings when one segment needs it
  const multi = opt.only === 'track' && segments.some((g) => g.geometry.type === 'MultiLineString');
  for (const g of segments)
    features.push({ type: 'Feature', geometry: multi && g.geometry.type === 'LineString' ? { type: 'MultiLineString', coordinates: [g.geometry.coordinates] } : g.geometry, properties: g.properties });
  for (const o of r.outliers) {
    if (!withFlags) break;
    // an invalid fix has no position worth mapping (a (0, 0) placeholder, out of range): outliers.csv lists it
    if (o.reason === 'invalid') continue;
    const p = position(o.lonDeg, o.latDeg, o.heightM);
    if (!p) continue;
    extend(p);
    features.push({
      type: 'Feature',
      geometry: { type: 'Point', coordinates: p },
      properties: {
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
      },
    });
  }
  if (withOccupations) features.push(...occupationFeatures(r, d));
  // the occupations layer alone takes the track's box (an occupied point is an average of track epochs)
  if (opt.only === 'occupations')
    for (let k = 0; k < r.N; k++) {
      const p = position(r.lonDeg[k]!, r.latDeg[k]!, r.heightM[k]!);
      if (p) extend(p);
    }
  if (withEpochs)
    for (let k = 0; k < r.N; k++) {
      const p = position(r.lonDeg[k]!, r.latDeg[k]!, r.heightM[k]!);
      if (!p) continue;
      // the epochs are the track's positions: the bbox already holds them unless they are alone
      if (!withTrack) extend(p);
      features.push({
        type: 'Feature',
        geometry: { type: 'Point', coordinates: p },
        properties: {
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
        },
      });
    }
  const fc: Record<string, unknown> = { type: 'FeatureCollection' };
  const we = longitudeExtent(lons);
  if (we) fc.bbox = threeD ? [we[0], south, zMin, we[1], north, zMax] : [we[0], south, we[1], north];
  fc.features = features;
  return fc;
}

/**
 * The GeoJSON text of a session as UTF-8 chunks of about a megabyte: the same bytes as
 * `JSON.stringify(sessionGeoJson(r, opt)) + "\n"` (test/output/geojson.test.ts), without building
 * the object tree or the string. A first pass finds the bbox (it precedes the features), a second
 * writes them; a segment that crosses the antimeridian (rare) is cut and stringified as an object.
 */
export function* sessionGeoJsonChunks(r: SessionResult, opt: GeoJsonOptions, chunkBytes?: number): Generator<Uint8Array> {
  const d = opt.decimals;
  const { N, latDeg, lonDeg, heightM, tSec, segment, status, sdEnu, posEnu } = r;
  const valid = (lon: number, lat: number) => Math.abs(lat) <= 90 && Math.abs(lon) <= 180;
  const withHeight = (h: number) => r.hasHeight && Number.isFinite(h);
  const withTrack = !opt.only || opt.only === 'track';
  const withFlags = !opt.only || opt.only === 'flags';
  const withEpochs = opt.only ? opt.only === 'epochs' : !!opt.points;
  const withOccupations = !opt.only || opt.only === 'occupations';
  // pass 1: the bbox over the track's positions and the mapped flagged fixes (as sessionGeoJson)
  const mapped = withFlags ? r.outliers.filter((o) => o.reason !== 'invalid' && valid(o.lonDeg, o.latDeg)) : [];
  const lons = new Float64Array(N + mapped.length);
  let nLon = 0;
  let south = Infinity, north = -Infinity, zMin = Infinity, zMax = -Infinity;
  let threeD = false;
  const extend = (lon: number, lat: number, h: number) => {
    lons[nLon++] = round(lon, d);
    const y = round(lat, d);
    if (y < south) south = y;
    if (y > north) north = y;
    if (withHeight(h)) {
      threeD = true;
      const z = round(h, METRE_DECIMALS);
      if (z < zMin) zMin = z;
      if (z > zMax) zMax = z;
    }
  };
  // (an occupied point is an average of track epochs, so the occupations layer takes the track's box too)
  if (withTrack || withEpochs || withOccupations) for (let j = 0; j < N; j++) if (valid(lonDeg[j]!, latDeg[j]!)) extend(lonDeg[j]!, latDeg[j]!, heightM[j]!);
  for (const o of mapped) extend(o.lonDeg, o.latDeg, o.heightM);
  // the track layer alone holds one geometry type: all MultiLineStrings when one segment crosses the antimeridian
  let multi = false;
  if (opt.only === 'track')
    for (let q = 1; q < nLon && !multi; q++) if (Math.abs(lons[q]! - lons[q - 1]!) > 180) multi = true;
  const out = new ByteChunks(chunkBytes);
  const name = JSON.stringify(r.name);
  out.ascii('{"type":"FeatureCollection"');
  const we = longitudeExtent(lons.subarray(0, nLon));
  if (we) {
    out.ascii(',"bbox":');
    out.ascii(JSON.stringify(threeD ? [we[0], south, zMin, we[1], north, zMax] : [we[0], south, we[1], north]));
  }
  out.ascii(',"features":[');
  let first = true;
  const sep = () => {
    if (!first) out.byte(44);
    first = false;
  };
  const coordinate = (lon: number, lat: number, h: number) => {
    out.byte(91);
    out.rounded(lon, d);
    out.byte(44);
    out.rounded(lat, d);
    if (withHeight(h)) {
      out.byte(44);
      out.rounded(h, METRE_DECIMALS);
    }
    out.byte(93);
  };
  // pass 2: the track segments
  const nSeg = N > 0 ? segment[N - 1]! + 1 : 0;
  let j = 0;
  // the valid epochs' rounded longitudes, in pass 1's order
  let li = 0;
  for (let s = 0; s < nSeg && withTrack; s++) {
    const j0 = j;
    let sumSd = 0, bridged = 0, flagged = 0, lengthM = 0, count = 0;
    let crosses = false;
    let lastLon = NaN;
    while (j < N && segment[j] === s) {
      if (valid(lonDeg[j]!, latDeg[j]!)) {
        const x = lons[li++]!;
        if (count > 0 && Math.abs(x - lastLon) > 180) crosses = true;
        lastLon = x;
        count++;
      }
      sumSd += Math.hypot(sdEnu[0][j]!, sdEnu[1][j]!);
      if (status[j] === STATUS.bridged) bridged++;
      if (status[j] === STATUS.outlier || status[j] === STATUS.userRejected) flagged++;
      if (j > j0) lengthM += Math.hypot(posEnu[0][j]! - posEnu[0][j - 1]!, posEnu[1][j]! - posEnu[1][j - 1]!);
      j++;
    }
    if (count === 0) continue;
    sep();
    out.ascii('{"type":"Feature","geometry":');
    if (crosses) {
      const line: Position[] = [];
      for (let k = j0; k < j; k++) {
        if (!valid(lonDeg[k]!, latDeg[k]!)) continue;
        const p: Position = [round(lonDeg[k]!, d), round(latDeg[k]!, d)];
        if (withHeight(heightM[k]!)) p.push(round(heightM[k]!, METRE_DECIMALS));
        line.push(p);
      }
      const parts = cutAtAntimeridian(line, d);
      out.ascii(JSON.stringify(parts.length === 1 ? { type: 'LineString', coordinates: parts[0] } : { type: 'MultiLineString', coordinates: parts }));
    } else {
      out.ascii(multi ? '{"type":"MultiLineString","coordinates":[[' : '{"type":"LineString","coordinates":[');
      let k1 = -1;
      for (let k = j0; k < j; k++) {
        if (!valid(lonDeg[k]!, latDeg[k]!)) continue;
        if (k1 >= 0) out.byte(44);
        coordinate(lonDeg[k]!, latDeg[k]!, heightM[k]!);
        if (out.full) yield out.take();
        k1 = k;
      }
      if (count === 1) {
        out.byte(44);
        coordinate(lonDeg[k1]!, latDeg[k1]!, heightM[k1]!);
      }
      out.ascii(multi ? ']]}' : ']}');
    }
    out.ascii(',"properties":{"kind":"track-segment","session":');
    out.text(name);
    out.ascii(',"segment":');
    out.int(s + 1);
    out.ascii(',"start_time":"');
    out.isoUtc(tSec[j0]!);
    out.ascii('","end_time":"');
    out.isoUtc(tSec[j - 1]!);
    out.ascii('","duration_s":');
    out.rounded(tSec[j - 1]! - tSec[j0]!, 3);
    out.ascii(',"length_m":');
    out.rounded(lengthM, METRE_DECIMALS);
    out.ascii(',"epochs":');
    out.int(j - j0);
    out.ascii(',"bridged_epochs":');
    out.int(bridged);
    out.ascii(',"flagged_epochs":');
    out.int(flagged);
    out.ascii(',"mean_sd_horizontal_m":');
    out.rounded(sumSd / Math.max(j - j0, 1), METRE_DECIMALS);
    out.ascii('}}');
    if (out.full) yield out.take();
  }
  // the flagged fixes
  const flaggedHead = utf8(`,"properties":{"kind":"flagged-fix","id":`);
  const sessionHead = utf8(`,"session":${name},"time":"`);
  for (const o of mapped) {
    sep();
    out.ascii('{"type":"Feature","geometry":{"type":"Point","coordinates":');
    coordinate(o.lonDeg, o.latDeg, o.heightM);
    out.byte(125);
    out.bytes(flaggedHead);
    out.text(JSON.stringify(o.id));
    out.bytes(sessionHead);
    out.isoUtc(o.tSec);
    out.ascii('","source_line":');
    out.int(o.line);
    out.ascii(',"reason":');
    out.text(JSON.stringify(o.reason));
    out.ascii(o.reason === 'user' ? ',"decided_by":"user","test":' : ',"decided_by":"hindcast","test":');
    out.text(JSON.stringify(o.test));
    out.ascii(',"statistic":');
    out.rounded(o.testStatistic, 3);
    out.ascii(',"threshold":');
    out.rounded(o.testThreshold, 3);
    out.ascii(',"margin":');
    out.rounded(o.margin, 4);
    out.ascii(',"review_statistic":');
    out.rounded(o.statistic, 3);
    out.ascii(',"readmit_threshold":');
    out.rounded(o.readmitThreshold, 3);
    out.ascii(',"offset_m":');
    out.rounded(o.offsetM, METRE_DECIMALS);
    out.ascii(',"offset_up_m":');
    out.rounded(o.offsetUpM, METRE_DECIMALS);
    out.ascii(',"note":');
    out.text(o.note === undefined ? 'null' : JSON.stringify(o.note));
    out.ascii(',"detail":');
    out.text(JSON.stringify(o.detail));
    out.ascii('}}');
    if (out.full) yield out.take();
  }
  for (const f of withOccupations ? occupationFeatures(r, d) : []) {
    sep();
    out.text(JSON.stringify(f));
  }
  // every epoch as a Point (--points)
  if (withEpochs) {
    const epochHead = utf8(`,"properties":{"kind":"epoch","session":${name},"time":"`);
    const statusText = STATUS_NAMES.map((n) => utf8(`","status":${JSON.stringify(n)},"segment":`));
    for (let k = 0; k < N; k++) {
      if (!valid(lonDeg[k]!, latDeg[k]!)) continue;
      sep();
      out.ascii('{"type":"Feature","geometry":{"type":"Point","coordinates":');
      coordinate(lonDeg[k]!, latDeg[k]!, heightM[k]!);
      out.byte(125);
      out.bytes(epochHead);
      out.isoUtc(tSec[k]!);
      out.bytes(statusText[status[k]!]!);
      out.int(segment[k]! + 1);
      out.ascii(',"sd_east_m":');
      out.rounded(sdEnu[0][k]!, METRE_DECIMALS);
      out.ascii(',"sd_north_m":');
      out.rounded(sdEnu[1][k]!, METRE_DECIMALS);
      out.ascii(',"sd_up_m":');
      if (r.hasHeight) out.rounded(sdEnu[2][k]!, METRE_DECIMALS);
      else out.ascii('null');
      out.ascii(',"sd_horizontal_m":');
      out.rounded(Math.hypot(sdEnu[0][k]!, sdEnu[1][k]!), METRE_DECIMALS);
      out.ascii(',"ell95_major_m":');
      out.rounded(r.ell95MajorM[k]!, METRE_DECIMALS);
      out.ascii(',"ell95_minor_m":');
      out.rounded(r.ell95MinorM[k]!, METRE_DECIMALS);
      out.ascii(',"ell95_azimuth_deg":');
      out.rounded(r.ell95AzimuthDeg[k]!, 1);
      out.ascii(',"speed_mps":');
      out.rounded(Math.hypot(r.velEnu[0][k]!, r.velEnu[1][k]!), METRE_DECIMALS);
      out.ascii('}}');
      if (out.full) yield out.take();
    }
  }
  out.ascii(']}\n');
  yield out.take();
}

/** The GeoJSON text of a session, as written to <stem>.geojson. */
export function sessionGeoJsonText(r: SessionResult, opt: GeoJsonOptions): string {
  return chunksToString(sessionGeoJsonChunks(r, opt));
}
