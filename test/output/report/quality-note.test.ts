/**
 * The report's plain-words quality line (src/output/report/quality-note.ts) and the summary's short
 * quality record (src/output/summary.ts): a degraded session is named as such, with its reasons and
 * the widened uncertainty; a good one says so; a session without a verdict gets no line.
 */
import { describe, expect, test } from 'vitest';
import { qualityNote } from '../../../src/output/report/quality-note.js';
import { buildSummary, sessionQuality, type SessionSummary } from '../../../src/output/summary.js';

const entry = (info: Record<string, unknown>): SessionSummary => ({ name: 's', input: 's.csv', status: 'ok', warnings: [], info, ...(sessionQuality(info) ? { quality: sessionQuality(info) } : {}) });

const degradedInfo = {
  verdict: { verdict: 'degraded', reasons: ['45% of the fixes were flagged as outliers (an ordinary log has a few per cent at most)', 'the kept fixes lie 1.5 times farther from the track than the model allows'], widened: { horizontalSdFloorM: 17.6, verticalSdFloorM: 30, medianSdHorizontalM: [4.4, 24.9] } },
  adequacy: { outcome: 'adequate', message: 'adequate (residual autocorrelation 0.10 at 1 s, limit 0.5)' },
};

describe('quality line', () => {
  test('degraded: the verdict, every reason, the widening and the motion-model check, in plain words', () => {
    const html = qualityNote(entry(degradedInfo));
    expect(html).toContain('Session quality: degraded.');
    expect(html).toContain('Session quality: degraded.</strong> 45% of the fixes were flagged as outliers');
    expect(html).toContain('1.5 times farther from the track');
    expect(html).toContain('median horizontal sd 4.40 → 24.90 m');
    expect(html).toContain('Motion model: adequate (residual autocorrelation');
    expect(html).toMatch(/^<p class="quality degraded">/);
  });

  test('good: one sentence, no widening', () => {
    const html = qualityNote(entry({ verdict: { verdict: 'good', reasons: [] }, adequacy: { outcome: 'more process noise', message: 'too stiff: …' } }));
    expect(html).toContain('Session quality: good.');
    expect(html).not.toContain('widened');
    expect(html).toContain('Motion model: too stiff: …');
  });

  test('the correlated-error floor: the sigma assumed and the sd added, only where it widened the regions', () => {
    const floor = (h: number, v: number) => ({ ratio: { horizontal: 1.25, vertical: 1.25 }, assumedSigmaM: { horizontal: 2.5, vertical: 4 }, addedSdM: { horizontal: h, vertical: v } });
    const html = qualityNote(entry({ verdict: { verdict: 'good', reasons: [] }, correlatedFloor: floor(2, 0) }));
    expect(html).toContain('slowly varying fix error of 2.50 m horizontally and 4.00 m vertically');
    expect(html).toContain('2.00 / 0.00 m sd added to every epoch');
    expect(qualityNote(entry({ verdict: { verdict: 'good', reasons: [] }, correlatedFloor: floor(0, 0) }))).not.toContain('slowly varying');
  });

  test('text is escaped', () => {
    const html = qualityNote(entry({ verdict: { verdict: 'degraded', reasons: ['the <b>x</b>'] } }));
    expect(html).toContain('The &lt;b&gt;x&lt;/b&gt;');
  });

  test('no verdict (e.g. an IMU-aided session): no line, no quality record', () => {
    expect(qualityNote(entry({}))).toBe('');
    expect(sessionQuality({})).toBeUndefined();
  });
});

describe('summary', () => {
  test('quality record and the count of degraded sessions', () => {
    const a = entry(degradedInfo);
    const b = entry({ verdict: { verdict: 'good', reasons: [] } });
    expect(a.quality).toEqual({ verdict: 'degraded', reasons: degradedInfo.verdict.reasons, motionModel: 'adequate' });
    expect(b.quality).toEqual({ verdict: 'good', reasons: [], motionModel: 'not checked' });
    const s = buildSummary('0', 'in', 'default', [a, b, { name: 'f', input: 'f.csv', status: 'failed', reason: 'x', warnings: [] }]);
    expect(s.totals.degraded).toBe(1);
  });
});
