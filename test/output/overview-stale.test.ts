/** The report's overview marks a failed session whose earlier outputs were kept (stale). */
import { describe, expect, test } from 'vitest';
import { overviewTable, attention } from '../../src/output/report/overview-table.js';
import { buildSummary, markStale } from '../../src/output/summary.js';
import { failedEntry } from '../../src/batch/session-task.js';

describe('stale marker', () => {
  test('a failed session with kept outputs says so in the status and the "look at" column', () => {
    const plain = failedEntry('a', 'a.csv', 'a.decisions.csv:3 (column decision): "rejct" is not a decision');
    const stale = markStale(failedEntry('b', 'b.csv', 'b.decisions.csv:2 (column time): bad'), ['b.track.csv']);
    expect(attention(plain, undefined)).toEqual(['failed']);
    expect(attention(stale, undefined)).toEqual(['failed', 'outputs of an earlier run kept (stale)']);
    const html = overviewTable(buildSummary('0', 'in', 'default', [plain, stale]), new Map());
    const rows = html.split('<tbody>')[1]!.split('<tr').slice(1);
    expect(rows[0]).not.toContain('stale');
    expect(rows[1]).toContain('failed, stale outputs kept');
  });
});
