/**
 * Golden outputs: the track and outlier files of two committed sample logs, compared byte for byte.
 * Regenerate only on explicit request: UPDATE_GOLDEN=1 npx vitest run test/output/golden.test.ts
 * (then review the diff: every change of a figure must be intended).
 */
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { outliersCsv } from '../../src/output/outliers-csv.js';
import { trackCsv } from '../../src/output/track-csv.js';
import { processSession } from '../../src/session/process-session.js';

const ROOT = join(import.meta.dirname, '..', '..');
const GOLDEN = join(ROOT, 'test', 'golden');
const UPDATE = process.env.UPDATE_GOLDEN === '1';

describe.each(['walking-survey', 'delivery-van'])('golden outputs of sample-data/%s.csv', (stem) => {
  const cfg = loadConfig();
  const series = readFixCsv(readFileSync(join(ROOT, 'sample-data', `${stem}.csv`), 'utf8'), `${stem}.csv`, cfg);
  const r = processSession(series, cfg, stem);
  test.each([
    ['track.csv', () => trackCsv(r)],
    ['outliers.csv', () => outliersCsv(r)],
  ] as const)('%s', (kind, make) => {
    const path = join(GOLDEN, `${stem}.${kind}`);
    const text = make();
    if (UPDATE) {
      mkdirSync(GOLDEN, { recursive: true });
      writeFileSync(path, text);
    }
    expect(existsSync(path), `${path} is missing: run with UPDATE_GOLDEN=1 once`).toBe(true);
    expect(text).toBe(readFileSync(path, 'utf8'));
  });
});
