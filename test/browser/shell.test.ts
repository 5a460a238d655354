import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import {
  chromiumAvailable,
  launchBrowser,
  screenshotPath,
  startTestServer,
  type TestServer,
} from '../helpers/browser.ts';

const run = chromiumAvailable();

// Requires the Calculators page (src/web/routes/calculators.tsx) as the navigation target.

describe.skipIf(!run)('the app shell in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;

  beforeAll(async () => {
    server = await startTestServer({ args: ['--empty'], env: { VOIDCAST_EMPTY: '1' } });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('renders the overview, then follows a boosted navigation link without a full reload', async () => {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    await page.goto(server.url);
    expect(await page.locator('h1').textContent()).toBe('Line overview');
    expect(await page.evaluate('document.doctype && document.doctype.name')).toBe('html');
    // htmx is loaded from our own server, not a CDN.
    expect(await page.evaluate('typeof window.htmx')).toBe('object');
    await page.evaluate('window.__marker = 42');
    await page.getByRole('link', { name: 'Calculators' }).click();
    // (Conditions are waited for with locators and URLs: a string predicate would need eval, which
    // the Content-Security-Policy forbids.)
    await page.waitForURL(/\/calculators$/);
    expect(await page.locator('h1').textContent()).toContain('Calculators');
    // hx-boost swapped the body in place: the window (and our marker) survived.
    expect(await page.evaluate('window.__marker')).toBe(42);
    expect(await page.locator('.vc-nav a.active').textContent()).toBe('Calculators');
    await page.screenshot({ path: screenshotPath('shell-calculators'), fullPage: true });
    expect(errors).toEqual([]);
  });

  it('updates a calculator result as the input changes (htmx), without a page load', async () => {
    const page = await browser.context.newPage();
    await page.goto(`${server.url}calculators`);
    const cell = page.locator('#calc-class-limit-result td[data-output="Class limit"]').first();
    expect(await cell.textContent()).toBe('3,516.76');
    await page.fill('#class-limit-class', '4');
    await page
      .locator('#calc-class-limit-result td[data-output="Class limit"]', { hasText: /^351\.676$/ })
      .first()
      .waitFor();
    await page.fill('#class-limit-size', 'abc');
    await page.waitForSelector('#calc-class-limit-result [role="alert"]');
    expect(await page.locator('#calc-class-limit-result [role="alert"]').textContent()).toContain(
      'Particle size D must be a number',
    );
    await page.screenshot({ path: screenshotPath('calculators-error'), fullPage: false });
  });

  it('shows its own 404 page without a stack trace', async () => {
    const page = await browser.context.newPage();
    const res = await page.goto(`${server.url}no/such/page`);
    expect(res?.status()).toBe(404);
    expect(await page.locator('h1').textContent()).toBe('Nothing here');
    expect(await page.content()).not.toMatch(/at .*\.ts:\d+/);
  });
});
