/**
 * src/session's stage folders import only the stages below them (or their own folder), so a reader
 * can take the session pipeline bottom-up: the result types, preparation, classification (gate and
 * review), the survey products from the posterior, the final run's products, calibration (which
 * runs trial classifications and final runs), the adequacy and verdict checks, the IMU session,
 * and process-session.ts at the top. The imports (type-only ones included) come from
 * dependency-cruiser's resolver over the TypeScript sources.
 */
import { join } from 'node:path';
import { cruise, type ICruiseResult } from 'dependency-cruiser';
import { describe, expect, it } from 'vitest';

const ROOT = join(import.meta.dirname, '..', '..');

/** Bottom to top; files directly in src/session/ are the top. */
const STAGES = ['result', 'prepare', 'classify', 'survey', 'products', 'calibrate', 'check', 'imu'];

function rank(path: string): number | null {
  const m = /^src\/session\/(?:([^/]+)\/)?[^/]+$/.exec(path);
  if (!m) return null;
  if (m[1] === undefined) return STAGES.length;
  const r = STAGES.indexOf(m[1]);
  return r < 0 ? -1 : r;
}

/** The imports that go upwards (or into a folder that is not a known stage), as "from → to". */
function upwardImports(edges: Array<[string, string]>): string[] {
  const bad: string[] = [];
  for (const [from, to] of edges) {
    const rf = rank(from), rt = rank(to);
    if (rf === null || rt === null) continue;
    if (rf < 0 || rt < 0 || rt > rf) bad.push(`${from} → ${to}`);
  }
  return bad;
}

async function sessionEdges(): Promise<Array<[string, string]>> {
  const { output } = await cruise(['src/session'], { baseDir: ROOT, tsPreCompilationDeps: true }, undefined, { tsConfig: { fileName: join(ROOT, 'tsconfig.json') } });
  const edges: Array<[string, string]> = [];
  for (const m of (output as ICruiseResult).modules) for (const d of m.dependencies) edges.push([m.source, d.resolved]);
  return edges;
}

describe('session stages', () => {
  it('every file in src/session imports only its own stage or those below', async () => {
    const edges = await sessionEdges();
    expect(edges.length).toBeGreaterThan(50);
    expect(upwardImports(edges)).toEqual([]);
  }, 60_000);
  it('the check finds an upward import and a folder outside the stage list', () => {
    expect(
      upwardImports([
        ['src/session/prepare/prepare.ts', 'src/session/result/result.ts'],
        ['src/session/prepare/prepare.ts', 'src/session/calibrate/calibrate.ts'],
        ['src/session/result/result.ts', 'src/session/process-session.ts'],
        ['src/session/misc/x.ts', 'src/session/result/result.ts'],
        ['src/session/process-session.ts', 'src/estimation/kalman.ts'],
      ]),
    ).toEqual([
      'src/session/prepare/prepare.ts → src/session/calibrate/calibrate.ts',
      'src/session/result/result.ts → src/session/process-session.ts',
      'src/session/misc/x.ts → src/session/result/result.ts',
    ]);
  });
});
