/**
 * Acceptance: report.html in headless Chromium (Debian's, driven by playwright-core) with every
 * network request blocked and recorded: it loads with no request but its own file, no console
 * error, every plot drawn, the overview sorts; every flagged mark on the track plot and in the
 * close-ups is found by its id in its session's table, the close-ups are drawn, the flagged table
 * opens review first and sorts, no legend label is cut; screenshots are kept in test-artifacts/.
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

  test('every flagged mark on the map and in the close-ups has its row, by id, in its session\'s table; every listed fix is marked', async () => {
    const found = await page.$$eval('section.session', (secs: any[]) =>
      secs.map((s) => {
        const marks = Array.from(s.querySelectorAll('figure.plot svg [aria-label^="flag "]') as any[]).map((m) => m.getAttribute('aria-label').slice(5));
        const close = Array.from(s.querySelectorAll('figure.closeup svg [aria-label^="flag "]') as any[]).map((m) => m.getAttribute('aria-label').slice(5));
        const rows = Array.from(s.querySelectorAll('table.flagged tbody tr') as any[]).map((r) => ({ id: r.getAttribute('data-flag'), dom: r.id, invalid: r.textContent.includes('invalid fix') }));
        const missing = [...marks, ...close].filter((id) => !s.querySelector(`[id="${s.id}-${id}"]`));
        return { name: s.getAttribute('data-session'), marks, close, rows, missing, titled: s.querySelectorAll('figure svg [aria-label^="flag "] title').length };
      }),
    );
    const withFlags = found.filter((f) => f.rows.length > 0);
    expect(withFlags.length).toBeGreaterThan(1);
    for (const f of withFlags) {
      expect(f.missing, f.name!).toEqual([]);
      // every listed fix with a position in the track is marked on the map
      for (const r of f.rows) if (!r.invalid) expect(f.marks, `${f.name} ${r.id}`).toContain(r.id);
      expect(f.close.length, f.name!).toBeGreaterThan(0);
      // the page's script gave every mark a tooltip
      expect(f.titled).toBe(f.marks.length + f.close.length);
    }
  });

  test('close-ups are drawn (visible size, a track and ellipses) and linked from the table', async () => {
    const shots = await page.$$eval('figure.closeup', (figs: any[]) =>
      figs.map((f) => {
        const svg = f.querySelector('svg');
        const r = svg.getBoundingClientRect();
        return { id: f.id, w: r.width, h: r.height, paths: svg.querySelectorAll('path').length, ids: f.getAttribute('data-ids').split(' ') };
      }),
    );
    expect(shots.length).toBeGreaterThan(2);
    for (const c of shots) {
      expect(c.w, c.id).toBeGreaterThan(200);
      expect(c.h, c.id).toBeGreaterThan(150);
      expect(c.paths, c.id).toBeGreaterThan(10);
    }
    const links = await page.$$eval('table.flagged a[href*="-closeup-"]', (as: any[]) => as.map((a) => a.getAttribute('href').slice(1)));
    expect(links.length).toBeGreaterThan(0);
    const ids = new Set(shots.map((c) => c.id));
    for (const l of links) expect(ids).toContain(l);
  });

  test('clicking a flagged mark on the track brings its table row into view', async () => {
    const mark = page.locator('section.session figure.plot svg [aria-label^="flag "]').first();
    const id = (await mark.getAttribute('aria-label'))!.slice(5);
    await mark.dispatchEvent('click');
    const row = page.locator(`table.flagged tr[data-flag="${id}"]`).first();
    await expect(row.evaluate((r: any) => r.classList.contains('picked'))).resolves.toBe(true);
    const box = await row.boundingBox();
    expect(box).not.toBeNull();
    expect(box!.y).toBeGreaterThanOrEqual(0);
    expect(box!.y).toBeLessThan(900);
  });

  test('the flagged table opens review first (margin ascending) and sorts by another column', async () => {
    const table = page.locator('section.session table.flagged').first();
    const col = await table.locator('thead th').evaluateAll((ths: any[]) => ths.findIndex((th) => th.textContent.trim() === 'margin'));
    const margins = () => table.locator('tbody tr').evaluateAll((rows: any[], c) => rows.map((r) => r.children[c].getAttribute('data-sort')), col);
    const m0 = (await margins()).filter((v) => v !== '').map(Number);
    expect(m0.length).toBeGreaterThan(1);
    expect(m0).toEqual([...m0].sort((a, b) => a - b));
    const off = await table.locator('thead th').evaluateAll((ths: any[]) => ths.findIndex((th) => th.textContent.trim() === 'offset (m)'));
    await table.locator('thead th').nth(off).locator('button').click();
    const offs = (await table.locator('tbody tr').evaluateAll((rows: any[], c) => rows.map((r) => r.children[c].getAttribute('data-sort')), off)).filter((v) => v !== '').map(Number);
    expect(offs).toEqual([...offs].sort((a, b) => a - b));
    // back to review first (the sort of another column reset the margin's heading)
    await table.locator('thead th').nth(col).locator('button').click();
    expect((await margins()).filter((v) => v !== '').map(Number)).toEqual(m0);
  });

  test('no legend label is cut off', async () => {
    const cut = await page.$$eval('svg text', (ts: any[]) => ts.map((t) => t.textContent).filter((x) => /…$/.test(x)));
    expect(cut).toEqual([]);
  });

  test('a screenshot is kept as a test artefact', async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    const path = join(ARTIFACTS, 'report.png');
    await page.screenshot({ path, fullPage: true });
    expect(statSync(path).size).toBeGreaterThan(50_000);
    const first = join(ARTIFACTS, 'report-first-session.png');
    await page.locator('section.session').first().screenshot({ path: first });
    expect(statSync(first).size).toBeGreaterThan(20_000);
    const close = join(ARTIFACTS, 'report-closeups.png');
    await page.locator('div.closeups').first().screenshot({ path: close });
    expect(statSync(close).size).toBeGreaterThan(10_000);
    const table = join(ARTIFACTS, 'report-flagged-table.png');
    await page.locator('table.flagged').first().screenshot({ path: table });
    expect(statSync(table).size).toBeGreaterThan(10_000);
  });
});
