/**
 * The product's pages in Chromium against a real server process: each page opens without console
 * errors, shows its key content (calls, ISO status, SVG charts with marks), its htmx swaps work,
 * and a screenshot of it is saved (test-results/screenshots/<name>.png).
 *
 * The server's data directory is filled beforehand through the real import paths
 * (test/helpers/pages-data.ts: two lots, four pairs whose calls are bond, re-clean, hold and a
 * bonded pair), then the server starts with --empty so nothing else is loaded.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDataDir } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import {
  chromiumAvailable,
  launchBrowser,
  screenshotPath,
  startTestServer,
  type TestServer,
} from '../helpers/browser.ts';
import { AS_OF_MS, importPageLine, lineFiles } from '../helpers/pages-data.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('the pages in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dataDir: string;

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'voidcast-pages-browser-'));
    const db = openDataDir(dataDir);
    const files = await importPageLine(db, lineFiles());
    files.cleanup();
    // The test line is a recorded day: the pages assess it at its own "now".
    setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
    db.close();
    server = await startTestServer({ args: ['--empty'], env: { VOIDCAST_EMPTY: '1' }, dataDir });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
    if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  });

  /** A page that records console errors and uncaught exceptions. */
  async function open(path: string): Promise<{ page: Page; errors: string[] }> {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    const res = await page.goto(new URL(path, server.url).href);
    expect(res?.status()).toBe(200);
    return { page, errors };
  }

  it('Areas: ISO status by word and glyph, a trend with marks, and the trend swaps in place', async () => {
    const { page, errors } = await open('areas');
    expect(await page.locator('h1').textContent()).toBe('Areas');
    expect(await page.locator('tr[data-location="bay-3"] .vc-fail').textContent()).toBe('✗ fail');
    expect(await page.locator('tr[data-location="me-1"] .vc-pass').textContent()).toBe('✓ pass');
    // The area name from the file is shown as text, not run as markup.
    expect(await page.locator('.vc-area h2').first().textContent()).toContain('<script>alert(1)</script>');
    const chart = page.locator('#trend-panel svg[data-chart="trend"]');
    expect(await chart.count()).toBe(1);
    expect(await chart.locator('.vc-point').count()).toBeGreaterThan(50);
    expect(await chart.locator('.vc-level').count()).toBe(3);
    await page.evaluate('window.__marker = 7');
    await page.locator('#trend-panel select[name="location"]').selectOption('me-1');
    await page
      .locator('#trend-panel svg title', { hasText: /^Bonder mini-environment/ })
      .first()
      .waitFor({ state: 'attached' });
    // htmx swapped the panel: same window, new chart.
    expect(await page.evaluate('window.__marker')).toBe(7);
    expect(await page.locator('#trend-panel .vc-point').count()).toBeGreaterThan(50);
    expect(await page.locator('.vc-excursions tbody tr').count()).toBe(1);
    await page.screenshot({ path: screenshotPath('areas'), fullPage: true });
    expect(errors).toEqual([]);
  });

  it('Tools & cleans: adders table and one removal-curve chart per clean with marks', async () => {
    const { page, errors } = await open('tools');
    expect(await page.locator('h1').textContent()).toBe('Tools & cleans');
    expect(await page.locator('table.vc-adders tbody tr').count()).toBe(5);
    expect(await page.locator('svg[data-chart="removal-curve"]').count()).toBe(3);
    expect(await page.locator('[data-clean="RINSE"] .vc-band').count()).toBe(4);
    expect(await page.locator('[data-clean="PBC-MEG"] .vc-curve').count()).toBe(1);
    await page.screenshot({ path: screenshotPath('tools'), fullPage: true });
    expect(errors).toEqual([]);
  });

  it('Tools & cleans: the fit from the scans swaps in on request, without leaving the page', async () => {
    const { page, errors } = await open('tools');
    expect(await page.locator('#vc-learned button[type="submit"]').textContent()).toBe('Fit from the scans');
    await page.evaluate('window.__marker = 11');
    await page.locator('#vc-learned button[type="submit"]').click();
    await page.waitForSelector('#vc-learned h3');
    // htmx swapped the section: same window, the learned tables and notes in place of the fit form,
    // and the form that proposes every fit of the line as one set.
    expect(await page.evaluate('window.__marker')).toBe(11);
    expect(await page.locator('#vc-learned form[method="get"]').count()).toBe(0);
    expect(await page.locator('#vc-learned form.vc-propose-line[method="post"]').count()).toBe(1);
    expect(await page.locator('#vc-learned h3').allTextContents()).toEqual([
      'Adders per wafer pass',
      'Removal by clean',
      'Propose every fit of the line as a parameter set',
    ]);
    expect(errors).toEqual([]);
  });

  it('Lots: the queue with each lot’s call told by word, and the bonded lots', async () => {
    const { page, errors } = await open('lots');
    expect(await page.locator('h1').textContent()).toBe('Lots');
    const waiting = page.locator('table[data-table="waiting"] tbody tr');
    expect(await waiting.count()).toBe(1);
    expect(await waiting.first().locator('[data-call]').first().textContent()).toBe('hold');
    expect(await waiting.first().textContent()).toContain('1 bond');
    expect(await waiting.first().textContent()).toContain('1 re-clean');
    expect(await page.locator('table[data-table="bonded"] tbody tr').count()).toBe(1);
    await page.screenshot({ path: screenshotPath('lots'), fullPage: true });
    expect(errors).toEqual([]);
  });

  it('Lot: each pair’s call and figures, a lot Pareto whose grouping swaps in place', async () => {
    const { page, errors } = await open('lots/L-01');
    const rows = page.locator('table.vc-pair-table tbody tr');
    expect(await rows.count()).toBe(3);
    expect(await rows.locator('[data-call]').allTextContents()).toEqual(['bond', 're-clean', 'hold']);
    expect(await page.locator('#pareto-panel svg[data-chart="pareto"] .vc-bar').count()).toBeGreaterThan(0);
    await page.evaluate('window.__marker = 3');
    await page.getByRole('link', { name: 'by size band' }).click();
    await page.waitForSelector('#pareto-panel[data-by="size"]');
    expect(await page.evaluate('window.__marker')).toBe(3);
    expect(await page.locator('#pareto-panel .vc-bar').count()).toBeGreaterThan(0);
    await page.screenshot({ path: screenshotPath('lot'), fullPage: true });
    expect(errors).toEqual([]);
  });

  it('Pair: maps (top mirrored and labelled), void map, spectrum, Pareto, re-clean with caution, sign-off', async () => {
    const { page, errors } = await open('pairs/P-02');
    expect(await page.locator('.vc-call-box [data-call="re-clean"]').count()).toBe(1);
    expect(await page.locator('.vc-call-box .vc-reclean-caution').textContent()).toContain(
      'authorised recipes',
    );
    const bottom = page.locator('svg#map-bottom');
    const top = page.locator('svg#map-top');
    expect(await bottom.locator('.vc-particle').count()).toBe(25);
    expect(await top.locator('.vc-particle').count()).toBe(30);
    expect(await top.locator('.vc-mirror-note').textContent()).toContain(
      'Seen from the bond interface: mirrored',
    );
    expect(await page.locator('svg#void-map .vc-void').count()).toBeGreaterThan(0);
    expect(Number(await page.locator('svg#void-map .vc-die-grid').getAttribute('data-dies'))).toBeGreaterThan(
      100,
    );
    expect(await page.locator('svg#spectrum-chart .vc-layer').count()).toBeGreaterThan(1);
    expect(await page.locator('.vc-before-after tbody tr').count()).toBe(5);
    expect(await page.locator('.vc-reclean .vc-reclean-caution').count()).toBe(1);
    await page.screenshot({ path: screenshotPath('pair'), fullPage: true });

    // The spectrum swaps to the cumulative view in place.
    await page.getByRole('link', { name: 'Show cumulative N(≥ d)' }).click();
    await page.waitForSelector('#spectrum[data-mode="cumulative"]');

    // Sign-off: refused without a comment when overriding the call, then stored, in place.
    await page.fill('#signoff-name', 'A. Engineer');
    await page.selectOption('#signoff-call', 'bond');
    await page.click('#signoff button[type="submit"]');
    await page.waitForSelector('#signoff .vc-error');
    expect(await page.locator('#signoff .vc-error').textContent()).toContain('needs a comment');
    await page.fill('#signoff-name', 'A. Engineer');
    await page.selectOption('#signoff-call', 're-clean');
    await page.click('#signoff button[type="submit"]');
    await page.waitForSelector('#signoff .vc-success');
    expect(await page.locator('#signoff .vc-signoff-records tbody tr').count()).toBe(1);
    expect(await page.locator('#signoff .vc-signoff-records').textContent()).toContain(
      'A. Engineer (bonding process engineer)',
    );
    expect(errors).toEqual([]);
  });
});

