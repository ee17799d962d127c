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
import { RowWarnings } from './row-warnings.js';
import { HEIGHT_RANGE_M } from './nmea.js';

const ENTITIES: Record<string, string> = { amp: '&', lt: '<', gt: '>', quot: '"', apos: "'" };

/** Replace the predefined XML entities and character references. */
export function decodeXmlText(s: string): string {
  if (!s.includes('&')) return s;
  return s.replace(/&(#x[0-9a-fA-F]{1,6}|#\d{1,7}|[a-zA-Z]+);/g, (m, e: string) => {
    if (e[0] === '#') {
      const cp = e[1] === 'x' ? parseInt(e.slice(2), 16) : parseInt(e.slice(1), 10);
      return cp <= 0x10ffff ? String.fromCodePoint(cp) : m;
    }
    return ENTITIES[e] ?? m;
  });
}

/** A tag of the markup: name without namespace prefix, attributes, and where it starts. */
export interface XmlTag {
  kind: 'open' | 'close' | 'empty';
  name: string;
  attrs: Record<string, string>;
  line: number;
}

export interface XmlEvents {
  tag(t: XmlTag): void;
  text(s: string, line: number): void;
}

const ATTR = /([^\s=/>]+)\s*=\s*(?:"([^"]*)"|'([^']*)')/g;

function localName(q: string): string {
  const c = q.indexOf(':');
  return c >= 0 ? q.slice(c + 1) : q;
}

/**
 * Walk the markup of `text`, calling back for tags and character data (CDATA included, entities
 * decoded). Returns null at a clean end, or the line where a construct was left unfinished.
 */
export function scanXml(text: string, ev: XmlEvents): number | null {
  let pos = 0;
  let line = 1;
  // the next line feed not yet counted (positions passed to lineOf only move forward)
  let nextNl = text.indexOf('\n');
  const lineOf = (p: number) => {
    while (nextNl >= 0 && nextNl < p) {
      line++;
      nextNl = text.indexOf('\n', nextNl + 1);
    }
    return line;
  };
  const n = text.length;
  while (pos < n) {
    const lt = text.indexOf('<', pos);
    if (lt < 0) {
      const rest = text.slice(pos);
      if (rest.trim() !== '') ev.text(decodeXmlText(rest), lineOf(pos));
      return null;
    }
    if (lt > pos) ev.text(decodeXmlText(text.slice(pos, lt)), lineOf(pos));
    const at = lineOf(lt);
    if (text.startsWith('<!--', lt)) {
      const e = text.indexOf('-->', lt + 4);
      if (e < 0) return at;
      pos = e + 3;
    } else if (text.startsWith('<![CDATA[', lt)) {
      const e = text.indexOf(']]>', lt + 9);
      if (e < 0) return at;
      ev.text(text.slice(lt + 9, e), at);
      pos = e + 3;
    } else if (text.startsWith('<?', lt)) {
      const e = text.indexOf('?>', lt + 2);
      if (e < 0) return at;
      pos = e + 2;
    } else if (text.startsWith('<!', lt)) {
      // DOCTYPE, possibly with an internal subset in brackets
      const gt = text.indexOf('>', lt);
      if (gt < 0) return at;
      const br = text.slice(lt, gt).indexOf('[');
      if (br >= 0) {
        const e = text.indexOf(']>', lt + br);
        if (e < 0) return at;
        pos = e + 2;
      } else pos = gt + 1;
    } else {
      // a tag: find its end outside quoted attribute values
      let i = lt + 1;
      let q = 0;
      for (; i < n; i++) {
        const c = text.charCodeAt(i);
        if (q) {
          if (c === q) q = 0;
        } else if (c === 34 || c === 39) q = c;
        else if (c === 62) break;
        else if (c === 60) break; // a "<" inside a tag: the tag was cut; resynchronise there
      }
      if (i >= n) return at;
      if (text.charCodeAt(i) === 60) {
        pos = i;
        continue;
      }
      const inner = text.slice(lt + 1, i);
      pos = i + 1;
      if (inner[0] === '/') {
        ev.tag({ kind: 'close', name: localName(inner.slice(1).trim()), attrs: {}, line: at });
        continue;
      }
      const empty = inner.endsWith('/');
      const body = empty ? inner.slice(0, -1) : inner;
      const m = /^[^\s/>]+/.exec(body);
      if (!m) continue;
      const attrs: Record<string, string> = {};
      ATTR.lastIndex = m[0].length;
      for (let a = ATTR.exec(body); a; a = ATTR.exec(body)) attrs[localName(a[1]!)] = decodeXmlText(a[2] ?? a[3] ?? '');
      ev.tag({ kind: empty ? 'empty' : 'open', name: localName(m[0]), attrs, line: at });
    }
  }
  return null;
}

const DECIMAL = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;
function dec(s: string | undefined): number {
  if (s === undefined) return NaN;
  const t = s.trim();
  return DECIMAL.test(t) ? Number(t) : NaN;
}

