/**
 * Regenerates the README's tour pictures,
 * docs/screenshots/{overview,lot,pair,areas,audit,audit-report,line,tools,calibration}.png, and the
 * tuning pictures docs/screenshots/{whatif-pair,whatif-longest-wait,whatif-sensitivity}.png, from a
 * running voidcast server with the demo line.
 *
 *   npm run screenshots                         start a demo server in a temporary data directory
 *   npm run screenshots -- --url http://127.0.0.1:4180/   use a server that is already running
 *   npm run screenshots -- --only whatif-pair,whatif-sensitivity   only these pictures
 *
 * The lot shown is the first lot waiting to bond whose call is re-clean (else hold, else any);
 * the pair shown is that lot's first pair with the same call, so the tour shows a call with its
 * reasons, the caution and the modelled re-clean. The audit shows Boreas bay 2 over the two days of
 * the planted excursion (docs/demo.md), its report as printed (print stylesheet, A4 landscape width).
 * The tuning pictures follow the demo's story
 * (docs/demo.md): one more rinse on TR2652-P01 (its call changes), the longest wait in Boreas bay 2
 * that keeps lot TR2653 within spec, and the sensitivity of TR2653-P01's call. Needs Debian's
 * Chromium (/usr/bin/chromium or $VOIDCAST_CHROMIUM).
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { mkdirSync, mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { parseArgs } from 'node:util';
import { chromium, type Page } from 'playwright-core';

const ROOT = resolve(import.meta.dirname, '..');
const OUT = join(ROOT, 'docs', 'screenshots');
const CHROMIUM = process.env.VOIDCAST_CHROMIUM ?? '/usr/bin/chromium';

async function startDemoServer(): Promise<{ url: string; stop: () => Promise<void> }> {
  const dataDir = mkdtempSync(join(tmpdir(), 'voidcast-shots-'));
  const child: ChildProcess = spawn(
    process.execPath,
    ['--import', 'tsx', join(ROOT, 'src/cli/main.ts'), 'serve', '--open', '--port', '0', '--data', dataDir],
    { cwd: ROOT, env: { ...process.env, NO_COLOR: '1' }, stdio: ['ignore', 'pipe', 'pipe'] },
  );
  let out = '';
  child.stderr?.on('data', (b: Buffer) => {
    out += b.toString();
  });
  const url = await new Promise<string>((ok, fail) => {
    const timer = setTimeout(
      () => fail(new Error(`the demo server did not start within 180 s:\n${out}`)),
      180_000,
    );
    child.stdout?.on('data', (b: Buffer) => {
      out += b.toString();
      const m = /running at (http:\/\/127\.0\.0\.1:\d+\/)/.exec(out);
      if (m) {
        clearTimeout(timer);
        ok(m[1]!);
      }
    });
    child.once('exit', (code) => {
      clearTimeout(timer);
      fail(new Error(`the demo server exited with ${code}:\n${out}`));
    });
  });
  return {
    url,
    stop: async () => {
      if (child.exitCode === null) {
        const exited = new Promise((r) => child.once('exit', r));
        child.kill('SIGTERM');
        await exited;
      }
      rmSync(dataDir, { recursive: true, force: true });
    },
  };
}

/** The href of the first row link in `table` whose row shows `call`, trying the calls in order. */
async function pickLink(page: Page, rowSelector: string, calls: string[]): Promise<string | null> {
  for (const call of [...calls, '']) {
    const sel = call ? `${rowSelector}:has([data-call="${call}"]) a` : `${rowSelector} a`;
    const href = await page
      .locator(sel)
      .first()
      .getAttribute('href', { timeout: 2000 })
      .catch(() => null);
    if (href) return href;
  }
  return null;
}

/** Full-page shots, except that a very long page is cut at `maxHeight` px (the README shows its top). */
async function shoot(page: Page, url: string, name: string, maxHeight = 2400, width = 1360): Promise<void> {
  const res = await page.goto(url, { waitUntil: 'networkidle' });
  if (res?.status() !== 200) throw new Error(`${url} answered ${res?.status()}`);
  const file = join(OUT, `${name}.png`);
  const height = (await page.evaluate('document.documentElement.scrollHeight')) as number;
  await page.screenshot({
    path: file,
    fullPage: true,
    clip: { x: 0, y: 0, width, height: Math.min(height, maxHeight) },
  });
  console.log(`wrote ${file}`);
}

