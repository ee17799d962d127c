/**
 * Acceptance: the report in headless Chromium (Debian's, driven by playwright-core) with every
 * network request blocked and recorded. The overview report.html and every session's page
 * report/<stem>.html load with no request but their own file and no console error; the overview
 * sorts, has one thumbnail per ok session and links that resolve to the session pages on disk; on
 * the pages every plot is drawn, every flagged mark on the track plot and in the close-ups is found
 * by its id in the session's table, the close-ups are drawn, the flagged table opens review first
 * and sorts, no legend label is cut; screenshots are kept in test-artifacts/.
 */
import { describe, expect, test, beforeAll, afterAll } from 'vitest';
import { existsSync, mkdirSync, mkdtempSync, rmSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { chromium, type BrowserContext, type Page } from 'playwright-core';
import { writeReport, writeSessionPage, REPORT_FILE } from '../../src/output/report/index.js';
import { batch } from './fixtures.js';
import { CHROMIUM, requireChromium, SKIP_SYSTEM_TOOLS } from './system-tools.js';

const ARTIFACTS = resolve('test-artifacts');

describe.skipIf(SKIP_SYSTEM_TOOLS)('the report in headless Chromium', () => {
  let ctx: BrowserContext;
  let page: Page;
  let profile: string;
  let out: string;
  let b: ReturnType<typeof batch>;
  let overviewUrl: string;
  /** The ok sessions' pages, by session name. */
  const pageUrls = new Map<string, string>();
  /** Per page loaded: the requests made, those blocked, and console errors and warnings. */
  const loads = new Map<string, { requests: string[]; blocked: string[]; errors: string[] }>();
  let current: { requests: string[]; blocked: string[]; errors: string[] };
  let thumbnails: number;

  async function visit(url: string): Promise<void> {
    current = { requests: [], blocked: [], errors: [] };
    loads.set(url, current);
    await page.goto(url, { waitUntil: 'load' });
  }

  beforeAll(async () => {
    requireChromium();
    b = batch();
    out = mkdtempSync(join(tmpdir(), 'hindcast-browser-out-'));
    await writeReport(out, b.summary, b.overviews);
    for (const s of b.summary.sessions) {
      if (s.status !== 'ok') continue;
      const rel = await writeSessionPage(out, s, b.payloads.get(s.name)!, { tool: 'hindcast', version: '0.0.0-test', profile: 'default' });
      pageUrls.set(s.name, pathToFileURL(join(out, rel)).href);
    }
    overviewUrl = pathToFileURL(join(out, REPORT_FILE)).href;
    profile = mkdtempSync(join(tmpdir(), 'hindcast-chromium-'));
    ctx = await chromium.launchPersistentContext(profile, {
      executablePath: CHROMIUM,
      headless: true,
      args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
      offline: true,
      viewport: { width: 1280, height: 900 },
    });
    // every request goes through here: the report's own files pass, anything else is refused and recorded
    const own = pathToFileURL(out).href + '/';
    await ctx.route('**/*', (route) => {
      const u = route.request().url();
      if (u.startsWith(own)) return route.continue();
      current.blocked.push(u);
      return route.abort('blockedbyclient');
    });
    page = ctx.pages()[0] ?? (await ctx.newPage());
    page.on('request', (r) => current.requests.push(r.url()));
    page.on('console', (m) => {
      if (m.type() === 'error' || m.type() === 'warning') current.errors.push(`${m.type()}: ${m.text()}`);
    });
    page.on('pageerror', (e) => current.errors.push(`pageerror: ${e.message}`));
    // the session pages first, each checked as it is loaded; the overview stays open for its tests
    for (const u of pageUrls.values()) {
      await visit(u);
      await checkSessionPage(page);
    }
    await visit(overviewUrl);
    thumbnails = await page.locator('#overview svg.thumbnail').count();
  }, 120_000);

  afterAll(async () => {
    await ctx?.close();
    if (profile) rmSync(profile, { recursive: true, force: true });
    if (out) rmSync(out, { recursive: true, force: true });
  });

  /** What the session pages' tests read, gathered while each page is open. */
  const seen: Array<Awaited<ReturnType<typeof sessionFacts>>> = [];
  async function checkSessionPage(p: Page): Promise<void> {
    seen.push(await sessionFacts(p));
  }

  test('the overview and every session page load offline: no request but the file itself, no console error', () => {
    expect(loads.size).toBe(pageUrls.size + 1);
    for (const [u, l] of loads) {
      expect(l.requests, u).toEqual([u]);
      expect(l.blocked, u).toEqual([]);
      expect(l.errors, u).toEqual([]);
    }
  });

  test('the overview links every ok session to its page, and each link resolves to a file on disk', async () => {
    const links = await page.$$eval('#overview tbody a[href]', (as: any[]) => as.map((a) => ({ href: a.href as string, text: a.textContent as string })));
    const ok = b.summary.sessions.filter((s) => s.status === 'ok').map((s) => s.name);
    expect(links.map((l) => l.text).sort()).toEqual([...ok].sort());
    for (const l of links) {
      expect(l.href).toBe(pageUrls.get(l.text));
      expect(existsSync(fileURLToPath(l.href)), l.href).toBe(true);
    }
  });

  test('the overview has one drawn track thumbnail per ok session', async () => {
    const ok = b.summary.sessions.filter((s) => s.status === 'ok');
    expect(thumbnails).toBe(ok.length);
    const boxes = await page.$$eval('#overview svg.thumbnail', (svgs: any[]) =>
      svgs.map((svg) => {
        const r = svg.getBoundingClientRect();
        return { w: r.width, h: r.height, lines: svg.querySelectorAll('polyline').length, label: svg.getAttribute('aria-label') };
      }),
    );
    for (const t of boxes) {
      expect(t.w, t.label).toBeGreaterThan(40);
      expect(t.h, t.label).toBeGreaterThan(20);
      expect(t.lines, t.label).toBeGreaterThan(0);
    }
  });

  test('every session page links back to the overview', () => {
    for (const f of seen) expect(f.back, f.counts.name!).toBe(overviewUrl);
  });

  test('every session page has its plots drawn, with visible size', () => {
    const ok = b.summary.sessions.filter((s) => s.status === 'ok');
    expect(seen.map((f) => f.counts.name)).toEqual(ok.map((s) => s.name));
    for (const { counts: c } of seen) {
      const want = c.name!.endsWith('-imu') ? 10 : 5;
      expect(c, `${c.name}`).toEqual({ name: c.name, failed: false, svgs: want, drawn: want });
    }
  });

  test('the cautions are visible on the overview and on every session page', async () => {
    const n = await page.locator('.caution').count();
    expect(n).toBe(2);
    await expect(page.locator('.caution').first().innerText()).resolves.toMatch(/not for navigation or safety-of-life use/);
    for (const f of seen) {
      expect(f.cautions, f.counts.name!).toBe(2);
      expect(f.cautionText).toMatch(/not for navigation or safety-of-life use/);
    }
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

  test('every flagged mark on the map and in the close-ups has its row, by id, in its session\'s table; every listed fix is marked', () => {
    const withFlags = seen.flatMap((f) => f.found).filter((f) => f.rows.length > 0);
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

  test('close-ups are drawn (visible size, a track and ellipses) and linked from the table', () => {
    expect(seen.reduce((a, f) => a + f.shots.length, 0)).toBeGreaterThan(2);
    let linked = 0;
    for (const f of seen) {
      for (const c of f.shots) {
        expect(c.w, c.id).toBeGreaterThan(200);
        expect(c.h, c.id).toBeGreaterThan(150);
        expect(c.paths, c.id).toBeGreaterThan(10);
      }
      const ids = new Set(f.shots.map((c) => c.id));
      for (const l of f.closeupLinks) expect(ids).toContain(l);
      linked += f.closeupLinks.length;
    }
    expect(linked).toBeGreaterThan(0);
  });

  test('no legend label is cut off', () => {
    for (const f of seen) expect(f.cut, f.counts.name!).toEqual([]);
  });

  /** The remaining tests act on one session page with flagged fixes (clicks, sorting, screenshots). */
  async function openFlaggedPage(): Promise<void> {
    const name = seen.find((f) => f.found.some((x) => x.rows.length > 1))!.counts.name!;
    await visit(pageUrls.get(name)!);
  }

  test('clicking a flagged mark on the track brings its table row into view', async () => {
    await openFlaggedPage();
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
    await openFlaggedPage();
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

  test('screenshots are kept as test artefacts', async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    await visit(overviewUrl);
    const path = join(ARTIFACTS, 'report.png');
    await page.screenshot({ path, fullPage: true });
    expect(statSync(path).size).toBeGreaterThan(20_000);
    await openFlaggedPage();
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

/** What a session page shows, read in the page (typed loosely since the tests compile without the DOM library). */
async function sessionFacts(page: Page) {
  const counts = await page.$eval('section.session', (s: any) => ({
    name: s.getAttribute('data-session') as string | null,
    failed: s.classList.contains('failed') as boolean,
    svgs: s.querySelectorAll('figure.plot svg').length as number,
    drawn: Array.from(s.querySelectorAll('figure.plot svg') as any[]).filter((svg) => {
      const r = svg.getBoundingClientRect();
      return r.width > 300 && r.height > 100 && svg.querySelectorAll('path').length > 5;
    }).length,
  }));
  const found = await page.$$eval('section.session', (secs: any[]) =>
    secs.map((s) => {
      const marks = Array.from(s.querySelectorAll('figure.plot svg [aria-label^="flag "]') as any[]).map((m) => m.getAttribute('aria-label').slice(5) as string);
      const close = Array.from(s.querySelectorAll('figure.closeup svg [aria-label^="flag "]') as any[]).map((m) => m.getAttribute('aria-label').slice(5) as string);
      const rows = Array.from(s.querySelectorAll('table.flagged tbody tr') as any[]).map((r) => ({ id: r.getAttribute('data-flag') as string, dom: r.id as string, invalid: r.textContent.includes('invalid fix') as boolean }));
      const missing = [...marks, ...close].filter((id) => !s.querySelector(`[id="${s.id}-${id}"]`));
      return { name: s.getAttribute('data-session') as string | null, marks, close, rows, missing, titled: s.querySelectorAll('figure svg [aria-label^="flag "] title').length as number };
    }),
  );
  const shots = await page.$$eval('figure.closeup', (figs: any[]) =>
    figs.map((f) => {
      const svg = f.querySelector('svg');
      const r = svg.getBoundingClientRect();
      return { id: f.id as string, w: r.width as number, h: r.height as number, paths: svg.querySelectorAll('path').length as number };
    }),
  );
  const closeupLinks = await page.$$eval('table.flagged a[href*="-closeup-"]', (as: any[]) => as.map((a) => a.getAttribute('href').slice(1) as string));
  const cut = await page.$$eval('svg text', (ts: any[]) => ts.map((t) => t.textContent as string).filter((x) => /…$/.test(x)));
  const cautions = await page.locator('.caution').count();
  const cautionText = await page.locator('.caution').first().innerText();
  const back = await page.locator('header a').first().evaluate((a: any) => a.href as string);
  return { counts, found, shots, closeupLinks, cut, cautions, cautionText, back };
}
