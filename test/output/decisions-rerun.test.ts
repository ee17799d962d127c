/**
 * The review loop end to end: times taken from track.csv, a decisions file written beside the log,
 * read back and honoured on a rerun; exactly the named epochs change status, and the outputs and
 * the report say the decision was the user's.
 */
import { describe, expect, test } from 'vitest';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { parseDecisionNotes } from '../../src/input/decision-notes.js';
import { attachDecisionNotes } from '../../src/session/products/products.js';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { readDecisions } from '../../src/input/decisions-csv.js';
import { processSession } from '../../src/session/process-session.js';
import { STATUS, type SessionResult } from '../../src/session/result/result.js';
import { trackCsv } from '../../src/output/track-csv.js';
import { outliersCsv } from '../../src/output/outliers-csv.js';
import { sessionGeoJson } from '../../src/output/geojson.js';
import { buildSummary, okEntry } from '../../src/output/summary.js';
import { overviewData, reportHtml, reportPayload, sessionPageHtml } from '../../src/output/report/index.js';
import { loadConfig } from '../../src/config/load.js';
import { readFixCsv } from '../../src/input/csv-fixes.js';
import { DEFAULT_ERRORS, defaultSpec, scenarioCsv, simulate } from '../../src/simulate/scenario.js';

/**
 * A drive without outlier bursts and with two planted outliers well apart (fix 100 displaced 8 m
 * north: just above the gate; fix 180 displaced 40 m east), so each decision's effect stands alone.
 */
let cached: ReturnType<typeof make> | undefined;
function make() {
  const sc = simulate(defaultSpec('vehicle', 7, { durationSec: 300, errors: { ...DEFAULT_ERRORS.vehicle, burstsPer100: 0, gaps: [[250, 25]] } }));
  const f100 = sc.fixes[100]!, f180 = sc.fixes[180]!;
  f100.latDeg += 8 / 111_320;
  f180.lonDeg += 40 / (111_320 * Math.cos((f180.latDeg * Math.PI) / 180));
  const cfg = loadConfig();
  const series = readFixCsv(scenarioCsv(sc), 'vehicle-7.csv', cfg);
  return { cfg, series, result: processSession(series, cfg, 'vehicle-7') };
}
const base = () => (cached ??= make());

/** The time column of track.csv, by epoch. */
function trackTimes(r: SessionResult): string[] {
  return trackCsv(r).trim().split('\n').slice(1).map((l) => l.split(',')[0]!);
}

/** The first epoch from `from` on with a fix of the given status. */
function pick(r: SessionResult, status: number, from: number): number {
  for (let j = from; j < r.N; j++) if (r.status[j] === status && r.fix[j]! >= 0) return j;
  throw new Error('no such epoch');
}

/** Epochs the gate flagged (not invalid fixes), isolated (kept neighbours) or not, by test statistic over threshold. */
function gated(r: SessionResult, isolated: boolean): number[] {
  const out: number[] = [];
  for (let j = 1; j + 1 < r.N; j++) {
    if (r.status[j] !== STATUS.outlier || !(r.nis[j]! > r.nisThreshold[j]!)) continue;
    if (isolated && (r.status[j - 1] !== STATUS.kept || r.status[j + 1] !== STATUS.kept)) continue;
    out.push(j);
  }
  return out.sort((a, b) => r.nis[a]! / r.nisThreshold[a]! - r.nis[b]! / r.nisThreshold[b]!);
}

function rerun(decisions: Array<[number, 'keep' | 'reject']>): { before: SessionResult; after: SessionResult; named: Set<number>; path: string } {
  const { series, cfg, result: before } = base();
  const times = trackTimes(before);
  const dir = mkdtempSync(join(tmpdir(), 'hindcast-review-'));
  const path = join(dir, 'vehicle-7.decisions.csv');
  writeFileSync(path, ['time,decision,note', ...decisions.map(([j, d]) => `${times[j]},${d},"looked at it, ${d}"`)].join('\n') + '\n');
  const map = readDecisions(path, series);
  expect(map.size).toBe(decisions.length);
  const after = processSession(series, cfg, 'vehicle-7', map);
  return { before, after, named: new Set(decisions.map(([j]) => j)), path };
}

