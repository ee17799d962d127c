/**
 * The GeoJSON text of a session (output/geojson.ts describes the collection) as UTF-8 chunks of
 * about a megabyte: the same bytes as `JSON.stringify(sessionGeoJson(r, opt)) + "\n"`
 * (test/output/geojson.test.ts), without building the object tree or the string. A first pass finds
 * the bbox (it precedes the features), a second writes them; a segment that crosses the antimeridian
 * (rare) is cut and stringified as an object.
 */
import { STATUS_NAMES, type OutlierRecord, type SessionResult } from '../session/result/result.js';
import { ByteChunks, chunksToString, utf8 } from './byte-chunks.js';
import { cutAtAntimeridian, longitudeExtent, mappable, METRE_DECIMALS, round, type Position } from './geojson-geometry.js';
import { occupationFeatures } from './geojson-occupations.js';
import { includedLayers, type GeoJsonOptions } from './geojson-options.js';
import { segmentCount, segmentStats, type SegmentStats } from './geojson-segments.js';

export function* sessionGeoJsonChunks(r: SessionResult, opt: GeoJsonOptions, chunkBytes?: number): Generator<Uint8Array> {
  const d = opt.decimals;
  const layers = includedLayers(opt);
  // pass 1: the bbox over the track's positions and the mapped flagged fixes (as sessionGeoJson)
  const mapped = layers.flags ? r.outliers.filter((o) => o.reason !== 'invalid' && mappable(o.lonDeg, o.latDeg)) : [];
  // (an occupied point is an average of track epochs, so the occupations layer takes the track's box too)
  const box = roundedBox(r, d, mapped, layers.track || layers.epochs || layers.occupations);
  const w = new FeatureWriter(new ByteChunks(chunkBytes), r, d);
  w.out.ascii('{"type":"FeatureCollection"');
  const we = longitudeExtent(box.lons);
  if (we) {
    w.out.ascii(',"bbox":');
    w.out.ascii(JSON.stringify(box.threeD ? [we[0], box.south, box.zMin, we[1], box.north, box.zMax] : [we[0], box.south, we[1], box.north]));
  }
  w.out.ascii(',"features":[');
  // pass 2: the features
  if (layers.track) yield* writeTrackSegments(w, box.lons, opt.only === 'track' && anyLongitudeJump(box.lons));
  yield* writeFlaggedFixes(w, mapped);
  for (const f of layers.occupations ? occupationFeatures(r, d) : []) {
    w.sep();
    w.out.text(JSON.stringify(f));
  }
  if (layers.epochs) yield* writeEpochPoints(w);
  w.out.ascii(']}\n');
  yield w.out.take();
}

/** The GeoJSON text of a session, as written to <stem>.geojson. */
export function sessionGeoJsonText(r: SessionResult, opt: GeoJsonOptions): string {
  return chunksToString(sessionGeoJsonChunks(r, opt));
}

interface RoundedBox {
  /** The rounded longitudes: the track's mapped epochs in row order (when counted), then the flagged fixes'. */
  lons: Float64Array;
  south: number;
  north: number;
  zMin: number;
  zMax: number;
  threeD: boolean;
}

/** Pass 1: the box of the rounded positions of the track (when `withTrack`) and of the mapped flagged fixes. */
function roundedBox(r: SessionResult, d: number, mapped: OutlierRecord[], withTrack: boolean): RoundedBox {
  const { N, latDeg, lonDeg, heightM } = r;
  const lons = new Float64Array(N + mapped.length);
  let nLon = 0;
  let south = Infinity, north = -Infinity, zMin = Infinity, zMax = -Infinity;
  let threeD = false;
  const extend = (lon: number, lat: number, h: number) => {
    lons[nLon++] = round(lon, d);
    const y = round(lat, d);
    if (y < south) south = y;
    if (y > north) north = y;
    if (r.hasHeight && Number.isFinite(h)) {
      threeD = true;
      const z = round(h, METRE_DECIMALS);
      if (z < zMin) zMin = z;
      if (z > zMax) zMax = z;
    }
  };
  if (withTrack) for (let j = 0; j < N; j++) if (mappable(lonDeg[j]!, latDeg[j]!)) extend(lonDeg[j]!, latDeg[j]!, heightM[j]!);
  for (const o of mapped) extend(o.lonDeg, o.latDeg, o.heightM);
  return { lons: lons.subarray(0, nLon), south, north, zMin, zMax, threeD };
}

/** Whether consecutive longitudes jump by more than 180° (a segment crosses the antimeridian). */
function anyLongitudeJump(lons: Float64Array): boolean {
  for (let q = 1; q < lons.length; q++) if (Math.abs(lons[q]! - lons[q - 1]!) > 180) return true;
  return false;
}

/** The output, the feature separators and the coordinates of one session. */
class FeatureWriter {
  private first = true;
  /** The session name as a JSON string. */
  readonly name: string;

  constructor(readonly out: ByteChunks, readonly r: SessionResult, readonly d: number) {
    this.name = JSON.stringify(r.name);
  }

  /** The comma before every feature but the first. */
  sep(): void {
    if (!this.first) this.out.byte(44);
    this.first = false;
  }

  /** [lon,lat(,h)] rounded as sessionGeoJson rounds them. */
  coordinate(lon: number, lat: number, h: number): void {
    const out = this.out;
    out.byte(91);
    out.rounded(lon, this.d);
    out.byte(44);
    out.rounded(lat, this.d);
    if (this.r.hasHeight && Number.isFinite(h)) {
      out.byte(44);
      out.rounded(h, METRE_DECIMALS);
    }
    out.byte(93);
  }

