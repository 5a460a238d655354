/**
 * Parameter sets in Chromium against a real server process: a person adopts a proposed set on the
 * Parameters page, the pair page then names the set its assessment used, and going back to the
 * typed values makes it say so again. The data directory is filled beforehand through the real
 * import paths (test/helpers/pages-data.ts) and one proposed set (invented values).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { proposeParameterSet } from '../../src/engine/parameter-sets.ts';
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
import { fittedAdders, fittedUnexplained } from '../helpers/parameter-values.ts';

const run = chromiumAvailable();

describe.skipIf(!run)('parameter sets in Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let dataDir: string;
  let setId: number;

  beforeAll(async () => {
    dataDir = mkdtempSync(join(tmpdir(), 'voidcast-params-browser-'));
    const db = openDataDir(dataDir);
    const files = await importPageLine(db, lineFiles());
    files.cleanup();
    setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
    const r = proposeParameterSet(
      db,
      {
        adders: {
          'BOND-1': fittedAdders('BOND-1', null, { countAbove: 1.2, countLow: 0.9, countHigh: 1.6 }),
        },
        unexplainedVoids: { 'HB300-LOGIC': fittedUnexplained('HB300-LOGIC', { ratePerPair: 1.5 }) },
      },
      [],
      'week 10 fits',
      'A. Fitter',
    );
    if (!r.ok) throw new Error(r.message);
    setId = r.set.id;
    db.close();
    server = await startTestServer({ args: ['--empty'], env: { VOIDCAST_EMPTY: '1' }, dataDir });
    browser = await launchBrowser();
  });
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

  it('adopt → the pair page names the set → revert → the pair page says typed values', async () => {
    const { page, errors } = await open('pairs/P-01');
    const used = page.locator('.vc-params-used');
    expect((await used.textContent())?.replace(/\s+/g, ' ')).toBe('parameters: typed values');

    await page.getByRole('link', { name: 'Parameters' }).click();
    await page.waitForURL(/\/parameters$/);
    expect(await page.locator(`tr[data-set="${setId}"]`).getAttribute('data-state')).toBe('proposed');
    await page.locator(`tr[data-set="${setId}"] a`).click();
    await page.waitForURL(new RegExp(`/parameters/${setId}$`));
    expect(await page.locator('.vc-param-entry').count()).toBe(2);
    await page.locator('#adopt-name').fill('B. Engineer');
    await page.getByRole('button', { name: 'Adopt this set' }).click();
    await page.waitForSelector('.vc-set-state[data-state="adopted"]');
    expect(await page.locator('.vc-lede').textContent()).toContain('by B. Engineer');
    await page.screenshot({ path: screenshotPath('parameter-set'), fullPage: true });

    await page.goto(new URL('pairs/P-01', server.url).href);
    expect((await used.textContent())?.replace(/\s+/g, ' ')).toBe('parameters: set 1 “week 10 fits”');
    expect(await used.getAttribute('data-parameter-set')).toBe(String(setId));
    // The new source is in the kind Pareto.
    await page.goto(new URL('pairs/P-01?pareto=kind', server.url).href);
    expect(await page.locator('#pareto-panel').textContent()).toContain('Voids no scanned particle explains');

    await page.goto(new URL('parameters', server.url).href);
    await page.locator('#revert-name').fill('C. Owner');
    await page.getByRole('button', { name: 'Go back to the typed values' }).click();
    await page.waitForSelector(`tr[data-set="${setId}"][data-state="retired"]`);
    expect(await page.locator('#params-status').textContent()).toContain('no set is adopted');

    await page.goto(new URL('pairs/P-01', server.url).href);
    expect((await used.textContent())?.replace(/\s+/g, ' ')).toBe('parameters: typed values');
    expect(errors).toEqual([]);
  });
});
