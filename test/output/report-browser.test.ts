/**
 * Acceptance: report.html in headless Chromium (Debian's, driven by playwright-core) with every
 * network request blocked and recorded: it loads with no request but its own file, no console
 * error, every plot drawn, the overview sorts; a screenshot is kept in test-artifacts/.
 */
import { describe, expect, test, beforeAll, afterAll } from 'vitest';
import { mkdirSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { pathToFileURL } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { writeReport, REPORT_FILE } from '../../src/output/report/index.js';
import { batch } from './fixtures.js';
import { CHROMIUM, requireChromium, SKIP_SYSTEM_TOOLS } from './system-tools.js';

const ARTIFACTS = resolve('test-artifacts');

describe.skipIf(SKIP_SYSTEM_TOOLS)('report.html in headless Chromium', () => {
  let ctx: BrowserContext;
  let page: Page;
  let profile: string;
  let b: ReturnType<typeof batch>;
  const requests: string[] = [];
  const blocked: string[] = [];
  const errors: string[] = [];
  let url: string;

  beforeAll(async () => {
    requireChromium();
    b = batch();
    const out = mkdtempSync(join(tmpdir(), 'hindcast-browser-out-'));
    await writeReport(out, b.summary, b.payloads);
    url = pathToFileURL(join(out, REPORT_FILE)).href;
    profile = mkdtempSync(join(tmpdir(), 'hindcast-chromium-'));
    ctx = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
      offline: true,
      viewport: { width: 1280, height: 900 },
    });
    // every request goes through here: the page's own file passes, anything else is refused and recorded
    await ctx.route('**/*', (route) => {
      const u = route.request().url();
      if (u === url) return route.continue();
      blocked.push(u);
      return route.abort('blockedbyclient');
    });
    page = ctx.pages()[0] ?? (await ctx.newPage());
    page.on('request', (r) => requests.push(r.url()));
    page.on('console', (m) => {
      if (m.type() === 'error' || m.type() === 'warning') errors.push(`${m.type()}: ${m.text()}`);
    });
    page.on('pageerror', (e) => errors.push(`pageerror: ${e.message}`));
    await page.goto(url, { waitUntil: 'load' });
  });

  afterAll(async () => {
    await ctx?.close();
    if (profile) rmSync(profile, { recursive: true, force: true });
  });

  test('loads offline: no request but the file itself, no console error', () => {
    expect(requests).toEqual([url]);
    expect(blocked).toEqual([]);
    expect(errors).toEqual([]);
  });

  test('every session section has all its plots drawn, with visible size', async () => {
    // (runs in the page; typed loosely since the tests compile without the DOM library)
    const counts = await page.$$eval('section.session', (secs: any[]) =>
      secs.map((s) => ({
        name: s.getAttribute('data-session'),
        failed: s.classList.contains('failed'),
        svgs: s.querySelectorAll('figure.plot svg').length,
        drawn: Array.from(s.querySelectorAll('figure.plot svg') as any[]).filter((svg) => {
          const r = svg.getBoundingClientRect();
          return r.width > 300 && r.height > 100 && svg.querySelectorAll('path').length > 5;
        }).length,
      })),
    );
    expect(counts).toHaveLength(b.summary.sessions.length);
    for (const c of counts) {
      const want = c.failed ? 0 : c.name!.endsWith('-imu') ? 10 : 5;
      expect(c, `${c.name}`).toEqual({ name: c.name, failed: c.failed, svgs: want, drawn: want });
    }
  });

  test('the cautions are visible', async () => {
    const n = await page.locator('.caution').count();
    expect(n).toBe(2);
    await expect(page.locator('.caution').first().innerText()).resolves.toMatch(/not for navigation or safety-of-life use/);
  });

  test('the overview sorts by a column, both ways', async () => {
    const col = await page.$$eval('#overview thead th', (ths) => ths.findIndex((th) => th.textContent?.trim() === 'flagged'));
    expect(col).toBeGreaterThan(0);
    const values = () => page.$$eval('#overview tbody tr', (rows, c) => rows.map((r) => r.children[c as number]!.getAttribute('data-sort') ?? ''), col);
    const btn = page.locator('#overview thead th').nth(col).locator('button');
    await btn.click();
    const asc = await values();
    const nums = asc.filter((v) => v !== '').map(Number);
    expect(nums).toEqual([...nums].sort((a, b) => a - b));
    expect(asc.at(-1)).toBe(''); // the failed session (no value) last
    await btn.click();
    const desc = (await values()).filter((v) => v !== '').map(Number);
    expect(desc).toEqual([...nums].sort((a, b) => b - a));
    expect(await page.locator('#overview thead th').nth(col).getAttribute('aria-sort')).toBe('descending');
  });

  test('a screenshot is kept as a test artefact', async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    const path = join(ARTIFACTS, 'report.png');
    await page.screenshot({ path, fullPage: true });
    expect(statSync(path).size).toBeGreaterThan(50_000);
    const first = join(ARTIFACTS, 'report-first-session.png');
    await page.locator('section.session').first().screenshot({ path: first });
    expect(statSync(first).size).toBeGreaterThan(20_000);
  });
});
