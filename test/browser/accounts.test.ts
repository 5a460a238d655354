/**
 * Accounts in Chromium against a real server started with accounts on (what `npm start` runs):
 * the first administrator signs in through the form, sees the account links and the Accounts page,
 * the pages work under the Content-Security-Policy, and signing out returns to the sign-in page.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromiumAvailable, launchBrowser, startTestServer, type TestServer } from '../helpers/browser.ts';

const run = chromiumAvailable();
const PASSWORD = 'first start secret 2026';

describe.skipIf(!run)('accounts in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;

  beforeAll(async () => {
    server = await startTestServer({
      accounts: true,
      args: ['--empty'],
      env: { VOIDCAST_EMPTY: '1', VOIDCAST_ADMIN_PASSWORD: PASSWORD },
    });
    browser = await launchBrowser();
  });
  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('the first administrator signs in, uses the pages, and signs out', async () => {
    expect(server.output()).toContain(
      'First start: sign in as "admin" with the password in VOIDCAST_ADMIN_PASSWORD.',
    );
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    await page.goto(new URL('imports', server.url).href);
    await page.waitForURL(/\/login\?next=%2Fimports$/);
    await page.fill('#login-username', 'admin');
    await page.fill('#login-password', PASSWORD);
    await page.click('form[action="/login"] button[type="submit"]');
    await page.waitForURL(/\/imports$/);
    expect(await page.locator('h1').first().textContent()).toContain('Import');
    expect(await page.locator('.vc-account-nav').textContent()).toContain('Administrator (admin)');
    expect(await page.locator('.vc-open-banner').count()).toBe(0);
    await page.click('.vc-account-nav a[href="/admin/users"]');
    await page.locator('h1', { hasText: /^Accounts$/ }).waitFor();
    expect(await page.locator('tr[data-user="admin"]').count()).toBe(1);
    await page.click('.vc-account-nav a[href="/audit"]');
    await page.locator('h1', { hasText: /^Audit trail$/ }).waitFor();
    expect(await page.locator('tr[data-action="user.create"]').count()).toBe(1);
    await page.click('.vc-account-nav button[type="submit"]');
    await page.waitForURL(/\/login$/);
    await page.goto(new URL('lots', server.url).href);
    await page.waitForURL(/\/login\?next=%2Flots$/);
    expect(errors).toEqual([]);
  });
});
