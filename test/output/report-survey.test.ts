/**
 * The report's survey section (output/report/survey-section.ts): occupied points and measured
 * quantities with their uncertainty, from the session's summary entry.
 */
import { describe, expect, test } from 'vitest';
import { surveySectionHtml } from '../../src/output/report/survey-section.js';
import { surveySummary } from '../../src/output/survey-summary.js';
import { session } from './fixtures.js';

describe('report: survey section', () => {
  const r = session('walk', 2).result;
  const html = surveySectionHtml(surveySummary(r.survey!));
  test('lists every occupied point with its sd and effective fixes', () => {
    for (const o of r.survey!.occupations) expect(html).toContain(`<td>${o.id}</td>`);
    expect(html).toContain('effective fixes');
  });
  test('shows the lengths as estimate ± sd with the 95% interval, beside the raw fixes’ polyline', () => {
    const total = r.survey!.lengths.at(-1)!.horizontalM!;
    expect(html).toContain(`${total.estimate.toFixed(2)} ± ${total.sd.toFixed(2)}`);
    expect(html).toContain('raw fixes’ polyline');
    expect(html).toContain('whole track');
  });
  test('is empty without survey products (IMU sessions)', () => {
    expect(surveySectionHtml(undefined)).toBe('');
  });
});
