/**
 * Corners rebuilt from straight legs (src/session/survey/leg-corners.ts): total-least-squares lines
 * (Pearson 1901: the principal axis of the points) and their intersection, checked on exact
 * geometry (common practice: a corner of two straight legs is their lines' intersection).
 */
import { describe, expect, it } from 'vitest';
import { cornerOf, intersectLines, legSums, legWindow, lineOfSums } from '../../../src/session/survey/leg-corners.js';

/** East along x then north: an L with its corner at (50, 0), rounded over the `round` points before and after it. */
function lPath(round = 0): { e: number[]; n: number[] } {
  const e: number[] = [], n: number[] = [];
  for (let k = 0; k <= 50; k++) {
    e.push(k);
    n.push(0);
  }
  for (let k = 1; k <= 50; k++) {
    e.push(50);
    n.push(k);
  }
  // cut the corner: points within `round` of it pulled inside (toward (50 - round, round))
  for (let k = 50 - round; k <= 50 + round; k++) {
    const f = 1 - Math.abs(k - 50) / (round || 1);
    if (round > 0) {
      e[k] = e[k]! - 0.4 * round * f;
      n[k] = n[k]! + 0.4 * round * f;
    }
  }
  return { e, n };
}

describe('corners rebuilt from legs', () => {
  it('fits a straight leg exactly and intersects two legs at the corner', () => {
    const { e, n } = lPath();
    const a = lineOfSums(legSums(e, n, 5, 40, e[5]!, n[5]!), e[5]!, n[5]!);
    const b = lineOfSums(legSums(e, n, 60, 95, e[60]!, n[60]!), e[60]!, n[60]!);
    expect(Math.abs(a.dn)).toBeLessThan(1e-12);
    expect(Math.abs(b.de)).toBeLessThan(1e-12);
    const x = intersectLines(a, b);
    expect(x.e).toBeCloseTo(50, 9);
    expect(x.n).toBeCloseTo(0, 9);
  });
  it('puts a rounded corner back at the legs’ intersection, outside the rounding', () => {
    const { e, n } = lPath(4);
    const a = lineOfSums(legSums(e, n, 5, 40, e[5]!, n[5]!), e[5]!, n[5]!);
    const b = lineOfSums(legSums(e, n, 60, 95, e[60]!, n[60]!), e[60]!, n[60]!);
    const c = cornerOf(e, n, [5, 40], [60, 95], a, b, e[50]!, n[50]!, 1, 10);
    expect(c).not.toBeNull();
    expect(c!.e).toBeCloseTo(50, 9);
    expect(c!.n).toBeCloseTo(0, 9);
    // the smoothed vertex was 2.26 m inside the corner
    expect(Math.hypot(e[50]! - 50, n[50]!)).toBeGreaterThan(2);
  });
  it('leaves a straight run, a gentle turn and a curved leg alone', () => {
    const e: number[] = [], n: number[] = [];
    for (let k = 0; k <= 100; k++) {
      e.push(k);
      n.push(k <= 50 ? 0 : (k - 50) * Math.tan((10 * Math.PI) / 180));
    }
    const a = lineOfSums(legSums(e, n, 5, 40, e[5]!, n[5]!), e[5]!, n[5]!);
    const b = lineOfSums(legSums(e, n, 60, 95, e[60]!, n[60]!), e[60]!, n[60]!);
    // a 10° turn: below CORNER_MIN_TURN_DEG
    expect(cornerOf(e, n, [5, 40], [60, 95], a, b, e[50]!, n[50]!, 1, 10)).toBeNull();
    // a quarter circle of radius 50 as the second leg: not straight within 1 m
    const ce: number[] = e.slice(0, 51), cn: number[] = n.slice(0, 51);
    for (let k = 1; k <= 50; k++) {
      const th = (k / 50) * (Math.PI / 2);
      ce.push(50 + 50 * Math.sin(th));
      cn.push(50 - 50 * Math.cos(th));
    }
    const a2 = lineOfSums(legSums(ce, cn, 5, 40, ce[5]!, cn[5]!), ce[5]!, cn[5]!);
    const b2 = lineOfSums(legSums(ce, cn, 60, 95, ce[60]!, cn[60]!), ce[60]!, cn[60]!);
    expect(cornerOf(ce, cn, [5, 40], [60, 95], a2, b2, ce[50]!, cn[50]!, 1, 100)).toBeNull();
  });
  it('leaves out the guard seconds next to each vertex and needs enough epochs', () => {
    const t = Array.from({ length: 40 }, (_, k) => k);
    expect(legWindow(t, 0, 39, 6)).toEqual([6, 33]);
    expect(legWindow(t, 0, 18, 6)).toBeNull();
  });
});
