/**
 * The scenario family's generator (src/simulate/family.ts): deterministic per seed, drawn within the
 * ranges its header documents, and written so that the normal CSV reader, with only the time zone a
 * user would configure, reads back every fix at its time and position.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { generateFamilyLog } from '../../src/simulate/family.js';
import { FAMILY_COUNTS, familySpecs, familyVariant, type FamilyLogSpec } from '../../src/simulate/family-spec.js';
import { familyTruth } from '../../src/simulate/family-motion.js';

const DIR = join(import.meta.dirname, '..', 'fixtures', 'smartloc');
const read = (d: string) => readFileSync(join(DIR, `${d}_GT.txt`), 'utf8');
const specs = familySpecs(1);

describe('family specifications', () => {
  test('the standard family has at least 60 logs, the counts per kind, distinct seeds and names', () => {
    expect(specs.length).toBe(Object.values(FAMILY_COUNTS).reduce((a, b) => a + b, 0));
    expect(specs.length).toBeGreaterThanOrEqual(60);
    expect(new Set(specs.map((s) => s.seed)).size).toBe(specs.length);
    expect(new Set(specs.map((s) => s.id)).size).toBe(specs.length);
  });

  test('the same base seed gives the same logs, another gives others', () => {
    expect(familySpecs(1)).toEqual(specs);
    expect(familySpecs(2)[0]!.seed).not.toBe(specs[0]!.seed);
    const a = generateFamilyLog(specs[3]!, read).written.text;
    const b = generateFamilyLog(familySpecs(1)[3]!, read).written.text;
    expect(a).toBe(b);
  });

  test.each(specs.map((s) => [s.id, s] as [string, FamilyLogSpec]))('%s is drawn within the documented ranges', (_id, s) => {
    const R = s.receiver;
    const corr = (c: typeof R.correlatedH) => Math.sqrt(c.components.reduce((a, g) => a + g.sigmaM ** 2, 0));
    if (s.kind !== 'degraded') {
      expect(R.whiteHM).toBeGreaterThanOrEqual(0.3);
      expect(R.whiteHM).toBeLessThanOrEqual(3);
      expect(corr(R.correlatedH)).toBeGreaterThanOrEqual(0.3 - 1e-9);
      expect(corr(R.correlatedH)).toBeLessThanOrEqual(5 + 1e-9);
      for (const g of [...R.correlatedH.components, ...R.correlatedV.components]) {
        expect(g.tauSec).toBeGreaterThanOrEqual(10 - 1e-9);
        expect(g.tauSec).toBeLessThanOrEqual(300 + 1e-9);
      }
    }
    expect(R.whiteVM / R.whiteHM).toBeGreaterThanOrEqual(1.2);
    expect(s.rateHz).toBeGreaterThanOrEqual(1);
    expect(s.rateHz).toBeLessThanOrEqual(20);
    const minutes = s.durationSec / 60;
    if (s.kind !== 'real') expect(minutes).toBeGreaterThanOrEqual(s.rateHz >= 10 ? 5 : 8);
    expect(minutes).toBeLessThanOrEqual(s.rateHz >= 10 ? 8 : 20);
    if (s.kind === 'van') expect(s.rateHz).toBe(10);
    if (s.kind === 'drone') expect(s.rateHz).toBe(5);
    if (s.kind === 'circle' || s.kind === 'degraded') expect(s.rateHz).toBe(1);
  });

  test('the family covers every quality mode, error shape, tail and time format', () => {
    const seen = (f: (s: FamilyLogSpec) => string) => new Set(specs.map(f));
    expect(seen((s) => s.quality.mode)).toEqual(new Set(['informative', 'weak', 'absent']));
    expect(seen((s) => s.receiver.tail.kind)).toEqual(new Set(['normal', 'student', 'contaminated']));
    expect(seen((s) => s.time.format)).toEqual(new Set(['iso-z', 'iso-offset', 'local', 'unix-s', 'unix-ms']));
    expect(seen((s) => (s.receiver.correlatedH.drift10MinM > 0 ? 'drift' : `gm${s.receiver.correlatedH.components.length}`))).toEqual(new Set(['gm1', 'gm2', 'drift']));
    expect(seen((s) => s.receiver.grade)).toEqual(new Set(['survey', 'mapping', 'consumer', 'phone', 'deep-urban']));
    // vertical time constants drawn apart from the horizontal ones
    expect(specs.filter((s) => s.receiver.correlatedV.components[0]!.tauSec !== s.receiver.correlatedH.components[0]!.tauSec).length).toBeGreaterThan(specs.length * 0.9);
  });
});

describe('written logs', () => {
  // one log of each time format and each header spelling
  const chosen = new Map<string, FamilyLogSpec>();
  for (const s of specs) {
    if (!chosen.has(s.time.format)) chosen.set(s.time.format, s);
    if (!chosen.has(`h${s.header}`)) chosen.set(`h${s.header}`, s);
  }
  test.each([...chosen.entries()])('%s: the reader, with only the configured time zone, reads every fix at its time and position', (_k, spec) => {
    const log = generateFamilyLog(spec, read);
    const cfg = loadConfig({ overrides: log.written.config });
    const series = readFixCsv(log.written.text, log.written.fileName, cfg);
    const written = log.fixes.filter((f) => !f.empty);
    expect(series.n).toBe(written.length);
    for (let i = 0; i < series.n; i++) {
      // times to the millisecond the file holds; positions to the 1e-9 degrees written
      expect(Math.abs(series.tSec[i]! - written[i]!.tSec)).toBeLessThanOrEqual(0.0006);
      expect(Math.abs(series.latDeg[i]! - written[i]!.latDeg)).toBeLessThanOrEqual(1e-9);
    }
    expect(series.quality.hdop !== undefined).toBe(spec.quality.mode !== 'absent');
  });

  test('labels: outliers carry a burst offset of at least 10 m, invalid rows sit at (0, 0) or are empty', () => {
    for (const spec of specs.slice(0, 12)) {
      const log = generateFamilyLog(spec, read);
      for (const f of log.fixes) {
        const [e, n] = log.frame.geodeticToEnu(f.latDeg, f.lonDeg, f.heightM);
        if (f.label === 'outlier') expect(Math.hypot(e - f.truthEnu[0], n - f.truthEnu[1])).toBeGreaterThan(5);
        if (f.label === 'invalid') expect([f.latDeg, f.lonDeg]).toEqual([0, 0]);
      }
    }
  });
});

describe('motion kinds', () => {
  const speedAt = (tr: ReturnType<typeof familyTruth>, k: number) => Math.hypot(tr.e[k + 1]! - tr.e[k]!, tr.n[k + 1]! - tr.n[k]!) / tr.dtSec;
  test('the van is parked for at least 20 s at the start and stops for at least 20 s', () => {
    for (const seed of [11, 12, 13]) {
      const tr = familyTruth('van', seed, 600);
      for (let k = 0; k < 20 / tr.dtSec; k++) expect(speedAt(tr, k)).toBeLessThan(1e-9);
      // stop lengths: runs of zero speed after the first drive
      const runs: number[] = [];
      let run = 0, moved = false;
      for (let k = 0; k < tr.e.length - 2; k++) {
        const still = speedAt(tr, k) < 1e-6;
        if (!still) moved = true;
        if (still && moved) run++;
        else if (run) {
          runs.push(run * tr.dtSec);
          run = 0;
        }
      }
      expect(runs.length).toBeGreaterThan(0);
      for (const r of runs) expect(r).toBeGreaterThanOrEqual(19.5);
    }
  });

  test('the circling walker turns on radii of 2–5 m for minutes', () => {
    const tr = familyTruth('circle', 21, 900);
    // radius from speed over heading rate, over 1 s steps where the walker moves at speed
    let tight = 0;
    const step = Math.round(1 / tr.dtSec);
    for (let k = step; k + step < tr.e.length; k += step) {
      const h0 = Math.atan2(tr.e[k]! - tr.e[k - step]!, tr.n[k]! - tr.n[k - step]!);
      const h1 = Math.atan2(tr.e[k + step]! - tr.e[k]!, tr.n[k + step]! - tr.n[k]!);
      const dh = Math.abs(Math.atan2(Math.sin(h1 - h0), Math.cos(h1 - h0)));
      const v = Math.hypot(tr.e[k + step]! - tr.e[k]!, tr.n[k + step]! - tr.n[k]!);
      if (v > 0.7 && dh > 0) {
        const r = v / dh;
        if (r >= 1.9 && r <= 5.2) tight++;
      }
    }
    // at least three minutes of tight circling in fifteen
    expect(tight).toBeGreaterThanOrEqual(180);
  });
});

describe('variants', () => {
  test('a variant without bursts, tails and steps changes only those draws', () => {
    const spec = specs.find((s) => s.receiver.tail.kind !== 'normal' && s.receiver.modeSteps.length > 0)!;
    const v = familyVariant(spec, ['bursts', 'tails', 'steps']);
    expect(v.bursts.perMinute).toBe(0);
    expect(v.receiver.tail).toEqual({ kind: 'normal' });
    expect(v.receiver.modeSteps).toEqual([]);
    expect({ ...v, bursts: spec.bursts, receiver: { ...v.receiver, tail: spec.receiver.tail, modeSteps: spec.receiver.modeSteps } }).toEqual(spec);
    const log = generateFamilyLog(v, read);
    expect(log.fixes.filter((f) => f.label === 'outlier' || f.label === 'ambiguous')).toEqual([]);
    // the original is untouched
    expect(spec.bursts.perMinute).toBeGreaterThan(0);
  });
});
