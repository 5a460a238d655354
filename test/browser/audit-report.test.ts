/**
 * The audit report of Boreas bay 2 over the demo's planted excursion (docs/demo.md), printed to PDF
 * by Chromium against a real server: the PDF has a sensible number of pages (each of the six
 * sections starts a page: public/print.css), its outline holds our section headings in order, and
 * no page holds the navigation or the search box. And the audit page's charts keep their words
 * inside their boxes (test/helpers/svg-layout.ts), printed and on screen.
 *
 * The PDF is read with a small parser of its own (no dependency): the page tree (§7.7.3), and the
 * outline items' /Title strings (PDF 32000-1:2008 §7.3.4 strings, §12.3.3 document outline), which
 * Chromium writes from the page's headings when asked for an outline.
 */
import { writeFileSync } from 'node:fs';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { REPORT_HEADINGS } from '../../views/pages/audit-report.tsx';
import {
  chromiumAvailable,
  launchBrowser,
  screenshotPath,
  startTestServer,
  type TestServer,
} from '../helpers/browser.ts';
import { type LayoutReport, SVG_LAYOUT_CHECK } from '../helpers/svg-layout.ts';

const run = chromiumAvailable();
const PERIOD = 'from=2026-10-17T00:00Z&to=2026-10-19T00:00Z';
const REPORT = `areas/BOR-B2/audit/report?${PERIOD}`;

/** The text of a PDF literal string body (§7.3.4.2: backslash escapes, octal codes). */
function literal(s: string): string {
  return s.replace(/\\([nrtbf()\\]|[0-7]{1,3}|\r?\n)/g, (_, e: string) => {
    const map: Record<string, string> = {
      n: '\n',
      r: '\r',
      t: '\t',
      b: '\b',
      f: '\f',
      '(': '(',
      ')': ')',
      '\\': '\\',
    };
    if (map[e] !== undefined) return map[e]!;
    if (/^[0-7]+$/.test(e)) return String.fromCharCode(parseInt(e, 8));
    return '';
  });
}

/** A PDF text string's value: UTF-16BE with a byte-order mark, else PDFDocEncoding (ASCII here). */
function textString(bytes: number[]): string {
  if (bytes[0] === 0xfe && bytes[1] === 0xff) {
    let s = '';
    for (let i = 2; i + 1 < bytes.length; i += 2) s += String.fromCharCode((bytes[i]! << 8) | bytes[i + 1]!);
    return s;
  }
  return String.fromCharCode(...bytes);
}

/** The file's objects: object number → the text of its dictionary (uncompressed objects only). */
function pdfObjects(pdf: Buffer): Map<number, string> {
  const raw = pdf.toString('latin1');
  const out = new Map<number, string>();
  for (const m of raw.matchAll(/(\d+) 0 obj\s*<<((?:(?!endobj)[\s\S])*?)>>\s*(?:stream|endobj)/g))
    out.set(Number(m[1]), m[2]!);
  return out;
}

const ref = (dict: string, key: string): number | null => {
  const m = new RegExp(`/${key}\\s+(\\d+) 0 R`).exec(dict);
  return m ? Number(m[1]) : null;
};

/** A /Title's value: a literal string (§7.3.4.2) or a hex string (§7.3.4.3), decoded. */
function titleOf(dict: string): string {
  const m = /\/Title\s*(?:\(((?:\\.|[^\\)])*)\)|<([0-9A-Fa-f\s]*)>)/.exec(dict);
  if (!m) return '';
  if (m[1] !== undefined) return textString([...literal(m[1])].map((c) => c.charCodeAt(0)));
  const hex = m[2]!.replace(/\s/g, '');
  const bytes: number[] = [];
  for (let i = 0; i + 1 < hex.length; i += 2) bytes.push(parseInt(hex.slice(i, i + 2), 16));
  return textString(bytes);
}

/** The pages in order (object numbers), from the root of the page tree (§7.7.3). */
function pdfPages(objs: Map<number, string>): number[] {
  const root = [...objs].find(([, d]) => /\/Type\s*\/Pages\b/.test(d) && !/\/Parent\s/.test(d));
  if (!root) return [];
  const walk = (id: number): number[] => {
    const d = objs.get(id) ?? '';
    if (!/\/Type\s*\/Pages\b/.test(d)) return [id];
    const kids = /\/Kids\s*\[([^\]]*)\]/.exec(d)?.[1] ?? '';
    return [...kids.matchAll(/(\d+) 0 R/g)].flatMap((k) => walk(Number(k[1])));
  };
  return walk(root[0]);
}

