/**
 * The product's pages in Chromium against a real server process: each page opens without console
 * errors, shows its key content (calls, ISO status, SVG charts with marks), its htmx swaps work,
 * and a screenshot of it is saved (test-results/screenshots/<name>.png).
 *
 * The server's data directory is filled beforehand through the real import paths
 * (test/helpers/pages-data.ts), then the server starts with --empty so nothing else is loaded.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDataDir } from '../../src/store/db.ts';
import {
  chromiumAvailable,
  launchBrowser,
  screenshotPath,
  startTestServer,
  type TestServer,
} from '../helpers/browser.ts';
import { importPageLine } from '../helpers/pages-data.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('the pages in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dataDir: string;

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'voidcast-pages-browser-'));
    const db = openDataDir(dataDir);
    const files = await importPageLine(db);
    files.cleanup();
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
    await page.waitForFunction(
      "document.querySelector('#trend-panel svg title')?.textContent.startsWith('Bonder mini-environment')",
    );
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
});
