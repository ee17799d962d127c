/**
 * Running the whole scenario family (src/simulate/family.ts) through the default pipeline and
 * pooling its scores per kind (test/helpers/family-score.ts), and the pooled table as text and
 * markdown. Used by test/session/family.test.ts and by `node dist/bench/family.js`.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { generateFamilyLog } from '../../src/simulate/family.js';
import { FAMILY_KINDS, familySpecs, type FamilyKind, type FamilyLogSpec } from '../../src/simulate/family-spec.js';
import { poolScores, runFamilyLog, type FamilyScore, type PooledScore } from './family-score.js';

/** The smartLoc ground-truth file of a drive, from the repository's fixtures folder. */
export function smartlocReader(repoRoot: string): (drive: string) => string {
  return (drive) => readFileSync(join(repoRoot, 'test', 'fixtures', 'smartloc', `${drive}_GT.txt`), 'utf8');
}

export function runFamily(specs: FamilyLogSpec[], repoRoot: string, onLog?: (s: FamilyScore) => void, settings?: Record<string, unknown>): FamilyScore[] {
  const read = smartlocReader(repoRoot);
  return specs.map((spec) => {
    const s = runFamilyLog(generateFamilyLog(spec, read), settings);
    onLog?.(s);
    return s;
  });
}

export const SYNTHETIC_KINDS: FamilyKind[] = FAMILY_KINDS.filter((k) => k !== 'real');

/** Pooled scores per kind (in the family's kind order), then all synthetic kinds together. */
export function poolByKind(scores: FamilyScore[]): PooledScore[] {
  const out: PooledScore[] = [];
  for (const k of FAMILY_KINDS) {
    const list = scores.filter((s) => s.kind === k);
    if (list.length) out.push(poolScores(k, list));
  }
  const syn = scores.filter((s) => s.kind !== 'real');
  if (syn.length) out.push(poolScores('all synthetic', syn));
  return out;
}

const f2 = (x: number) => (Number.isFinite(x) ? x.toFixed(2) : '–');
const f3 = (x: number) => (Number.isFinite(x) ? x.toFixed(3) : '–');

export const POOLED_COLUMNS = ['kind', 'logs', 'fixes', 'RMSE ratio pooled', 'worst log', 'cover H95', 'cover U95', 'min H / U per log', 'recall', 'precision', 'outliers', 'false alarms (× nominal)'];

export function pooledRow(p: PooledScore): string[] {
  return [
    p.kind,
    String(p.logs),
    String(p.fixes),
    f3(p.ratio),
    `${f3(p.worstRatio)} (${p.worstRatioLog})`,
    f3(p.coverH95),
    f3(p.coverU95),
    `${f2(p.minCoverH95)} / ${f2(p.minCoverU95)}`,
    f3(p.recall),
    f3(p.precision),
    String(p.injected),
    `${p.falseAlarms} (${f2(p.falseAlarmRatio)}×)`,
  ];
}

export const LOG_COLUMNS = ['log', 'grade', 'Hz', 'fixes', 'raw RMSE m', 'ratio', 'cover H95', 'cover U95', 'recall', 'precision', 'false alarms / clean'];

export function logRow(s: FamilyScore): string[] {
  return [s.id, s.grade, String(s.rateHz), String(s.fixes), f2(s.rmseRawH), f3(s.ratio), f3(s.coverH95), f3(s.coverU95), s.tp + s.fn ? f3(s.recall) : '–', s.tp + s.fp ? f3(s.precision) : '–', `${s.fp} / ${s.clean}`];
}

export function markdownTable(head: string[], rows: string[][]): string {
  return [`| ${head.join(' | ')} |`, `|${head.map(() => '---').join('|')}|`, ...rows.map((r) => `| ${r.join(' | ')} |`)].join('\n');
}

export function textTable(head: string[], rows: string[][]): string {
  const all = [head, ...rows];
  const w = head.map((_, i) => Math.max(...all.map((r) => r[i]!.length)));
  return all.map((r) => r.map((c, i) => c.padEnd(w[i]!)).join('  ')).join('\n');
}

export { familySpecs };
