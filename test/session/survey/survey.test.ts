/**
 * Pieces of the survey products (session/survey/survey.ts) on constructed input: the draw budget and the
 * Douglas–Peucker simplification of the length vertices (Douglas & Peucker 1973).
 */
import { describe, expect, it } from 'vitest';
import { drawsFor, simplifyVertices, DRAW_EPOCH_BUDGET, type SurveyVertex } from '../../../src/session/survey/survey.js';
import type { SessionResult } from '../../../src/session/result/result.js';

describe('drawsFor (the draw budget)', () => {
  it.each([
    [3600, 200, 200],
    [25_000, 200, 200],
    [50_000, 200, 100],
    [100_000, 200, 50],
    [200_000, 200, 0],
    [1_000_000, 200, 0],
    [500_000, 10, 10],
    [3600, 0, 0],
  ])('%d epochs, %d requested → %d draws', (N, req, want) => {
    expect(drawsFor(N, req)).toBe(want);
    expect(drawsFor(N, req) * N).toBeLessThanOrEqual(Math.max(DRAW_EPOCH_BUDGET, req * N));
  });
});

describe('simplifyVertices', () => {
  // a track east along y = wiggle, then a right-angle turn north at x = 100
  const pts: Array<[number, number]> = [];
  for (let i = 0; i <= 10; i++) pts.push([i * 10, i % 2 === 0 ? 0.5 : -0.5]);
  for (let i = 1; i <= 5; i++) pts.push([100, i * 10]);
  const N = pts.length;
  const r = { N, posEnu: [Float64Array.from(pts, (p) => p[0]), Float64Array.from(pts, (p) => p[1]), new Float64Array(N)] } as unknown as SessionResult;
  const vx: SurveyVertex[] = pts.map((_, j) => ({ segment: 0, first: j, last: j, occupation: -1 }));
  it('drops the vertices whose offset from the chord is within the tolerance, keeps the corner and the ends', () => {
    const kept = simplifyVertices(r, vx, [], 2).map((v) => v.first);
    expect(kept).toEqual([0, 10, 15]);
  });
  it('keeps the wiggle when the tolerance is below it (every vertex of the zigzag, the straight leg north thinned)', () => {
    const kept = simplifyVertices(r, vx, [], 0.4).map((v) => v.first);
    expect(kept).toEqual([0, 1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 15]);
  });
});