/** The outline in reading order (§12.3.3): each item's title, depth and the index of the page it points to. */
function pdfOutline(pdf: Buffer): { title: string; depth: number; page: number }[] {
  const objs = pdfObjects(pdf);
  const pages = pdfPages(objs);
  const catalog = [...objs.values()].find((d) => /\/Type\s*\/Catalog\b/.test(d)) ?? '';
  const outlines = ref(catalog, 'Outlines');
  const out: { title: string; depth: number; page: number }[] = [];
  const visit = (id: number | null, depth: number) => {
    for (let n = id, guard = 0; n !== null && guard < 10_000; guard++) {
      const d = objs.get(n) ?? '';
      const dest = /\/Dest\s*\[\s*(\d+) 0 R/.exec(d);
      out.push({ title: titleOf(d), depth, page: dest ? pages.indexOf(Number(dest[1])) : -1 });
      visit(ref(d, 'First'), depth + 1);
      n = ref(d, 'Next');
    }
  };
  if (outlines !== null) visit(ref(objs.get(outlines) ?? '', 'First'), 0);
  return out;
}

/** The number of pages. */
function pdfPageCount(pdf: Buffer): number {
  return pdfPages(pdfObjects(pdf)).length;
}

describe.skipIf(!run)('the audit report printed by Chromium', () => {
  let server: TestServer;
  let browser: Awaited<ReturnType<typeof launchBrowser>>;
  let pdf: Buffer;

  beforeAll(async () => {
    server = await startTestServer();
    browser = await launchBrowser();
    const page = await browser.context.newPage();
    const res = await page.goto(new URL(REPORT, server.url).href);
    expect(res?.status()).toBe(200);
    pdf = await page.pdf({ preferCSSPageSize: true, outline: true, tagged: true, printBackground: false });
    writeFileSync(screenshotPath('audit-report').replace(/\.png$/, '.pdf'), pdf);
    await page.emulateMedia({ media: 'print' });
    await page.screenshot({ path: screenshotPath('audit-report'), fullPage: true });
    await page.close();
  }, 240_000);

  afterAll(async () => {
    await browser?.close();
    await server?.stop();
  });

  it('is a PDF with one page or more per section and not a runaway number of pages', () => {
    expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-');
    const pages = pdfPageCount(pdf);
    // Six sections, each starting a page (public/print.css); the demo bay over two days has a few
    // dozen table rows and a few charts, so more than 30 pages means tables or charts are split badly.
    expect(pages).toBeGreaterThanOrEqual(REPORT_HEADINGS.length);
    expect(pages).toBeLessThanOrEqual(30);
  });

  it('holds our section headings in order in its outline, each section starting a page of its own', () => {
    const outline = pdfOutline(pdf);
    const titles = outline.map((o) => o.title.replace(/\s+/g, ' ').trim());
    const at = REPORT_HEADINGS.map((h) => titles.indexOf(h));
    expect(at.filter((i) => i < 0).length, `outline: ${titles.join(' | ')}`).toBe(0);
    expect([...at].sort((a, b) => a - b)).toEqual(at);
    const pages = at.map((i) => outline[i]!.page);
    expect(pages[0]).toBe(0);
    for (let k = 1; k < pages.length; k++) expect(pages[k]!).toBeGreaterThan(pages[k - 1]!);
  });

  it('prints without the navigation, the search box or the forms, and keeps chart words inside their boxes', async () => {
    const page = await browser.context.newPage();
    await page.goto(new URL(REPORT, server.url).href);
    await page.emulateMedia({ media: 'print' });
    const hidden = (await page.evaluate(
      `['.vc-masthead', '.vc-search', '.vc-downloads', 'form'].map((s) => Array.from(document.querySelectorAll(s)).every((e) => getComputedStyle(e).display === 'none'))`,
    )) as boolean[];
    expect(hidden).toEqual([true, true, true, true]);
    const report = (await page.evaluate(SVG_LAYOUT_CHECK)) as LayoutReport;
    expect(report.kinds).toContain('control-chart');
    expect(report.problems).toEqual([]);
    await page.close();
  });
});
