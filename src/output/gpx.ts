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
import { STATUS, STATUS_NAMES, type SessionResult } from '../session/result.js';
import { longitudeExtent } from './geojson.js';

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

export function sessionGpx(r: SessionResult, opt: GpxOptions = {}): string {
  const d = opt.decimals ?? 7;
  const out: string[] = [];
  out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push(`<gpx version="1.1" creator="${xmlText(opt.creator ?? 'hindcast')}" xmlns="${GPX_NAMESPACE}" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="${GPX_NAMESPACE} ${GPX_NAMESPACE}/gpx.xsd">`);
  const desc = `Smoothed track of ${r.file}. ${r.hasHeight ? 'ele is the ellipsoidal height above WGS84 (m), not above mean sea level. ' : ''}${CAUTION}`;
  out.push('<metadata>');
  out.push(`<name>${xmlText(r.name)}</name>`);
  out.push(`<desc>${xmlText(desc)}</desc>`);
  if (r.N > 0) out.push(`<time>${formatIsoUtc(r.tSec[0]!)}</time>`);
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
    out.push(`<bounds minlat="${south.toFixed(d)}" minlon="${we[0].toFixed(d)}" maxlat="${north.toFixed(d)}" maxlon="${we[1].toFixed(d)}"/>`);
  out.push('</metadata>');
  out.push('<trk>');
  out.push(`<name>${xmlText(r.name)}</name>`);
  out.push(`<src>hindcast smoothed track (forward filter and RTS smoother)</src>`);
  let seg = -1;
  for (let j = 0; j < r.N; j++) {
    const lat = r.latDeg[j]!, lon = r.lonDeg[j]!;
    if (!(Math.abs(lat) <= 90 && Math.abs(lon) <= 180)) continue;
    if (r.segment[j] !== seg) {
      if (seg >= 0) out.push('</trkseg>');
      out.push('<trkseg>');
      seg = r.segment[j]!;
    }
    let pt = `<trkpt lat="${lat.toFixed(d)}" lon="${lon.toFixed(d)}">`;
    if (r.hasHeight && Number.isFinite(r.heightM[j]!)) pt += `<ele>${r.heightM[j]!.toFixed(3)}</ele>`;
    pt += `<time>${formatIsoUtc(r.tSec[j]!)}</time>`;
    const st = r.status[j]!;
    if (st !== STATUS.kept) pt += `<type>${STATUS_NAMES[st]}</type>`;
    out.push(pt + '</trkpt>');
  }
  if (seg >= 0) out.push('</trkseg>');
  out.push('</trk>');
  out.push('</gpx>');
  return out.join('\n') + '\n';
}