/** One section of a page (waiting for `ready` inside it when it loads after the page, by htmx). */
async function shootPart(
  page: Page,
  url: string,
  selector: string,
  name: string,
  ready?: string,
): Promise<void> {
  const res = await page.goto(url, { waitUntil: 'networkidle' });
  if (res?.status() !== 200) throw new Error(`${url} answered ${res?.status()}`);
  if (ready) await page.locator(`${selector} ${ready}`).waitFor({ timeout: 120_000 });
  const file = join(OUT, `${name}.png`);
  await page.locator(selector).screenshot({ path: file });
  console.log(`wrote ${file}`);
}

async function main(): Promise<number> {
  const { values } = parseArgs({ options: { url: { type: 'string' }, only: { type: 'string' } } });
  const only = values.only ? new Set(values.only.split(',').map((n) => n.trim())) : null;
  const want = (name: string) => only === null || only.has(name);
  mkdirSync(OUT, { recursive: true });
  const server = values.url
    ? { url: values.url.endsWith('/') ? values.url : `${values.url}/`, stop: async () => {} }
    : await startDemoServer();
  const browser = await chromium.launch({
    executablePath: CHROMIUM,
    headless: true,
    args: ['--no-sandbox', '--disable-gpu'],
  });
  try {
    const page = await browser.newPage({ viewport: { width: 1360, height: 900 }, deviceScaleFactor: 1 });
    if (want('overview')) await shoot(page, server.url, 'overview');
    await page.goto(new URL('lots', server.url).href);
    const lot = await pickLink(page, 'table[data-table="waiting"] tbody tr', ['re-clean', 'hold']);
    if (!lot) throw new Error('no lot on /lots: is the demo line loaded?');
    if (want('lot')) await shoot(page, new URL(lot, server.url).href, 'lot');
    else await page.goto(new URL(lot, server.url).href);
    const pair = await pickLink(page, 'table.vc-pair-table tbody tr', ['re-clean', 'hold']);
    if (!pair) throw new Error(`no pair on ${lot}`);
    if (want('pair')) await shoot(page, new URL(pair, server.url).href, 'pair', 2050);
    if (want('areas')) await shoot(page, new URL('areas', server.url).href, 'areas');
    const planted = 'from=2026-10-17T00:00Z&to=2026-10-19T00:00Z';
    if (want('audit'))
      await shoot(page, new URL(`areas/BOR-B2/audit?${planted}`, server.url).href, 'audit', 3000);
    if (want('audit-report')) {
      // The report as it prints: the print stylesheet at the width of an A4 landscape page's text (273 mm).
      await page.setViewportSize({ width: 1032, height: 900 });
      await page.emulateMedia({ media: 'print' });
      await shoot(
        page,
        new URL(`areas/BOR-B2/audit/report?${planted}`, server.url).href,
        'audit-report',
        2600,
        1032,
      );
      await page.emulateMedia({ media: 'screen' });
      await page.setViewportSize({ width: 1360, height: 900 });
    }
    if (want('line')) await shoot(page, new URL('line', server.url).href, 'line');
    if (want('tools')) await shoot(page, new URL('tools', server.url).href, 'tools');
    if (want('calibration')) await shoot(page, new URL('calibration', server.url).href, 'calibration');
    // Tuning: a what-if whose call changes, a solver's answer, and the tornado of a call.
    if (want('whatif-pair'))
      await shoot(
        page,
        new URL('whatif/pair/TR2652-P01?clean=CLN-RIN1&passes=1', server.url).href,
        'whatif-pair',
      );
    if (want('whatif-longest-wait'))
      await shootPart(
        page,
        new URL('whatif/lot/TR2653/solve?solver=longest-wait&at=BOR-B2', server.url).href,
        '#solvers',
        'whatif-longest-wait',
      );
    if (want('whatif-sensitivity'))
      await shootPart(
        page,
        new URL('pairs/TR2653-P01', server.url).href,
        '#sensitivity',
        'whatif-sensitivity',
        'svg[data-chart="tornado"]',
      );
    return 0;
  } finally {
    await browser.close();
    await server.stop();
  }
}

main().then(
  (code) => process.exit(code),
  (err: unknown) => {
    console.error(err instanceof Error ? err.message : String(err));
    process.exit(1);
  },
);
