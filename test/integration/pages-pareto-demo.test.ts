/**
 * The Pareto panels of the demo's lot TR2653 and its pair TR2653-P01, every grouping: the
 * cumulative line drawn in the SVG is read back from its pixel positions (through the right axis's
 * 0 % and 100 % ticks) and compared with the running sum of the share column of the table beside
 * it — the line is computed from the table, not from the chart's own numbers. TR2653's risk comes
 * mostly from deposition while waiting, so "by tool" covers a few per cent of it: the line must
 * stay there (it used to run 42 → 100 % over three tool bars) and the rest must be shown.
 *
 * Tolerance per point: the table's display rounding — half a unit of the last digit shown, for
 * every share summed up to that point — plus 0.1 px of coordinate rounding over the 180 px axis.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo, readDemoManifest } from '../../src/cli/demo.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { byClass, byName, type El, parseXml, textOf } from '../unit/views/svg-query.ts';

let db: Db;
let dir: string;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  await loadDemo(db);
  setSetting(db, AS_OF_SETTING, readDemoManifest().asOf);
  dir = mkdtempSync(join(tmpdir(), 'vc-pareto-'));
  app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
}, 180_000);
afterAll(() => {
  db?.close();
  if (dir) rmSync(dir, { recursive: true, force: true });
});

interface Row {
  label: string;
  share: number;
  /** Half a unit of the last digit the share is shown with. */
  halfUnit: number;
}

/** "1.7 %" → 0.017 ± 0.0005; "96 %" → 0.96 ± 0.005; "0.030 %" → 0.0003 ± 0.000005. */
function parseShare(text: string): { share: number; halfUnit: number } {
  const m = /^([\d.]+)\s*%$/.exec(text.replace(/\u00a0/g, ' ').trim());
  if (!m) throw new Error(`not a share: ${text}`);
  const decimals = m[1]!.includes('.') ? m[1]!.split('.')[1]!.length : 0;
  return { share: Number(m[1]) / 100, halfUnit: (0.5 * 10 ** -decimals) / 100 };
}

function tableRows(panel: El): Row[] {
  const table = byClass(panel, 'vc-pareto-table')[0]!;
  const body = byName(table, 'tbody')[0]!;
  return byName(body, 'tr').map((tr) => {
    const cells = byName(tr, 'td');
    return { label: tr.attrs['data-label']!, ...parseShare(textOf(cells.at(-1)!)) };
  });
}

/** The cumulative points of the chart as shares, read through the right axis. */
function drawnLine(panel: El): { label: string; share: number }[] {
  const svg = byName(panel, 'svg')[0]!;
  const right = svg.children.find((c) => c.attrs['data-axis'] === 'y2')!;
  const tickY = (label: string) =>
    Number(byName(byClass(right, 'vc-tick').find((t) => textOf(t) === label)!, 'line')[0]!.attrs.y1);
  const y0 = tickY('0 %');
  const y100 = tickY('100 %');
  return byClass(svg, 'vc-cumulative-point').map((p) => ({
    label: p.attrs['data-label']!,
    share: (y0 - (Number(p.attrs.y) + 3)) / (y0 - y100), // the marker is a 6 px square centred on its point
  }));
}

async function panel(base: string, by: string): Promise<El> {
  const res = await app.request(`${base}/pareto?by=${by}`, { headers: { 'HX-Request': 'true' } });
  expect(res.status).toBe(200);
  return parseXml(await res.text()).children[0]!;
}

const PX = 0.1 / 180;

describe.each([
  ['lot TR2653', '/lots/TR2653'],
  ['pair TR2653-P01', '/pairs/TR2653-P01'],
])('Pareto of %s', (_name, base) => {
  it.each(['tool', 'wait', 'clean', 'size', 'kind'])(
    'by %s: the cumulative line is the running sum of the table’s shares, ending at 100 %',
    async (by) => {
      const p = await panel(base, by);
      const rows = tableRows(p);
      const points = drawnLine(p);
      expect(points.length).toBeGreaterThan(0);
      // the shares in the table are of the whole: with the rest row (where there is one) they add up to 1
      const sum = rows.reduce((a, r) => a + r.share, 0);
      expect(Math.abs(sum - 1)).toBeLessThanOrEqual(rows.reduce((a, r) => a + r.halfUnit, 0) + 1e-12);
      // walk the bars: a bar of its own is its row; "others (n)" the next n rows; the rest the rest row
      const left = [...rows];
      let run = 0;
      let tol = PX;
      for (const pt of points) {
        const pooled = /^others \((\d+)\)$/.exec(pt.label);
        const take = pooled
          ? left.filter((r) => r.label !== 'other sources').slice(-Number(pooled[1]))
          : left.filter((r) => r.label === pt.label).slice(0, 1);
        expect(take.length).toBeGreaterThan(0);
        for (const r of take) {
          run += r.share;
          tol += r.halfUnit;
          left.splice(left.indexOf(r), 1);
        }
        expect(Math.abs(pt.share - run)).toBeLessThanOrEqual(tol);
      }
      expect(left).toEqual([]); // every row of the table is on the chart
      expect(Math.abs(points.at(-1)!.share - 1)).toBeLessThanOrEqual(tol);
    },
  );
});

describe('what a grouping leaves out', () => {
  it('TR2653 by tool: three tools hold a few per cent; the rest is a bar and a row of its own', async () => {
    const p = await panel('/lots/TR2653', 'tool');
    const points = drawnLine(p);
    const tools = points.filter((x) => x.label !== 'other sources');
    expect(tools.length).toBeGreaterThanOrEqual(3);
    expect(tools.at(-1)!.share).toBeLessThan(0.1);
    expect(points.at(-1)!.label).toBe('other sources');
    const rest = tableRows(p).find((r) => r.label === 'other sources')!;
    expect(rest.share).toBeGreaterThan(0.9);
    expect(byClass(p, 'vc-bar-rest')).toHaveLength(1);
    expect(textOf(byClass(p, 'vc-pareto-note')[0]!)).toMatch(
      /^The bars hold [\d.]+ % of all expected die-kill events; other sources: 9\d %\.$/,
    );
    // the caption names the kinds the rest is made of, the largest first
    expect(textOf(byClass(p, 'vc-pareto-caption')[0]!)).toMatch(
      /other sources \(deposition while waiting \d+ %/,
    );
  });

  it('groupings that hold every source (clean, size band, kind) have no rest', async () => {
    for (const by of ['clean', 'size', 'kind']) {
      const p = await panel('/lots/TR2653', by);
      expect(byClass(p, 'vc-bar-rest')).toHaveLength(0);
      expect(tableRows(p).some((r) => r.label === 'other sources')).toBe(false);
    }
  });
});