describe.skipIf(!run)('the demo line in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;

  beforeAll(async () => {
    // A fresh data directory: the first start loads the demo line (sample-counts/).
    server = await startTestServer();
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('opens the queue, a lot, a pair, the areas and the tools without console errors, each with its charts', async () => {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    const go = async (path: string) => {
      const res = await page.goto(new URL(path, server.url).href);
      expect(res?.status()).toBe(200);
    };
    await go('lots');
    const lots = page.locator('table[data-table="waiting"] tbody tr');
    expect(await lots.count()).toBeGreaterThan(0);
    const calls = await page.locator('table[data-table="waiting"] [data-call]').allTextContents();
    expect(calls.every((c) => ['bond', 're-clean', 'hold'].includes(c))).toBe(true);
    const lotHref = await lots.first().locator('a').first().getAttribute('href');
    await go(lotHref!.slice(1));
    expect(await page.locator('table.vc-pair-table tbody tr').count()).toBeGreaterThan(0);
    expect(await page.locator('svg[data-chart="pareto"] .vc-bar').count()).toBeGreaterThan(0);
    // one cumulative point per bar, and a table row for each bar's items beside the chart
    expect(await page.locator('svg[data-chart="pareto"] .vc-cumulative-point').count()).toBe(
      await page.locator('svg[data-chart="pareto"] .vc-bar').count(),
    );
    expect(await page.locator('.vc-pareto-table tbody tr').count()).toBeGreaterThan(0);
    const pairHref = await page.locator('table.vc-pair-table tbody tr a').first().getAttribute('href');
    await go(pairHref!.slice(1));
    expect(await page.locator('svg[data-chart="wafer-map"]').count()).toBe(2);
    expect(await page.locator('svg#map-top .vc-mirror-note').count()).toBe(1);
    expect(
      Number(await page.locator('svg[data-chart="void-map"] .vc-die-grid').getAttribute('data-dies')),
    ).toBeGreaterThan(0);
    // the dies carry their kill probability from all sources: more than one colour, with its scale
    const dieFills = await page
      .locator(
        'svg[data-chart="void-map"] .vc-die-fill, svg[data-chart="void-map"] .vc-die > rect:first-child',
      )
      .evaluateAll(
        (els) => new Set(els.map((e) => e.getAttribute('data-colour') ?? e.getAttribute('fill'))).size,
      );
    expect(dieFills).toBeGreaterThan(1);
    expect(
      await page.locator('svg[data-chart="void-map"] .vc-colour-scale .vc-tick').count(),
    ).toBeGreaterThan(2);
    expect(await page.locator('svg[data-chart="stacked-spectrum"] .vc-layer').count()).toBeGreaterThan(0);
    await go('areas');
    expect(await page.locator('.vc-iso-table tbody tr').count()).toBeGreaterThan(5);
    expect(await page.locator('svg[data-chart="trend"] .vc-trend-line').count()).toBeGreaterThan(0);
    await go('tools');
    expect(await page.locator('svg[data-chart="removal-curve"]').count()).toBeGreaterThan(0);
    expect(errors).toEqual([]);
  });
});
