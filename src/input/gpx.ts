/**
 * Reader for GPX 1.1 track points (GPX 1.1 Schema Documentation, Topografix, 2004; XML 1.0,
 * W3C Recommendation, for the markup).
 *
 * Read: every <trkpt lat lon> of every <trk>/<trkseg>, with <ele> (m), <time> (xsd:dateTime),
 * <hdop>, <vdop>, <sat> and <fix> (none|2d|3d|dgps|pps). Route points and waypoints are not a track
 * and are ignored; so are <extensions>.
 *
 * Rules (documented in docs/formats.md):
 * - <time> without a zone is UTC (GPX 1.1: "Date and time in are in Univeral Coordinated Time (UTC)").
 * - height: GPX `ele` is usually above mean sea level, so heights are marked "msl" unless
 *   `input.heightReference` says "ellipsoidal"; no geoid model is applied either way.
 * - a point without a time, or with a bad lat/lon/time, is skipped with a warning naming its line;
 *   a point with a bad <ele> keeps its position without a height.
 * - <fix>none</fix> gives fix quality 0 (kept, flagged invalid by the session); 2d/3d 1, dgps 2, pps 3.
 * - the markup is read leniently (a small tokenizer, not a validating parser): a file cut short keeps
 *   the points completed before the cut (an unclosed last point is dropped), with a warning; a file
 *   without a <gpx> element fails.
 */
import type { HindcastConfig } from '../config/schema.js';
import { InputError } from '../errors.js';
import { parseIsoToUnix } from '../time/parse-time.js';
import { FixSeriesBuilder, type FixSeries, type QualityColumn } from './fix-series.js';
import { collectGpxPoints, type GpxMarkup, type GpxPoint } from './gpx-points.js';
import { RowWarnings } from './row-warnings.js';
import { HEIGHT_RANGE_M } from './nmea.js';

export { decodeXmlText, scanXml, type XmlEvents, type XmlTag } from './xml-scan.js';

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
function dec(s: string | undefined): number {
  if (s === undefined) return NaN;
  const t = s.trim();
  return DECIMAL.test(t) ? Number(t) : NaN;
}

const FIX_QUALITY: Record<string, number> = { none: 0, '2d': 1, '3d': 1, dgps: 2, pps: 3 };

/** Which quality values (and heights) any point has. */
interface GpxPresent {
  hdop: boolean;
  vdop: boolean;
  sats: boolean;
  fix: boolean;
  ele: boolean;
}

export function readGpx(text: string, file: string, cfg: HindcastConfig): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  const markup = collectGpxPoints(body);
  const { points } = markup;
  if (!markup.sawGpx) throw new InputError({ file, line: 1 }, 'not a GPX file: no <gpx> element');
  if (points.length === 0)
    throw new InputError(
      { file },
      markup.otherPoints > 0 ? `no track points (<trkpt>): the file holds ${markup.otherPoints} route or waypoint(s), which are not a track` : 'no track points (<trkpt>): nothing to read',
    );
  const has = presentValues(points);
  const cols: QualityColumn[] = [];
  if (has.hdop) cols.push('hdop');
  if (has.vdop) cols.push('vdop');
  if (has.sats) cols.push('sats');
  if (has.fix) cols.push('fixQuality');
  const b = new FixSeriesBuilder(file, cols);
  const w = new RowWarnings(b);
  describeGpx(b, w, markup, has, cfg);
  const noTime = addPoints(b, w, points, has);
  w.finish();
  if (b.count === 0) {
    if (noTime === points.length)
      throw new InputError({ file, line: points[0]!.line }, `none of the ${points.length} track point(s) has a <time>: Hindcast needs the time of each fix`);
    throw new InputError({ file, line: points[0]!.line }, `no readable track point (${points.length} skipped; first: ${w.first})`);
  }
  const s = b.finish();
  if (s.n < 2) throw new InputError({ file, line: s.line[0] }, `only ${s.n} fix: a session needs at least two fixes at distinct times`);
  return s;
}