  /** '{"type":"Feature","geometry":{"type":"Point","coordinates":[…]}'. */
  point(lon: number, lat: number, h: number): void {
    this.out.ascii('{"type":"Feature","geometry":{"type":"Point","coordinates":');
    this.coordinate(lon, lat, h);
    this.out.byte(125);
  }
}

/** One LineString feature per segment with a mapped position; `multi`: every one a MultiLineString. */
function* writeTrackSegments(w: FeatureWriter, lons: Float64Array, multi: boolean): Generator<Uint8Array> {
  const { r, out } = w;
  const { lonDeg, latDeg } = r;
  const nSeg = segmentCount(r);
  let j = 0;
  // the valid epochs' rounded longitudes, in pass 1's order
  let li = 0;
  for (let s = 0; s < nSeg; s++) {
    const j0 = j;
    const st = segmentStats(r, s, j0);
    j = st.end;
    let count = 0;
    let crosses = false;
    let lastLon = NaN;
    for (let k = j0; k < j; k++) {
      if (!mappable(lonDeg[k]!, latDeg[k]!)) continue;
      const x = lons[li++]!;
      if (count > 0 && Math.abs(x - lastLon) > 180) crosses = true;
      lastLon = x;
      count++;
    }
    if (count === 0) continue;
    w.sep();
    out.ascii('{"type":"Feature","geometry":');
    if (crosses) writeCutLine(w, j0, j);
    else yield* writeLine(w, j0, j, count, multi);
    writeSegmentProperties(w, s, j0, st);
    if (out.full) yield out.take();
  }
}

/** The geometry of rows j0 … j1−1, cut at the antimeridian, stringified as an object. */
function writeCutLine(w: FeatureWriter, j0: number, j1: number): void {
  const { lonDeg, latDeg, heightM } = w.r;
  const d = w.d;
  const line: Position[] = [];
  for (let k = j0; k < j1; k++) {
    if (!mappable(lonDeg[k]!, latDeg[k]!)) continue;
    const p: Position = [round(lonDeg[k]!, d), round(latDeg[k]!, d)];
    if (w.r.hasHeight && Number.isFinite(heightM[k]!)) p.push(round(heightM[k]!, METRE_DECIMALS));
    line.push(p);
  }
  const parts = cutAtAntimeridian(line, d);
  w.out.ascii(JSON.stringify(parts.length === 1 ? { type: 'LineString', coordinates: parts[0] } : { type: 'MultiLineString', coordinates: parts }));
}

/** The (Multi)LineString geometry of the `count` mapped rows of j0 … j1−1; one position is written twice. */
function* writeLine(w: FeatureWriter, j0: number, j1: number, count: number, multi: boolean): Generator<Uint8Array> {
  const { out } = w;
  const { lonDeg, latDeg, heightM } = w.r;
  out.ascii(multi ? '{"type":"MultiLineString","coordinates":[[' : '{"type":"LineString","coordinates":[');
  let k1 = -1;
  for (let k = j0; k < j1; k++) {
    if (!mappable(lonDeg[k]!, latDeg[k]!)) continue;
    if (k1 >= 0) out.byte(44);
    w.coordinate(lonDeg[k]!, latDeg[k]!, heightM[k]!);
    if (out.full) yield out.take();
    k1 = k;
  }
  if (count === 1) {
    out.byte(44);
    w.coordinate(lonDeg[k1]!, latDeg[k1]!, heightM[k1]!);
  }
  out.ascii(multi ? ']]}' : ']}');
}

function writeSegmentProperties(w: FeatureWriter, s: number, j0: number, st: SegmentStats): void {
  const { out } = w;
  const { tSec } = w.r;
  const j = st.end;
  out.ascii(',"properties":{"kind":"track-segment","session":');
  out.text(w.name);
  out.ascii(',"segment":');
  out.int(s + 1);
  out.ascii(',"start_time":"');
  out.isoUtc(tSec[j0]!);
  out.ascii('","end_time":"');
  out.isoUtc(tSec[j - 1]!);
  out.ascii('","duration_s":');
  out.rounded(tSec[j - 1]! - tSec[j0]!, 3);
  out.ascii(',"length_m":');
  out.rounded(st.lengthM, METRE_DECIMALS);
  out.ascii(',"epochs":');
  out.int(j - j0);
  out.ascii(',"bridged_epochs":');
  out.int(st.bridged);
  out.ascii(',"flagged_epochs":');
  out.int(st.flagged);
  out.ascii(',"mean_sd_horizontal_m":');
  out.rounded(st.sumSd / Math.max(j - j0, 1), METRE_DECIMALS);
  out.ascii('}}');
}

/** The mapped flagged fixes as Points. */
function* writeFlaggedFixes(w: FeatureWriter, mapped: OutlierRecord[]): Generator<Uint8Array> {
  const { out } = w;
  const flaggedHead = utf8(`,"properties":{"kind":"flagged-fix","id":`);
  const sessionHead = utf8(`,"session":${w.name},"time":"`);
  for (const o of mapped) {
    w.sep();
    w.point(o.lonDeg, o.latDeg, o.heightM);
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
}

/** Every mapped epoch as a Point with its sd, ellipse and speed (--points). */
function* writeEpochPoints(w: FeatureWriter): Generator<Uint8Array> {
  const { out, r } = w;
  const { N, latDeg, lonDeg, heightM, tSec, segment, status, sdEnu } = r;
  const epochHead = utf8(`,"properties":{"kind":"epoch","session":${w.name},"time":"`);
  const statusText = STATUS_NAMES.map((n) => utf8(`","status":${JSON.stringify(n)},"segment":`));
  for (let k = 0; k < N; k++) {
    if (!mappable(lonDeg[k]!, latDeg[k]!)) continue;
    w.sep();
    w.point(lonDeg[k]!, latDeg[k]!, heightM[k]!);
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
