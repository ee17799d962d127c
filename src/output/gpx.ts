/**
 * <stem>.gpx: the smoothed track as GPX 1.1 (Topografix GPX 1.1 schema, 2004) for handheld and
 * mobile apps: one <trk> with one <trkseg> per segment, a <trkpt> per epoch (bridged epochs too:
 * the smoothed track is continuous there) with <ele> and <time>, and <type> naming the epochs that
 * are not plain kept fixes. Child elements follow the schema's sequence order (metadata before trk;
 * ele, time, …, type in a trkpt). `ele` is the ellipsoidal height (WGS84), said so in <desc>, since
 * no geoid model is applied.
 */
import { CAUTION } from './caution.js';
import { formatIsoUtc } from '../time/parse-time.js';
import { STATUS, STATUS_NAMES, type SessionResult } from '../session/result/result.js';
import { longitudeExtent } from './geojson.js';
import { ByteChunks, chunksToString, utf8 } from './byte-chunks.js';

export const GPX_NAMESPACE = 'http://www.topografix.com/GPX/1/1';

/** Escape text for XML element content and attribute values. */
export function xmlText(s: string): string {
  // characters not allowed in XML 1.0 are dropped
  // eslint-disable-next-line no-control-regex
  return s.replace(/[\u0000-\u0008\u000b\u000c\u000e-\u001f\ufffe\uffff]/g, '').replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;').replace(/'/g, '&apos;');
}

export interface GpxOptions {
  /** Decimal places of degrees (default 7 ≈ 1 cm). */
  decimals?: number;
  /** creator attribute (default "hindcast"). */
  creator?: string;
}

/** The GPX text as UTF-8 chunks of about a megabyte (byte-chunks.ts). */
export function* sessionGpxChunks(r: SessionResult, opt: GpxOptions = {}, chunkBytes?: number): Generator<Uint8Array> {
  const d = opt.decimals ?? 7;
  const out = new ByteChunks(chunkBytes);
  const line = (s: string) => {
    out.text(s);
    out.byte(10);
  };
  line('<?xml version="1.0" encoding="UTF-8"?>');
  line(`<gpx version="1.1" creator="${xmlText(opt.creator ?? 'hindcast')}" xmlns="${GPX_NAMESPACE}" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="${GPX_NAMESPACE} ${GPX_NAMESPACE}/gpx.xsd">`);
  const desc = `Smoothed track of ${r.file}. ${r.hasHeight ? 'ele is the ellipsoidal height above WGS84 (m), not above mean sea level. ' : ''}${CAUTION}`;
  line('<metadata>');
  line(`<name>${xmlText(r.name)}</name>`);
  line(`<desc>${xmlText(desc)}</desc>`);
  if (r.N > 0) line(`<time>${formatIsoUtc(r.tSec[0]!)}</time>`);
  // bounds: minlon > maxlon when the track crosses the antimeridian (as GeoJSON's bbox)
  let south = Infinity, north = -Infinity;
  for (let j = 0; j < r.N; j++) {
    const lat = r.latDeg[j]!;
    if (Number.isFinite(lat)) {
      south = Math.min(south, lat);
      north = Math.max(north, lat);
    }
  }
  const we = longitudeExtent(r.lonDeg);
  if (we && Number.isFinite(south))
    line(`<bounds minlat="${south.toFixed(d)}" minlon="${we[0].toFixed(d)}" maxlat="${north.toFixed(d)}" maxlon="${we[1].toFixed(d)}"/>`);
  line('</metadata>');
  line('<trk>');
  line(`<name>${xmlText(r.name)}</name>`);
  line(`<src>hindcast smoothed track (forward filter and RTS smoother)</src>`);
  const types = STATUS_NAMES.map((n) => utf8(`<type>${n}</type>`));
  let seg = -1;
  for (let j = 0; j < r.N; j++) {
    const lat = r.latDeg[j]!, lon = r.lonDeg[j]!;
    if (!(Math.abs(lat) <= 90 && Math.abs(lon) <= 180)) continue;
    if (r.segment[j] !== seg) {
      if (seg >= 0) line('</trkseg>');
      line('<trkseg>');
      seg = r.segment[j]!;
    }
    out.ascii('<trkpt lat="');
    out.fixed(lat, d);
    out.ascii('" lon="');
    out.fixed(lon, d);
    out.ascii('">');
    if (r.hasHeight && Number.isFinite(r.heightM[j]!)) {
      out.ascii('<ele>');
      out.fixed(r.heightM[j]!, 3);
      out.ascii('</ele>');
    }
    out.ascii('<time>');
    out.isoUtc(r.tSec[j]!);
    out.ascii('</time>');
    const st = r.status[j]!;
    if (st !== STATUS.kept) out.bytes(types[st]!);
    line('</trkpt>');
    if (out.full) yield out.take();
  }
  if (seg >= 0) line('</trkseg>');
  line('</trk>');
  line('</gpx>');
  yield out.take();
}

export function sessionGpx(r: SessionResult, opt: GpxOptions = {}): string {
  return chunksToString(sessionGpxChunks(r, opt));
}