function presentValues(points: GpxPoint[]): GpxPresent {
  const has = { hdop: false, vdop: false, sats: false, fix: false, ele: false };
  for (const p of points) {
    if ('hdop' in p.child) has.hdop = true;
    if ('vdop' in p.child) has.vdop = true;
    if ('sat' in p.child) has.sats = true;
    if ('fix' in p.child) has.fix = true;
    if ('ele' in p.child) has.ele = true;
  }
  return has;
}

/** The series metadata (format, version, height reference) and the notes about the file as a whole. */
function describeGpx(b: FixSeriesBuilder, w: RowWarnings, markup: GpxMarkup, has: GpxPresent, cfg: HindcastConfig): void {
  const { version } = markup;
  b.meta.format = 'gpx';
  if (version !== undefined) b.meta.gpxVersion = version;
  b.meta.heightReference = cfg.input.heightReference ?? 'msl';
  if (has.ele && cfg.input.heightReference === undefined)
    b.warn('height-reference', 'GPX <ele> read as height above mean sea level (the usual GPX meaning); set input.heightReference to "ellipsoidal" if the device wrote ellipsoidal heights');
  if (version !== undefined && version !== '1.1' && version !== '1.0') b.warn('format', `GPX version "${version}" read as GPX 1.1`);
  if (markup.cut !== null) w.add('truncated', 'the file ends inside markup (cut short?): points completed before this line were read', markup.cut);
  if (markup.unfinishedPoint !== null) w.add('truncated', 'the last track point is not closed (file cut short?): dropped, its values may be cut', markup.unfinishedPoint);
}

const nonNeg = (v: number) => (v >= 0 ? v : NaN);

/** One fix per readable point (the others skipped with a warning); returns the points without a time. */
function addPoints(b: FixSeriesBuilder, w: RowWarnings, points: GpxPoint[], has: GpxPresent): number {
  let noTime = 0;
  const qv = new Float64Array(b.qualityColumns.length);
  for (const p of points) {
    const lat = dec(p.lat);
    const lon = dec(p.lon);
    if (!(Math.abs(lat) <= 90) || !(Math.abs(lon) <= 180)) {
      w.add('row-skipped', `track point lat="${(p.lat ?? '').slice(0, 20)}" lon="${(p.lon ?? '').slice(0, 20)}" is not a latitude/longitude in decimal degrees`, p.line);
      continue;
    }
    const timeText = p.child.time;
    if (timeText === undefined || timeText === '') {
      noTime++;
      w.add('no-time', 'track point without <time> skipped', p.line);
      continue;
    }
    const t = parseIsoToUnix(timeText, 'UTC');
    if (Number.isNaN(t)) {
      w.add('row-skipped', `track point <time> "${timeText.slice(0, 40)}" is not an ISO 8601 date-time`, p.line);
      continue;
    }
    let h = NaN;
    if (p.child.ele !== undefined) {
      h = dec(p.child.ele);
      if (!(h >= HEIGHT_RANGE_M[0] && h <= HEIGHT_RANGE_M[1])) {
        if (p.child.ele !== '') w.add('height-out-of-range', `<ele> "${p.child.ele.slice(0, 20)}" is not a height in ${HEIGHT_RANGE_M[0]}…${HEIGHT_RANGE_M[1]} m; point kept without height`, p.line);
        h = NaN;
      }
    }
    let k = 0;
    if (has.hdop) qv[k++] = nonNeg(dec(p.child.hdop));
    if (has.vdop) qv[k++] = nonNeg(dec(p.child.vdop));
    if (has.sats) qv[k++] = nonNeg(dec(p.child.sat));
    if (has.fix) qv[k++] = FIX_QUALITY[(p.child.fix ?? '').toLowerCase()] ?? NaN;
    b.add(t, lat, lon, h, p.line, qv);
  }
  return noTime;
}
