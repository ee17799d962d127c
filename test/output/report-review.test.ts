/**
 * The parts of a session's report section the reviewer acts on: the flagged table (ids, the
 * deciding test and its figures, review first by margin), the close-ups (one per burst, every
 * fix of a burst in one, ids shared with the table), times in the log's zone as well as UTC, and
 * the facts in words (no projection string, no key=value parameter line).
 */
import { describe, expect, test } from 'vitest';
import { reportPayload, sessionPageHtml } from '../../src/output/report/index.js';
import { okEntry } from '../../src/output/summary.js';
import { frameInWords } from '../../src/output/report/payload.js';
import { localTime } from '../../src/output/report/html-text.js';
import { CLOSEUPS_MAX, CLOSEUP_JOIN_EPOCHS } from '../../src/output/report/closeup-data.js';
import { reviewOrder } from '../../src/output/report/session-section.js';
import { session } from './fixtures.js';

const r = session('vehicle', 7, { durationSec: 300 }).result;

async function sectionOf(res: typeof r): Promise<{ html: string; p: ReturnType<typeof reportPayload> }> {
  const p = reportPayload(res);
  const h = await sessionPageHtml(okEntry(res, 'x.csv', [], 0), p, { tool: 'hindcast', version: 't', profile: 'default' });
  return { html: h.slice(h.indexOf('<section class="session"')), p };
}

describe('flagged fixes in the report', () => {
  test('rows in review-first order: finite margins ascending, then the fixes without a test', async () => {
    const { html, p } = await sectionOf(r);
    const table = html.split('<table class="flagged')[1]!.split('</table>')[0]!;
    const ids = [...table.matchAll(/<tr id="session-1-([^"]+)" data-flag="([^"]+)"/g)].map((m) => m[2]);
    expect(ids).toEqual(reviewOrder(p.flagged).map((f) => f.id));
    expect(new Set(ids)).toEqual(new Set(r.outliers.map((o) => o.id)));
    const margins = reviewOrder(p.flagged).map((f) => f.margin);
    const finite = margins.filter(Number.isFinite);
    expect(finite).toEqual([...finite].sort((a, b) => a - b));
    expect(margins.slice(finite.length).every((m) => !Number.isFinite(m))).toBe(true);
  });

  test('every fix of the track is in one close-up, bursts together, no more than the cap', async () => {
    const { html, p } = await sectionOf(r);
    expect(p.closeups.length).toBeGreaterThan(0);
    expect(p.closeups.length).toBeLessThanOrEqual(CLOSEUPS_MAX);
    const inTrack = p.flagged.filter((f) => f.epoch >= 0 && f.test !== 'invalid');
    for (const f of inTrack) {
      expect(f.closeup, f.id).toBeGreaterThanOrEqual(0);
      expect(p.closeups[f.closeup]!.ids).toContain(f.id);
      expect(html).toContain(`href="#session-1-closeup-${f.closeup + 1}"`);
    }
    // flagged epochs within the join distance share a close-up
    const byEpoch = [...inTrack].sort((a, b) => a.epoch - b.epoch);
    for (let i = 1; i < byEpoch.length; i++)
      if (byEpoch[i]!.epoch - byEpoch[i - 1]!.epoch <= CLOSEUP_JOIN_EPOCHS) expect(byEpoch[i]!.closeup).toBe(byEpoch[i - 1]!.closeup);
    // each close-up names its fixes' ids on its marks
    for (const [i, c] of p.closeups.entries()) {
      const fig = html.split(`id="session-1-closeup-${i + 1}"`)[1]!.split('</figure>')[0]!;
      for (const id of c.ids) expect(fig).toContain(`aria-label="flag ${id}"`);
    }
  });

  test('the deciding test, its statistic, threshold and margin in the row; no statistic below its threshold', async () => {
    const { html, p } = await sectionOf(r);
    for (const f of p.flagged) {
      const row = html.split(`<tr id="session-1-${f.id}"`)[1]!.split('</tr>')[0]!;
      if (f.test === 'invalid' || f.test === 'user') continue;
      expect(row).toContain(`>${f.statistic.toFixed(2)}</td>`);
      expect(row).toContain(`>${f.threshold.toFixed(2)}</td>`);
      expect(row).toContain(`>${(100 * f.margin).toFixed(1)}%</td>`);
      expect(f.statistic).toBeGreaterThan(f.threshold);
    }
  });
});

describe('times and facts', () => {
  test('without a zone: UTC only, and the page says so', async () => {
    const { html } = await sectionOf(r);
    expect(html).not.toMatch(/<th[^>]*><button type="button">time \(Europe/);
    expect(html).toContain('shown in UTC');
  });

  test('with input.timeZone: a column of local times with their offset (summer time +02:00 in Berlin)', async () => {
    const res = { ...r, info: { ...r.info, timeZone: 'Europe/Berlin' } };
    const { html, p } = await sectionOf(res);
    expect(html).toContain('<button type="button">time (Europe/Berlin)</button>');
    const f = p.flagged[0]!;
    // 2026-05-13 is in summer time: UTC + 2 h (from memory: EU summer time runs from the last Sunday of March)
    expect(localTime(f.tSec, 'Europe/Berlin')).toMatch(/\+02:00$/);
    expect(html).toContain(localTime(f.tSec, 'Europe/Berlin'));
  });

  test.each([
    { t: Date.UTC(2026, 0, 15, 12, 0, 0) / 1000, zone: 'Europe/Berlin', text: '2026-01-15 13:00:00.000 +01:00' },
    { t: Date.UTC(2026, 6, 15, 12, 0, 0) / 1000, zone: 'America/New_York', text: '2026-07-15 08:00:00.000 -04:00' },
    { t: NaN, zone: 'Europe/Berlin', text: '–' },
    { t: 0, zone: 'Nowhere/Atlantis', text: '–' },
  ])('localTime($t, $zone) = $text', ({ t, zone, text }) => {
    expect(localTime(t, zone)).toBe(text);
  });

  test('facts in words: no projection string, no key=value parameter line', async () => {
    const { html } = await sectionOf(r);
    const figs = html.split('<dl class="figures">')[1]!.split('</dl>')[0]!;
    expect(figs).not.toMatch(/\+proj|\+lat_0|\w=\w/);
    expect(figs).toContain('transverse Mercator on WGS84 centred at');
    expect(figs).toContain('constant velocity');
  });

  test.each([
    { def: '+proj=tmerc +lat_0=47.5 +lon_0=-8.25 +k=1 +x_0=0 +y_0=0 +ellps=WGS84 +units=m +no_defs', words: 'transverse Mercator on WGS84 centred at 47.50000° N, 8.25000° W: metres east and north of that point' },
    { def: '+proj=utm +zone=32', words: null },
  ])('frameInWords($def)', ({ def, words }) => {
    expect(frameInWords(def)).toBe(words);
  });
});
