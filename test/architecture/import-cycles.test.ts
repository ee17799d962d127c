/**
 * No import cycle in src: every module imports only modules "below" it, so the pipeline's stages
 * can be read (and tested) bottom-up. Checked with dependency-cruiser's own resolver over the
 * TypeScript sources, type-only imports included (a type cycle still ties two files together).
 */
import { join } from 'node:path';
import { cruise, type ICruiseResult } from 'dependency-cruiser';
import { describe, expect, it } from 'vitest';

const ROOT = join(import.meta.dirname, '..', '..');

async function cycles(paths: string[]): Promise<string[]> {
  const { output } = await cruise(
    paths,
    {
      baseDir: ROOT,
      tsPreCompilationDeps: true,
      validate: true,
      ruleSet: { forbidden: [{ name: 'no-circular', severity: 'error', from: {}, to: { circular: true } }] },
    },
    undefined,
    { tsConfig: { fileName: join(ROOT, 'tsconfig.json') } },
  );
  const result = output as ICruiseResult;
  return result.summary.violations.map((v) => [v.from, ...(v.cycle ?? []).map((c) => c.name)].join(' → '));
}

describe('import graph', () => {
  it('has no cycle in src', async () => {
    expect(await cycles(['src'])).toEqual([]);
  }, 60_000);
  it('finds a cycle where there is one (the check can fail)', async () => {
    const found = await cycles(['test/architecture/fixtures/cycle']);
    expect(found.length).toBeGreaterThan(0);
    expect(found.join('\n')).toMatch(/a\.ts → .*b\.ts/);
  }, 60_000);
});
