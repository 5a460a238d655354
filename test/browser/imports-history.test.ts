/**
 * The import history on the demo line (72 imports) in Chromium: the pager and the kind filter swap
 * the history in place with htmx (the page is not reloaded), and every import can be reached.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromiumAvailable, launchBrowser, startTestServer, type TestServer } from '../helpers/browser.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('the import history in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;

  beforeAll(async () => {
    server = await startTestServer();
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('pages and filters in place, and reaches every import', async () => {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(new URL('imports', server.url).href);
    const rows = page.locator('#import-history tbody tr');
    expect(await rows.count()).toBe(50);
    // The demo line's manifest (docs/demo.md): 72 files, one import each.
    expect(await page.locator('#import-history [data-history-pages]').textContent()).toContain('of 72');
    const names = await page.locator('#import-history tbody td.vc-filename').allTextContents();
    await page.evaluate('window.__marker = 5');
    await page.locator('#import-history .vc-pager a[rel="next"]').click();
    await page.waitForSelector('#import-history [data-history-page="2"]');
    expect(await page.evaluate('window.__marker')).toBe(5);
    expect(await rows.count()).toBe(22);
    names.push(...(await page.locator('#import-history tbody td.vc-filename').allTextContents()));
    expect(new Set(names).size).toBe(72);
    await page.locator('#import-history select[name="historyKind"]').selectOption('scans');
    // (a locator, not a string predicate: the CSP refuses string evaluation)
    await page.locator('#import-history [data-history-pages]', { hasText: 'of kind scans' }).waitFor();
    expect(await page.evaluate('window.__marker')).toBe(5);
    expect(await rows.count()).toBe(11);
    expect(errors).toEqual([]);
    await page.close();
  });
});
