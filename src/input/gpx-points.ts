/**
 * The track points of a GPX 1.1 file as the markup holds them (input/gpx.ts reads their values):
 * every <trkpt> of every <trk>/<trkseg> with the text of its first <ele>, <time>, <hdop>, <vdop>,
 * <sat> and <fix>; <extensions> skipped; route points and waypoints counted, not read.
 */
import { scanXml, type XmlTag } from './xml-scan.js';

const CHILDREN = new Set(['ele', 'time', 'hdop', 'vdop', 'sat', 'fix']);

export interface GpxPoint {
  line: number;
  lat: string | undefined;
  lon: string | undefined;
  child: Record<string, string>;
}

export interface GpxMarkup {
  points: GpxPoint[];
  /** The file has a <gpx> element; its version attribute. */
  sawGpx: boolean;
  version: string | undefined;
  /** Line where the file ends inside markup, or null. */
  cut: number | null;
  /** Line of a last track point that is not closed (dropped), or null. */
  unfinishedPoint: number | null;
  /** Route points and waypoints. */
  otherPoints: number;
}

/** Collects the track points from the tokenizer's tags and text. */
class GpxPointCollector {
  readonly points: GpxPoint[] = [];
  sawGpx = false;
  version: string | undefined;
  otherPoints = 0;
  /** The open track point, its open child element and that child's text so far. */
  pt: GpxPoint | null = null;
  private child: string | null = null;
  private childText = '';
  private depthExt = 0;

  tag(t: XmlTag): void {
    if (t.name === 'extensions') {
      if (t.kind === 'open') this.depthExt++;
      else if (t.kind === 'close') this.depthExt = Math.max(0, this.depthExt - 1);
      return;
    }
    if (this.depthExt > 0) return;
    if (t.name === 'gpx' && t.kind !== 'close') {
      this.sawGpx = true;
      this.version = t.attrs.version;
      return;
    }
    if (t.name === 'trkpt') return this.trackPoint(t);
    if (t.name === 'rtept' || t.name === 'wpt') {
      if (t.kind !== 'close') this.otherPoints++;
      return;
    }
    const pt = this.pt;
    if (pt && CHILDREN.has(t.name)) {
      if (t.kind === 'open') {
        this.child = t.name;
        this.childText = '';
      } else if (t.kind === 'close' && this.child === t.name) {
        if (!(this.child in pt.child)) pt.child[this.child] = this.childText.trim();
        this.child = null;
      }
    }
  }

  private trackPoint(t: XmlTag): void {
    if (t.kind === 'close') {
      if (this.pt) this.points.push(this.pt);
      this.pt = null;
      this.child = null;
      return;
    }
    if (this.pt) this.points.push(this.pt); // an unclosed previous point ends here
    const p: GpxPoint = { line: t.line, lat: t.attrs.lat, lon: t.attrs.lon, child: {} };
    if (t.kind === 'empty') this.points.push(p);
    else this.pt = p;
    this.child = null;
  }

  text(s: string): void {
    if (this.pt && this.child && this.childText.length < 256) this.childText += s;
  }
}

export function collectGpxPoints(body: string): GpxMarkup {
  const c = new GpxPointCollector();
  const cut = scanXml(body, { tag: (t) => c.tag(t), text: (s) => c.text(s) });
  return { points: c.points, sawGpx: c.sawGpx, version: c.version, cut, unfinishedPoint: c.pt ? c.pt.line : null, otherPoints: c.otherPoints };
}
