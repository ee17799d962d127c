import { describe, expect, test } from 'vitest';
import { sessionGpx, xmlText, GPX_NAMESPACE } from '../../src/output/gpx.js';
import { CAUTION } from '../../src/output/caution.js';
import { STATUS } from '../../src/session/result/result.js';
import { formatIsoUtc } from '../../src/time/parse-time.js';
import { session } from './fixtures.js';

const r = () => session('vehicle', 7, { durationSec: 300 }).result;

describe('GPX 1.1 export', () => {
  test('one trkseg per segment, one trkpt per epoch in time order, with ele and time', () => {
    const res = r();
    const gpx = sessionGpx(res);
    expect(gpx.startsWith('<?xml version="1.0" encoding="UTF-8"?>\n<gpx version="1.1" creator="hindcast"')).toBe(true);
    expect(gpx).toContain(`xmlns="${GPX_NAMESPACE}"`);
    expect((gpx.match(/<trkseg>/g) ?? []).length).toBe(res.metrics.segmentCount);
    const pts = [...gpx.matchAll(/<trkpt lat="([-\d.]+)" lon="([-\d.]+)"><ele>([-\d.]+)<\/ele><time>([^<]+)<\/time>(?:<type>([a-z-]+)<\/type>)?<\/trkpt>/g)];
    expect(pts.length).toBe(res.N);
    const j = 123;
    expect(Number(pts[j]![1])).toBeCloseTo(res.latDeg[j]!, 7);
    expect(Number(pts[j]![2])).toBeCloseTo(res.lonDeg[j]!, 7);
    expect(Number(pts[j]![3])).toBeCloseTo(res.heightM[j]!, 3);
    expect(pts[j]![4]).toBe(formatIsoUtc(res.tSec[j]!));
    for (let k = 1; k < pts.length; k++) expect(pts[k]![4]! > pts[k - 1]![4]!).toBe(true);
    // bridged and flagged epochs are named; plain kept ones are not
    const bridged = pts.filter((p) => p[5] === 'bridged').length;
    expect(bridged).toBe(res.metrics.bridgedCount);
    let kept = 0;
    for (let k = 0; k < res.N; k++) if (res.status[k] === STATUS.kept) kept++;
    expect(pts.filter((p) => p[5] === undefined).length).toBe(kept);
  });

  test('metadata: name, a description with the caution and the height reference, bounds', () => {
    const gpx = sessionGpx(r());
    const meta = gpx.slice(gpx.indexOf('<metadata>'), gpx.indexOf('</metadata>'));
    expect(meta).toContain('<name>vehicle-7</name>');
    expect(meta).toContain(xmlText(CAUTION));
    expect(meta).toContain('ellipsoidal height');
    expect(meta).toMatch(/<bounds minlat="[-\d.]+" minlon="[-\d.]+" maxlat="[-\d.]+" maxlon="[-\d.]+"\/>/);
    // schema order: metadata before trk; in metadata name, desc, time, bounds
    expect(gpx.indexOf('<metadata>')).toBeLessThan(gpx.indexOf('<trk>'));
    expect(meta.indexOf('<name>')).toBeLessThan(meta.indexOf('<desc>'));
    expect(meta.indexOf('<desc>')).toBeLessThan(meta.indexOf('<time>'));
    expect(meta.indexOf('<time>')).toBeLessThan(meta.indexOf('<bounds'));
  });

  test('decimals option', () => {
    const gpx = sessionGpx(r(), { decimals: 5 });
    expect(gpx).toMatch(/<trkpt lat="-?\d+\.\d{5}" lon="-?\d+\.\d{5}">/);
  });

  test.each([
    ['a < b & "c"', 'a &lt; b &amp; &quot;c&quot;'],
    ["it's", 'it&apos;s'],
    ['bell\u0007', 'bell'],
  ])('xmlText(%j)', (s, want) => expect(xmlText(s)).toBe(want));
});
