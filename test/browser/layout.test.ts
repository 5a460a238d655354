/**
 * Every chart on the demo line's pages, in Chromium against a real server: no text leaves its SVG
 * and no two labels overlap (test/helpers/svg-layout.ts says how boxes are measured and why the
 * tolerance is 0.5 px). And the calculators' inputs stay inside their cards.
 *
 * Pages: the overview, the lots queue, every lot with each Pareto grouping, the first pair of each
 * waiting lot with each Pareto grouping and the cumulative spectrum, the areas page and the trend
 * of every location at every counter channel it offers (swapped in by htmx, as the page's own
 * controls do), the tools, the calculators and the imports, and the contamination audit: each
 * area's audit page, every control chart of the bays of the planted excursion and counter fault,
 * the audit report and the line view.
 * The pages are found by following the product's own links, so a new lot, location, channel or
 * grouping is checked without changing this test.
 */
import type { Page } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { chromiumAvailable, launchBrowser, startTestServer, type TestServer } from '../helpers/browser.ts';
import { type LayoutProblem, type LayoutReport, SVG_LAYOUT_CHECK } from '../helpers/svg-layout.ts';

const run = chromiumAvailable();

interface Visit {
  path: string;
  status: number;
  report: LayoutReport;
}

describe.skipIf(!run)('words and controls inside their boxes on the demo line’s pages', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  const visits: Visit[] = [];

  beforeAll(async () => {
    server = await startTestServer();
    browser = await launchBrowser();
    const page = await browser.context.newPage();
    const seen = new Set<string>();
    const visit = async (path: string) => {
      if (seen.has(path)) return;
      seen.add(path);
      const res = await page.goto(new URL(path, server.url).href);
      const report = (await page.evaluate(SVG_LAYOUT_CHECK)) as LayoutReport;
      visits.push({ path, status: res?.status() ?? 0, report });
    };
    const hrefs = (p: Page, selector: string) =>
      p.$$eval(selector, (as) => as.map((a) => (a.getAttribute('href') ?? '').replace(/^\//, '')));

    await visit('');
    await visit('lots');
    const lots = await hrefs(page, 'main a[href^="/lots/"]');
    const waiting = new Set(await hrefs(page, 'table[data-table="waiting"] a[href^="/lots/"]'));
    for (const lot of lots) {
      await visit(lot);
      const tabs = await hrefs(page, '#pareto-panel .vc-tabs a');
      const pairs = await hrefs(page, 'table.vc-pair-table a[href^="/pairs/"]');
      for (const t of tabs) await visit(t);
      if (!waiting.has(lot) || !pairs[0]) continue;
      await visit(pairs[0]);
      const pairTabs = await hrefs(page, '#pareto-panel .vc-tabs a');
      const spectrum = await hrefs(page, '#spectrum a[href*="spectrum="]');
      for (const t of [...pairTabs, ...spectrum]) await visit(t);
      // Its what-if page (the scenario's Pareto beside the as-is one) and its call's sensitivity (the
      // tornado), the lot's what-if page.
      await visit(`whatif/${pairs[0]}`.replace('whatif/pairs/', 'whatif/pair/'));
      await visit(`whatif/${pairs[0]}/sensitivity`.replace('whatif/pairs/', 'whatif/pair/'));
      await visit(`whatif/${lot}`.replace('whatif/lots/', 'whatif/lot/'));
    }
    await visit('whatif/waiting');
    await visit('areas');
    // Each location's trend at each channel, swapped into the Areas page the way its own controls
    // do it (htmx), so the page's styles apply and the page is classified once, not per trend.
    const locations = await page.$$eval('.vc-iso-table tr[data-location]', (rows) =>
      rows.map((r) => r.getAttribute('data-location') ?? ''),
    );
    const swap = async (query: string) => {
      const path = `areas/trend?${query}`;
      if (seen.has(path)) return;
      seen.add(path);
      await page.evaluate(
        `htmx.ajax('GET', ${JSON.stringify(`/${path}`)}, { target: '#trend-panel', swap: 'outerHTML' })`,
      );
      const report = (await page.evaluate(SVG_LAYOUT_CHECK)) as LayoutReport;
      const shown = await page.locator('#trend-panel select[name="location"]').inputValue();
      visits.push({ path, status: shown === new URLSearchParams(query).get('location') ? 200 : 0, report });
    };
    for (const loc of locations) {
      await swap(`location=${encodeURIComponent(loc)}`);
      const channels = await page.$$eval('#trend-panel select[name="channel"] option', (os) =>
        os.map((o) => o.getAttribute('value') ?? ''),
      );
      for (const ch of channels)
        await swap(`location=${encodeURIComponent(loc)}&channel=${encodeURIComponent(ch)}`);
    }
    await visit('tools');
    await visit('calculators');
    await visit('imports');
    // The contamination audit: each area's audit page (found from the Areas page's links), every
    // control chart of the bays around the planted excursion and counter fault, the report, the line view.
    seen.delete('areas');
    await visit('areas');
    for (const a of await hrefs(page, '.vc-area h2 a[href$="/audit"]')) await visit(a);
    await visit('areas/BOR-B2/audit?from=2026-10-17T00:00Z&to=2026-10-19T00:00Z&charts=all');
    await visit('areas/LEV-B1/audit?from=2026-10-13T00:00Z&to=2026-10-14T00:00Z&charts=all');
    await visit('areas/BOR-B2/audit/report?from=2026-10-17T00:00Z&to=2026-10-19T00:00Z');
    await visit('line');
    await page.close();
  }, 300_000);

  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  const problems = (pred: (p: LayoutProblem) => boolean) =>
    visits.flatMap((v) =>
      v.report.problems
        .filter(pred)
        .map((p) => `${v.path || '/'} [${p.chart}] ${p.kind}: "${p.text}" — ${p.other}`),
    );

  it('reaches every page and every kind of chart the product draws', () => {
    expect(visits.filter((v) => v.status !== 200).map((v) => `${v.path}: ${v.status}`)).toEqual([]);
    const kinds = new Set(visits.flatMap((v) => v.report.kinds));
    for (const k of [
      'trend',
      'stacked-spectrum',
      'wafer-map',
      'void-map',
      'pareto',
      'removal-curve',
      'tornado',
      'control-chart',
      'adder-history',
    ])
      expect(kinds.has(k), `no ${k} chart was checked`).toBe(true);
    // The demo line: 5 assessed lots with 5 groupings each, 3 waiting lots' pairs, 16 locations.
    expect(visits.length).toBeGreaterThan(60);
    expect(visits.reduce((n, v) => n + v.report.texts, 0)).toBeGreaterThan(1000);
  });

  it('no label is clipped by its chart or overlaps another (every chart: trend, spectrum, wafer maps, void map, Pareto, removal curves, tornado, control charts, adder histories)', () => {
    expect(problems(() => true)).toEqual([]);
  });

  it('keeps every calculator input, choice and button inside its card, wide and narrow', async () => {
    const page = await browser.context.newPage();
    const out: string[] = [];
    for (const width of [1360, 820]) {
      await page.setViewportSize({ width, height: 900 });
      await page.goto(new URL('calculators', server.url).href);
      // Whole pixels: a control's border box against its card's padding box (layout in CSS px,
      // the 0.5 px tolerance of the chart check, for the same reason).
      const found =
        (await page.evaluate(`Array.from(document.querySelectorAll('article.vc-calc')).flatMap((card) => {
        const c = card.getBoundingClientRect();
        return Array.from(card.querySelectorAll('input, select, button'))
          .map((el) => ({ el, b: el.getBoundingClientRect() }))
          .filter(({ b }) => b.left < c.left - 0.5 || b.right > c.right + 0.5)
          .map(({ el, b }) => card.id + ' ' + (el.getAttribute('name') || el.tagName) + ': ' + b.left.toFixed(0) + '–' + b.right.toFixed(0) + ' px outside ' + c.left.toFixed(0) + '–' + c.right.toFixed(0) + ' px');
      })`)) as string[];
      out.push(...found.map((f) => `${width} px: ${f}`));
    }
    await page.close();
    expect(out).toEqual([]);
  });
});
