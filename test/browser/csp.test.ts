/**
 * The Content-Security-Policy in Chromium (issue 14): every page opens and its htmx behaviour works
 * with no policy violation, while a script injected into a page — an inline <script> or an inline
 * event handler, the two ways a stored text could run if it ever escaped its escaping — is blocked.
 *
 * Source of the expected behaviour: W3C Content Security Policy Level 3 (§4.2.3 "Should element's
 * inline type behavior be blocked by Content Security Policy?": with script-src 'self' and no
 * 'unsafe-inline', inline script elements and event-handler attributes do not run).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDataDir } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { chromiumAvailable, launchBrowser, startTestServer, type TestServer } from '../helpers/browser.ts';
import { AS_OF_MS, importPageLine, lineFiles } from '../helpers/pages-data.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('the Content-Security-Policy in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dataDir: string;

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'voidcast-csp-browser-'));
    const db = openDataDir(dataDir);
    const files = await importPageLine(db, lineFiles());
    files.cleanup();
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

  /** A page that records console errors (Chromium reports each CSP violation there) and exceptions. */
  async function open(path: string): Promise<{ page: Page; errors: string[] }> {
    const page = await browser.context.newPage();
    const errors: string[] = [];
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    const res = await page.goto(new URL(path, server.url).href);
    expect(res?.status()).toBe(200);
    expect(res?.headers()['content-security-policy']).toContain("script-src 'self'");
    return { page, errors };
  }

  it('every page opens with htmx and the page script loaded and no policy violation', async () => {
    for (const path of [
      '',
      'lots',
      'lots/L-01',
      'pairs/P-02',
      'areas',
      'tools',
      'parameters',
      'calculators',
      'calculators/class-limit',
      'calibration',
      'tools/learned',
      'imports',
      'imports/history',
      'audit',
    ]) {
      const { page, errors } = await open(path);
      expect(await page.evaluate('typeof window.htmx'), path).toBe('object');
      expect(errors, path).toEqual([]);
      await page.close();
    }
  });

  it('blocks an injected inline script and an inline event handler', async () => {
    const { page, errors } = await open('pairs/P-02');
    await page.evaluate(`(() => {
      const s = document.createElement('script');
      s.textContent = 'window.__injected = "inline script ran"';
      document.body.appendChild(s);
      const d = document.createElement('div');
      d.innerHTML = '<img src="/assets/favicon.svg" onload="window.__handler = 1">';
      document.body.appendChild(d);
    })()`);
    // (Waited for by polling page.evaluate: a string predicate of waitForFunction needs eval, which
    // the policy forbids.)
    await expect
      .poll(() => page.evaluate("document.querySelector('img[onload]')?.complete === true"))
      .toBe(true);
    expect(await page.evaluate('window.__injected')).toBeUndefined();
    expect(await page.evaluate('window.__handler')).toBeUndefined();
    expect(errors.filter((e) => e.includes('Content Security Policy')).length).toBeGreaterThanOrEqual(2);
  });

  it('htmx still boosts navigation and swaps a form in place under the policy', async () => {
    const { page, errors } = await open('calculators');
    await page.evaluate('window.__marker = 11');
    await page.click('nav.vc-nav a[href="/areas"]');
    await page.locator('h1', { hasText: /^Areas$/ }).waitFor();
    // Same window: htmx swapped the page rather than the browser loading it.
    expect(await page.evaluate('window.__marker')).toBe(11);
    await page.goto(new URL('pairs/P-02', server.url).href);
    await page.evaluate('window.__marker = 12');
    await page.fill('#signoff-name', 'C. Engineer');
    await page.click('#signoff button[type="submit"]');
    await page.waitForSelector('#signoff .vc-success, #signoff .vc-error');
    expect(await page.evaluate('window.__marker')).toBe(12);
    expect(errors).toEqual([]);
  });
});