const FIX_QUALITY: Record<string, number> = { none: 0, '2d': 1, '3d': 1, dgps: 2, pps: 3 };
const CHILDREN = new Set(['ele', 'time', 'hdop', 'vdop', 'sat', 'fix']);

interface Point {
  line: number;
  lat: string | undefined;
  lon: string | undefined;
  child: Record<string, string>;
}

export function readGpx(text: string, file: string, cfg: HindcastConfig): FixSeries {
  const body = text.replace(/^\uFEFF/, '');
  if (body.trim() === '') throw new InputError({ file, line: 1 }, 'empty file');
  const points: Point[] = [];
  let sawGpx = false;
  let version: string | undefined;
  let pt: Point | null = null;
  let child: string | null = null;
  let childText = '';
  let depthExt = 0;
  let otherPoints = 0;
  let unfinishedPoint: number | null = null;
  const cut = scanXml(body, {
    tag(t) {
      if (t.name === 'extensions') {
        if (t.kind === 'open') depthExt++;
        else if (t.kind === 'close') depthExt = Math.max(0, depthExt - 1);
        return;
      }
      if (depthExt > 0) return;
      if (t.name === 'gpx' && t.kind !== 'close') {
        sawGpx = true;
        version = t.attrs.version;
        return;
      }
      if (t.name === 'trkpt') {
        if (t.kind === 'close') {
          if (pt) points.push(pt);
          pt = null;
          child = null;
          return;
        }
        if (pt) points.push(pt); // an unclosed previous point ends here
        const p: Point = { line: t.line, lat: t.attrs.lat, lon: t.attrs.lon, child: {} };
        if (t.kind === 'empty') points.push(p);
        else pt = p;
        child = null;
        return;
      }
      if (t.name === 'rtept' || t.name === 'wpt') {
        if (t.kind !== 'close') otherPoints++;
        return;
      }
      if (pt && CHILDREN.has(t.name)) {
        if (t.kind === 'open') {
          child = t.name;
          childText = '';
        } else if (t.kind === 'close' && child === t.name) {
          if (!(child in pt.child)) pt.child[child] = childText.trim();
          child = null;
        }
      }
    },
    text(s) {
      if (pt && child && childText.length < 256) childText += s;
    },
  });
  if (pt) unfinishedPoint = (pt as Point).line;
  if (!sawGpx) throw new InputError({ file, line: 1 }, 'not a GPX file: no <gpx> element');
  if (points.length === 0)
    throw new InputError(
      { file },
      otherPoints > 0 ? `no track points (<trkpt>): the file holds ${otherPoints} route or waypoint(s), which are not a track` : 'no track points (<trkpt>): nothing to read',
    );

  const has = { hdop: false, vdop: false, sats: false, fix: false, ele: false };
  for (const p of points) {
    if ('hdop' in p.child) has.hdop = true;
    if ('vdop' in p.child) has.vdop = true;
    if ('sat' in p.child) has.sats = true;
    if ('fix' in p.child) has.fix = true;
    if ('ele' in p.child) has.ele = true;
  }
  const cols: QualityColumn[] = [];
  if (has.hdop) cols.push('hdop');
  if (has.vdop) cols.push('vdop');
  if (has.sats) cols.push('sats');
  if (has.fix) cols.push('fixQuality');
  const b = new FixSeriesBuilder(file, cols);
  const w = new RowWarnings(b);
  b.meta.format = 'gpx';
  if (version !== undefined) b.meta.gpxVersion = version;
  const heightReference = cfg.input.heightReference ?? 'msl';
  b.meta.heightReference = heightReference;
  if (has.ele && cfg.input.heightReference === undefined)
    b.warn('height-reference', 'GPX <ele> read as height above mean sea level (the usual GPX meaning); set input.heightReference to "ellipsoidal" if the device wrote ellipsoidal heights');
  if (version !== undefined && version !== '1.1' && version !== '1.0') b.warn('format', `GPX version "${version}" read as GPX 1.1`);
  if (cut !== null) w.add('truncated', 'the file ends inside markup (cut short?): points completed before this line were read', cut);
  if (unfinishedPoint !== null) w.add('truncated', 'the last track point is not closed (file cut short?): dropped, its values may be cut', unfinishedPoint);
  let noTime = 0;
  const qv = new Float64Array(cols.length);
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
    const nn = (v: number) => (v >= 0 ? v : NaN);
    if (has.hdop) qv[k++] = nn(dec(p.child.hdop));
    if (has.vdop) qv[k++] = nn(dec(p.child.vdop));
    if (has.sats) qv[k++] = nn(dec(p.child.sat));
    if (has.fix) qv[k++] = FIX_QUALITY[(p.child.fix ?? '').toLowerCase()] ?? NaN;
    b.add(t, lat, lon, h, p.line, qv);
  }
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
