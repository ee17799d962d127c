/**
 * The scenario family's pooled table: every log of the family (src/simulate/family.ts) read and
 * processed with the default configuration, scored against its truth, pooled per kind
 * (test/helpers/family-score.ts). Build first (`npm run build`), then:
 *
 *   node dist/bench/family.js [--seed N] [--logs] [--only kind,kind] [--without habit,habit] [--settings JSON] [--markdown docs/validation-family.md]
 *
 * --seed draws another family (the default, 1, is the one the test suite judges); --logs adds the
 * per-log table; --without switches habits off for a diagnosis (bursts, tails, steps, drift, quality,
 * gaps, invalid: simulate/family-spec.ts familyVariant); --settings merges a partial configuration
 * over every log's own (to measure a setting); --markdown writes the generated validation
 * page (of the full family only).
 */
import { writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { FAMILY_COUNTS, FAMILY_HABITS, familySpecs, familyVariant, type FamilyHabit, type FamilyKind } from '../src/simulate/family-spec.js';
import { LOG_COLUMNS, logRow, poolByKind, POOLED_COLUMNS, pooledRow, runFamily, textTable } from '../test/helpers/family-run.js';
import { validationMarkdown, withReadmeFamilyTable } from '../test/helpers/family-doc.js';
import { readFileSync } from 'node:fs';

function repoRoot(): string {
  // dist/bench/family.js → the package root
  return join(dirname(fileURLToPath(import.meta.url)), '..', '..');
}

function main(argv: string[]): void {
  const arg = (name: string) => {
    const i = argv.indexOf(name);
    return i >= 0 ? argv[i + 1] : undefined;
  };
  const seed = Number(arg('--seed') ?? 1);
  const only = arg('--only')?.split(',') as FamilyKind[] | undefined;
  const counts = only ? Object.fromEntries(only.map((k) => [k, FAMILY_COUNTS[k]])) : FAMILY_COUNTS;
  const without = (arg('--without')?.split(',') ?? []) as FamilyHabit[];
  for (const h of without) if (!FAMILY_HABITS.includes(h)) throw new Error(`--without: unknown habit "${h}" (${FAMILY_HABITS.join(', ')})`);
  const specs = familySpecs(seed, counts).map((s) => familyVariant(s, without));
  // --settings '{"noise":{"correlatedSigmaPrior":"vertical"}}': a partial configuration over every log's own
  const settingsArg = arg('--settings');
  const settings = settingsArg ? (JSON.parse(settingsArg) as Record<string, unknown>) : undefined;
  const t0 = performance.now();
  const scores = runFamily(specs, repoRoot(), (s) => process.stderr.write(`${s.id} ${s.elapsedSec.toFixed(2)} s\r`), settings);
  process.stderr.write('\n');
  const pooled = poolByKind(scores);
  console.log(`scenario family, base seed ${seed}${without.length ? `, without ${without.join(', ')}` : ''}${settingsArg ? `, settings ${settingsArg}` : ''}: ${scores.length} logs, ${((performance.now() - t0) / 1000).toFixed(1)} s`);
  console.log(textTable(POOLED_COLUMNS, pooled.map(pooledRow)));
  if (argv.includes('--logs')) {
    console.log('');
    console.log(textTable(LOG_COLUMNS, scores.map(logRow)));
  }
  const md = arg('--markdown');
  if (md && (without.length || only || settings)) throw new Error('--markdown writes the full family only (no --without, no --only, no --settings)');
  if (md) {
    writeFileSync(md, validationMarkdown(seed, scores));
    console.log(`wrote ${md}`);
  }
  if (argv.includes('--readme')) {
    const p = join(repoRoot(), 'README.md');
    writeFileSync(p, withReadmeFamilyTable(readFileSync(p, 'utf8'), seed, scores));
    console.log(`wrote the family table into ${p}`);
  }
}

main(process.argv.slice(2));