describe('decisions fed back on a rerun', () => {
  test('keeping a fix the tool kept and rejecting one it flagged change those two statuses only', () => {
    const r0 = base().result;
    const keepKept = pick(r0, STATUS.kept, 200);
    const rejectFlagged = gated(r0, false).at(-1)!; // the most obvious one
    expect(r0.nis[rejectFlagged]!).toBeGreaterThan(r0.nisThreshold[rejectFlagged]!);
    const { before, after, named } = rerun([[keepKept, 'keep'], [rejectFlagged, 'reject']]);
    expect(after.N).toBe(before.N);
    for (let j = 0; j < before.N; j++) if (!named.has(j)) expect([j, after.status[j]]).toEqual([j, before.status[j]]);
    expect(after.status[keepKept]).toBe(STATUS.userKept);
    expect(after.status[rejectFlagged]).toBe(STATUS.userRejected);
    const o = after.outliers.find((x) => x.tSec === before.tSec[rejectFlagged]);
    expect(o?.reason).toBe('user');
  });

  test('rejecting a fix the tool kept and keeping one it flagged change exactly those statuses; the track moves near them', () => {
    const r0 = base().result;
    const rejectKept = pick(r0, STATUS.kept, 30);
    const keepFlagged = gated(r0, true)[0]!; // a single fix just above the gate
    expect(r0.fix[keepFlagged]).toBe(100); // the planted 8 m one
    const { before, after, named } = rerun([[rejectKept, 'reject'], [keepFlagged, 'keep']]);
    const changed: number[] = [];
    for (let j = 0; j < before.N; j++) if (after.status[j] !== before.status[j]) changed.push(j);
    expect(changed).toEqual([...named].sort((a, b) => a - b));
    expect(after.status[rejectKept]).toBe(STATUS.userRejected);
    expect(after.status[keepFlagged]).toBe(STATUS.userKept);
    // the kept fix now pulls the track towards it; the rejected one no longer does
    const d = (r: SessionResult, j: number) => Math.hypot(r.rawEnu![0][j]! - r.posEnu[0][j]!, r.rawEnu![1][j]! - r.posEnu[1][j]!);
    expect(d(after, keepFlagged)).toBeLessThan(d(before, keepFlagged));
    expect(d(after, rejectKept)).not.toBe(d(before, rejectKept));
    // outputs: track.csv names the statuses, outliers.csv and GeoJSON say who decided
    const rows = trackCsv(after).trim().split('\n');
    expect(rows[rejectKept + 1]).toMatch(/,user-rejected,\d+$/);
    expect(rows[keepFlagged + 1]).toMatch(/,user-kept,\d+$/);
    expect(outliersCsv(after)).toMatch(/,user,.*rejected by the user/);
    expect(after.outliers.some((o) => o.tSec === before.tSec[keepFlagged])).toBe(false);
    const fc = sessionGeoJson(after, { decimals: 7 }) as { features: Array<{ properties: Record<string, unknown> }> };
    expect(fc.features.filter((f) => f.properties.decided_by === 'user')).toHaveLength(1);
  });

  test('the report shows the decisions as the user\'s', async () => {
    const r0 = base().result;
    const rejectKept = pick(r0, STATUS.kept, 30);
    const keepFlagged = gated(r0, true)[0]!;
    const { after, path } = rerun([[rejectKept, 'reject'], [keepFlagged, 'keep']]);
    // the user's notes, attached as the batch does
    attachDecisionNotes(after, parseDecisionNotes(readFileSync(path, 'utf8'), base().series));
    expect(outliersCsv(after)).toContain(',"looked at it, reject",rejected by the user');
    const p = reportPayload(after);
    expect(p.decisions.map((d) => d.note).sort()).toEqual(['looked at it, keep', 'looked at it, reject']);
    expect(p.decisionCount).toBe(2);
    expect(p.decisions.map((d) => d.decision).sort()).toEqual(['keep', 'reject']);
    const times = trackTimes(after);
    const entry = okEntry(after, 'vehicle-7.csv', [], 0);
    const page = await sessionPageHtml(entry, p, { tool: 'hindcast', version: 't', profile: 'default' });
    const section = page.slice(page.indexOf('<section class="session"'));
    expect(section).toContain(`<td><code>${times[rejectKept]}</code></td><td>rejected by you (user-rejected)</td>`);
    expect(section).toContain(`<td><code>${times[keepFlagged]}</code></td><td>kept by you (user-kept)</td>`);
    // and in the flagged-fix table, the user's rejection is marked as theirs
    const row = section.split('<table class="flagged')[1]!.split('<tr id=').find((r) => r.includes(`<code>${times[rejectKept]}</code>`))!;
    expect(row).toMatch(/<td data-sort="rejected by you">rejected by you<\/td>/);
    expect(row).toContain('>user-rejected</td>');
    expect(row).toContain('>looked at it, reject</td>');
    expect(section).toContain('<td>looked at it, keep</td>');
    // the overview counts them
    expect(reportHtml(buildSummary('t', 'logs', 'default', [entry]), new Map([['vehicle-7', overviewData(p)]]))).toContain('2 decided by you');
  });
});
