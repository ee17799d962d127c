/** The overview's track thumbnail (output/report/thumbnail.ts): few points, equal scale, segments apart. */
import { describe, expect, test } from 'vitest';
import { THUMBNAIL_HEIGHT, THUMBNAIL_POINTS, THUMBNAIL_WIDTH, thumbnailOf, thumbnailPoints, thumbnailSvg } from '../../src/output/report/thumbnail.js';
import { overviewData, reportPayload } from '../../src/output/report/index.js';
import { session } from './fixtures.js';

describe('track thumbnail', () => {
  test('a long track is thinned to at most the point budget, keeping both ends', () => {
    const n = 5000;
    const east = Float64Array.from({ length: n }, (_, k) => k);
    const north = Float64Array.from({ length: n }, (_, k) => Math.sin(k / 300) * 100);
    const t = thumbnailOf(east, north, new Int32Array(n));
    expect(t.lines).toHaveLength(1);
    expect(thumbnailPoints(t)).toBeLessThanOrEqual(THUMBNAIL_POINTS);
    expect(thumbnailPoints(t)).toBeGreaterThan(THUMBNAIL_POINTS / 2);
    const l = t.lines[0]!;
    // west to east across the box: the first point at the left edge, the last at the right
    expect(l[0]).toBeLessThan(l[l.length - 2]!);
    for (let i = 0; i < l.length; i += 2) {
      expect(l[i]).toBeGreaterThanOrEqual(0);
      expect(l[i]).toBeLessThanOrEqual(THUMBNAIL_WIDTH);
      expect(l[i + 1]).toBeGreaterThanOrEqual(0);
      expect(l[i + 1]).toBeLessThanOrEqual(THUMBNAIL_HEIGHT);
    }
  });

  test('equal scale on both axes, north up (common practice for a map)', () => {
    // a square 100 m a side: as wide as high in the box, the north-east corner at the top right
    const east = [0, 100, 100, 0, 0], north = [0, 0, 100, 100, 0];
    const l = thumbnailOf(east, north, [0, 0, 0, 0, 0]).lines[0]!;
    const xs = l.filter((_, i) => i % 2 === 0), ys = l.filter((_, i) => i % 2 === 1);
    expect(Math.max(...xs) - Math.min(...xs)).toBeCloseTo(Math.max(...ys) - Math.min(...ys), 0);
    // point 2 is (100, 100): largest x, smallest y (SVG y points down)
    expect(l[4]).toBe(Math.max(...xs));
    expect(l[5]).toBe(Math.min(...ys));
  });

  test('one polyline per segment; the SVG is small and labelled', () => {
    const t = thumbnailOf([0, 1, 2, 10, 11, 12], [0, 1, 0, 5, 6, 5], [0, 0, 0, 1, 1, 1]);
    expect(t.lines).toHaveLength(2);
    const svg = thumbnailSvg(t, 'Track of a');
    expect(svg.match(/<polyline /g)).toHaveLength(2);
    expect(svg).toContain('aria-label="Track of a"');
  });

  test('a session\'s overview data stays within a few kilobytes', () => {
    const r = session('vehicle', 7, { durationSec: 300 }).result;
    const d = overviewData(reportPayload(r));
    expect(thumbnailPoints(d.thumbnail)).toBeLessThanOrEqual(THUMBNAIL_POINTS);
    expect(JSON.stringify(d).length).toBeLessThan(6000);
    expect(thumbnailSvg(d.thumbnail, 'x').length).toBeLessThan(4000);
  });
});
