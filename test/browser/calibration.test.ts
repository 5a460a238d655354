/**
 * The Calibration page in Chromium against a real server process on the demo line: it opens
 * without console errors, shows the fitted values, the backtest plots and a void map; a pair chosen
 * in the table swaps its map in place (htmx); proposing the fits stores a set and lands on the
 * Parameters page, where a person adopts it; the bonded pair's page then shows its inspection over
 * the prediction; the Tools & cleans page proposes the same whole-line set and lands on it. Screenshots: test-results/screenshots/calibration*.png.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemoOnce } from '../../src/cli/demo.ts';
import { openDataDir } from '../../src/store/db.ts';
import {
  chromiumAvailable,
  launchBrowser,
  screenshotPath,
  startTestServer,
  type TestServer,
} from '../helpers/browser.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('the Calibration page in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dataDir: string;

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'voidcast-calibration-browser-'));
    const db = openDataDir(dataDir);
    await loadDemoOnce(db);
    db.close();
    server = await startTestServer({ dataDir });
    browser = await launchBrowser();
  }, 180_000);
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
    if (dataDir) rmSync(dataDir, { recursive: true, force: true });
  });

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

  it('shows the fits, the backtest and a void map; a pair from the table swaps its map in place', async () => {
    const { page, errors } = await open('calibration');
    await expect(page.locator('h1').textContent()).resolves.toBe('Calibration from void inspections');
    expect(await page.locator('tr[data-quantity="energy"] td.num').first().textContent()).toMatch(
      /^0\.5\d*$/,
    );
    expect(await page.locator('svg[data-chart="backtest"]').count()).toBe(3);
    expect(await page.locator('#calibration-map-panel svg[data-chart="void-overlay"]').count()).toBe(1);
    expect(await page.locator('#calibration-map-panel .vc-void-explained').count()).toBeGreaterThan(0);
    await page.screenshot({ path: screenshotPath('calibration'), fullPage: true });
    // choose another pair: htmx replaces the map without a page load and the address follows
    await page.locator('tr[data-pair="TR2641-P07"] a').click();
    await page.waitForSelector('#calibration-map-panel[data-pair="TR2641-P07"]');
    expect(page.url()).toContain('/calibration?pair=TR2641-P07');
    expect(await page.locator('h1').count()).toBe(1);
    await page.locator('#calibration-map-panel').screenshot({ path: screenshotPath('calibration-map') });
    expect(errors).toEqual([]);
    await page.close();
  }, 60_000);

  it('proposes the fits, adopts them on the Parameters page, and the bonded pair shows observed over predicted', async () => {
    const { page, errors } = await open('calibration');
    await page.fill('#propose-name', 'Ada Lovelace');
    await page.click('form.vc-propose-form button[type="submit"]');
    await page.waitForURL(/\/parameters\/\d+$/);
    expect(await page.locator('body').textContent()).toContain(
      'fits of the line’s scans and of the void inspections of TR2641, TR2642',
    );
    await page.fill('#adopt-name', 'Grace Hopper');
    await page.click('form.vc-adopt-form button[type="submit"]');
    await page.waitForLoadState('networkidle');
    expect(await page.locator('body').textContent()).toMatch(/adopted/i);
    await page.goto(new URL('pairs/TR2642-P09', server.url).href);
    expect(await page.locator('#pair-void-overlay svg[data-chart="void-overlay"]').count()).toBe(1);
    // the pair is now assessed with the adopted set: it names the set and counts the unexplained voids
    expect(await page.locator('.vc-params-used').textContent()).toContain(
      'fits of the line’s scans and of the void inspections',
    );
    await page.locator('#pair-void-overlay').screenshot({ path: screenshotPath('calibration-pair') });
    expect(errors).toEqual([]);
    await page.close();
  }, 90_000);

  it('proposes every fit of the line from the Tools & cleans page and lands on the Parameters page showing it', async () => {
    const { page, errors } = await open('tools');
    await page.click('#vc-learned button[type="submit"]'); // "Fit from the scans" (htmx swaps the section)
    await page.waitForSelector('form.vc-propose-line');
    await page.fill('#propose-name', 'Ada Lovelace');
    await page.fill('#propose-label', 'line fits from the Tools page');
    await page.click('form.vc-propose-line button[type="submit"]');
    await page.waitForURL(/\/parameters\/\d+$/);
    const body = (await page.locator('body').textContent()) ?? '';
    expect(body).toContain('line fits from the Tools page');
    expect(await page.locator('.vc-set-state').getAttribute('data-state')).toBe('proposed');
    const kinds = await page
      .locator('.vc-param-entry')
      .evaluateAll((els) => els.map((e) => `${e.getAttribute('data-kind')} ${e.getAttribute('data-key')}`));
    expect(kinds).toEqual(
      expect.arrayContaining([
        'adders LACT-1/B',
        'removal CLN-RIN2',
        'voidSize GALE-7',
        'unexplainedVoids GALE-7',
      ]),
    );
    expect(body).toContain('Adders of LACT-1/A: too little data');
    expect(errors).toEqual([]);
    await page.close();
  }, 90_000);
});
