/**
 * The audit pages on the demo line (docs/demo.md, "Planted problems"), with accounts on:
 *
 * - the planted excursion — BOR-B2, 18 Oct 2026 00:40–04:55 UTC, ≥ 0.5 µm up to ≈ 22 × its baseline,
 *   action 3 517 /m³, TR2653's 24 wafers parked there — is found on Boreas bay 2's audit page as a
 *   rise in the air, with the wafers in its air and the voids it added (more than none);
 * - the counter fault — PC-L1 at LEV-B1, 13 Oct 09:12–17:47 UTC, all-zero rows with status ok — is
 *   found on Levant bay 1's page and told apart as the counter's, not the air's, with nothing added;
 * - deriving levels needs an approver and acknowledging an engineer (src/web/auth/permissions.ts);
 *   both are stored, shown and written to the audit trail; a baseline shorter than the method needs
 *   is refused on the page with the reason.
 */
import Papa from 'papaparse';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo, readDemoManifest } from '../../src/cli/demo.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { makeUser, signIn } from '../helpers/accounts.ts';
import { downloadLinks, type HtmlTable, htmlTables } from '../helpers/html-tables.ts';

let db: Db;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  await loadDemo(db);
  setSetting(db, AS_OF_SETTING, readDemoManifest().asOf);
  app = createApp({
    db,
    dataDir: '/nonexistent',
    version: 'test',
    log: () => {},
    auth: { mode: 'accounts', sessionSecret: 'k'.repeat(43) },
  });
  await makeUser(db, 'vera', 'viewer');
  await makeUser(db, 'eli', 'engineer');
  await makeUser(db, 'ada', 'approver');
}, 180_000);
afterAll(() => db?.close());

const BOREAS_B2 = '/areas/BOR-B2/audit?from=2026-10-17T00:00Z&to=2026-10-19T00:00Z';
const LEVANT_B1 = '/areas/LEV-B1/audit?from=2026-10-13T00:00Z&to=2026-10-14T00:00Z';

function col(t: HtmlTable, name: string): number {
  const i = t.header.indexOf(name);
  if (i < 0) throw new Error(`no column ${name} in ${t.id}: ${t.header.join(' | ')}`);
  return i;
}

describe('the demo’s planted problems on the audit pages', () => {
  it('finds the BOR-B2 excursion as a rise in the air, with TR2653’s wafers and the voids it added', async () => {
    const b = await signIn(app, 'vera');
    const res = await b.get(BOREAS_B2);
    expect(res.status).toBe(200);
    const html = await res.text();
    const ex = htmlTables(html).find((t) => t.id === 'excursions')!;
    const action = ex.rows.filter((r) => r[col(ex, 'Rule')] === 'action-point');
    expect(action).toHaveLength(1);
    const row = action[0]!;
    expect(row[col(ex, 'Locations')]).toBe('BOR-B2');
    expect(row[col(ex, 'Most likely')]).toBe('air');
    // The excursion's hours hold the planted 00:40–04:55 UTC rise above action (docs/demo.md).
    const start = Date.parse(row[col(ex, 'Start (UTC)')]!);
    const end = Date.parse(row[col(ex, 'End (UTC)')]!);
    expect(start).toBeGreaterThanOrEqual(Date.UTC(2026, 9, 18, 0, 0));
    expect(start).toBeLessThanOrEqual(Date.UTC(2026, 9, 18, 4, 0));
    expect(end).toBeGreaterThanOrEqual(Date.UTC(2026, 9, 18, 4, 0));
    expect(end).toBeLessThanOrEqual(Date.UTC(2026, 9, 18, 6, 0));
    expect(Number(row[col(ex, 'Peak (/m³)')])).toBeGreaterThan(3517);
    // Its cost is its event's: the rules' excursions of the FFU failure overlap at BOR-B2 and are one
    // event, costed once (docs/engine.md §13), which every one of them names.
    const eventId = row[col(ex, 'Event')]!;
    for (const r of ex.rows.filter((x) => x[col(ex, 'Most likely')] === 'air'))
      expect(r[col(ex, 'Event')], r[0]).toBe(eventId);
    const evs = htmlTables(html).find((t) => t.id === 'events')!;
    const evRow = evs.rows.find((r) => r[0] === eventId)!;
    expect(evRow[col(evs, 'Excursions')]!.split(' ').sort()).toEqual(
      ex.rows
        .filter((x) => x[col(ex, 'Most likely')] === 'air')
        .map((x) => x[0]!)
        .sort(),
    );
    expect(Number(evRow[col(evs, 'Exposed wafers')])).toBe(24);
    expect(Number(evRow[col(evs, 'Added voids')])).toBeGreaterThan(0);
    const wafers = htmlTables(html).find((t) => t.id === 'exposed-wafers')!;
    const mine = wafers.rows.filter((r) => r[col(wafers, 'Event')] === eventId);
    expect(new Set(mine.map((r) => r[col(wafers, 'Lot')]))).toEqual(new Set(['TR2653']));
    expect(mine).toHaveLength(24);
    const lots = htmlTables(html).find((t) => t.id === 'lot-costs')!;
    const lot = lots.rows.find((r) => r[0] === eventId)!;
    // The event's added voids are its lot's (one lot exposed; 6 significant figures per cell).
    expect(
      Math.abs(Number(lot[col(lots, 'Added voids')]) - Number(evRow[col(evs, 'Added voids')])),
    ).toBeLessThan(1e-4 * Number(evRow[col(evs, 'Added voids')]));
    // The lot's added voids are the sum over its pairs (each wafer row carries its pair's; hand
    // computation on the rows shown; 6 significant figures per cell, so a relative tolerance of 1e-4).
    const perPair = new Map(
      mine.map((r) => [r[col(wafers, 'Pair')], Number(r[col(wafers, 'Added voids of its pair')])]),
    );
    expect(perPair.size).toBe(12);
    const sum = [...perPair.values()].reduce((s, v) => s + v, 0);
    expect(Math.abs(Number(lot[col(lots, 'Added voids')]) - sum) / sum).toBeLessThan(1e-4);
    // The control chart of BOR-B2 ≥ 0.5 µm is drawn and flags points.
    expect(html).toContain('data-chart-location="BOR-B2"');
    expect(html).toMatch(/class="vc-flag"/);
  });

  it('tells the LEV-B1 counter fault from the air: the counter’s, with nothing added', async () => {
    const b = await signIn(app, 'vera');
    const html = await (await b.get(LEVANT_B1)).text();
    const ex = htmlTables(html).find((t) => t.id === 'excursions')!;
    const fault = ex.rows.filter((r) => r[col(ex, 'Most likely')] === 'instrument');
    expect(fault.length).toBeGreaterThan(0);
    const f = fault[0]!;
    expect(f[col(ex, 'Locations')]).toBe('LEV-B1');
    expect(f[col(ex, 'Data quality')]).toMatch(/516 in a zero run/);
    expect(Date.parse(f[col(ex, 'Start (UTC)')]!)).toBe(Date.UTC(2026, 9, 13, 9, 0));
    expect(Date.parse(f[col(ex, 'End (UTC)')]!)).toBe(Date.UTC(2026, 9, 13, 18, 0));
    const evs = htmlTables(html).find((t) => t.id === 'events')!;
    const evRow = evs.rows.find((r) => r[0] === f[col(ex, 'Event')])!;
    expect(evRow[col(evs, 'Most likely')]).toBe('instrument');
    expect(Number(evRow[col(evs, 'Added voids')])).toBe(0);
    expect(evRow[col(evs, 'Notes')]).toContain('an instrument finding');
    expect(ex.rows.filter((r) => r[col(ex, 'Most likely')] === 'air')).toEqual([]);
  });

  it('downloads the excursions as CSV with the rows shown', async () => {
    const b = await signIn(app, 'vera');
    const html = await (await b.get(BOREAS_B2)).text();
    const shown = htmlTables(html).find((t) => t.id === 'excursions')!;
    const href = downloadLinks(html).get('excursions')!.csv!;
    const res = await b.get(href);
    expect(res.headers.get('content-disposition')).toBe(
      'attachment; filename="audit-BOR-B2-excursions-20261017-20261019.csv"',
    );
    const rows = Papa.parse<string[]>(await res.text(), { skipEmptyLines: true }).data;
    expect(rows.slice(1)).toEqual(shown.rows);
  });
});

describe('levels and acknowledgements on the audit page', () => {
  const levels = {
    location: 'BOR-B2',
    channel: '0.5',
    method: 'percentile',
    baselineFrom: '2026-10-01T00:00Z',
    baselineTo: '2026-10-15T00:00Z',
    name: 'October baseline',
    occupancy: 'operational',
    return: 'from=2026-10-17T00:00Z&to=2026-10-19T00:00Z',
  };

  it('derive levels: refused to an engineer, stored for an approver with method, window, who and when', async () => {
    const eli = await signIn(app, 'eli');
    expect((await eli.post('/areas/BOR-B2/audit/levels', levels)).status).toBe(403);
    const ada = await signIn(app, 'ada');
    const res = await ada.post('/areas/BOR-B2/audit/levels', levels);
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toContain('stored=levels');
    const html = await (await ada.get(res.headers.get('location')!)).text();
    const lv = htmlTables(html).find((t) => t.id === 'levels')!;
    const row = lv.rows.find((r) => r[0] === 'BOR-B2' && r[col(lv, 'Channel (≥ µm)')] === '0.5')!;
    expect(row[col(lv, 'Set by method')]).toBe('percentile');
    expect(row[col(lv, 'Set by')]).toBe('ada');
    expect(row[col(lv, 'Baseline from (UTC)')]).toBe('2026-10-01T00:00:00Z');
    expect(Number(row[col(lv, 'Version')])).toBe(1);
    const trail = db.prepare("SELECT actor, subject FROM audit_log WHERE action = 'derive levels'").all();
    expect(trail).toEqual([{ actor: 'ada', subject: 'BOR-B2 ≥ 0.5 µm' }]);
  });

  it('refuses a baseline shorter than the method needs, on the page with the reason, storing nothing', async () => {
    const ada = await signIn(app, 'ada');
    const before = db.prepare("SELECT COUNT(*) AS n FROM audit_log WHERE action = 'derive levels'").get();
    const res = await ada.post('/areas/BOR-B2/audit/levels', {
      ...levels,
      baselineFrom: '2026-10-01T00:00Z',
      baselineTo: '2026-10-01T06:00Z',
    });
    expect(res.status).toBe(400);
    const html = await res.text();
    expect(html).toContain('Levels not stored');
    expect(html).toMatch(/needs at least \d+/);
    expect(db.prepare("SELECT COUNT(*) AS n FROM audit_log WHERE action = 'derive levels'").get()).toEqual(
      before,
    );
  });

  it('a malformed field is a 400 naming it', async () => {
    const ada = await signIn(app, 'ada');
    for (const [k, v] of [
      ['method', 'guess'],
      ['channel', '-1'],
      ['baselineFrom', '2026-13-01T00:00Z'],
      ['location', 'NOWHERE'],
    ] as const) {
      const res = await ada.post('/areas/BOR-B2/audit/levels', { ...levels, [k]: v });
      expect(res.status, k).toBe(400);
      expect(await res.text()).toContain(`${k} `);
    }
  });

  it('acknowledge: refused to a viewer, stored for an engineer and shown', async () => {
    const vera = await signIn(app, 'vera');
    const html = await (await vera.get(BOREAS_B2)).text();
    const id = /<select id="ack-id" name="excursion"><option value="([^"]+)"/.exec(html)![1]!;
    const form = { excursion: id, comment: 'FFU restarted 04:50; buffer cart moved', return: levels.return };
    expect((await vera.post('/areas/BOR-B2/audit/acknowledge', form)).status).toBe(403);
    const eli = await signIn(app, 'eli');
    expect((await eli.post('/areas/BOR-B2/audit/acknowledge', { ...form, comment: '  ' })).status).toBe(400);
    const res = await eli.post('/areas/BOR-B2/audit/acknowledge', form);
    expect(res.status).toBe(303);
    const after = await (await eli.get(res.headers.get('location')!)).text();
    const ex = htmlTables(after).find((t) => t.id === 'excursions')!;
    const row = ex.rows.find((r) => r[0] === id)!;
    expect(row[col(ex, 'Acknowledged')]).toContain('eli');
    expect(row[col(ex, 'Acknowledged')]).toContain('FFU restarted 04:50');
    const report = await (await eli.get(`/areas/BOR-B2/audit/report?${levels.return}`)).text();
    expect(report).toContain('FFU restarted 04:50; buffer cart moved');
  });
});

describe('the line view over the demo period', () => {
  it('ranks the sources of expected voids across lots, shows each chamber’s passes, and every table downloads with its rows', async () => {
    const b = await signIn(app, 'vera');
    const res = await b.get('/line?from=2026-09-18T19:00Z&to=2026-10-18T19:00Z');
    expect(res.status).toBe(200);
    const html = await res.text();
    const tables = htmlTables(html);
    const tool = tables.find((t) => t.id === 'pareto-tool')!;
    // docs/demo.md: TR2652's risk is LACT-1 chamber B's flakes (≈ 80 % of that lot), the largest tool source.
    expect(tool.rows[0]![0]).toBe('LACT-1/B');
    const wait = tables.find((t) => t.id === 'pareto-wait-location')!;
    // TR2653 parked in Boreas bay 2 through the excursion: the largest wait source.
    expect(wait.rows[0]![0]).toBe('BOR-B2');
    // Shares are of the category's total and add up to it (hand computation on the rows shown;
    // 6 significant figures per cell).
    for (const t of [tool, wait]) {
      const shares = t.rows.map((r) => Number(r[col(t, 'Share')]));
      expect(Math.abs(shares.reduce((a, v) => a + v, 0) - 1)).toBeLessThan(1e-4);
      expect(Number(t.rows.at(-1)![col(t, 'Cumulative share')])).toBeCloseTo(1, 4);
    }
    // By size band: the bands' rows add up to the particle sources' voids the note beside states
    // (hand computation on the rows shown, 6 significant figures per cell: 1e-4 relative is ample), with the
    // band edges in µm.
    expect(html).not.toContain('data-missing');
    const bands = tables.find((t) => t.id === 'pareto-size-band')!;
    expect(bands.header.slice(0, 3)).toEqual(['Size band', 'From (µm)', 'Below (µm)']);
    const bandRow = (label: string) => bands.rows.find((r) => r[0] === label)!;
    expect(bandRow('0.3–1 µm').slice(1, 3)).toEqual(['0.3', '1']);
    expect(bandRow('≥ 5 µm').slice(1, 3)).toEqual(['5', '']);
    const bandVoids = bands.rows.reduce((a, r) => a + Number(r[col(bands, 'Expected voids')]), 0);
    const stated = Number(/data-particle-voids="([^"]+)"/.exec(html)![1]);
    expect(stated).toBeGreaterThan(0);
    expect(Math.abs(bandVoids - stated)).toBeLessThan(1e-4 * stated);
    const passes = tables.find((t) => t.id === 'chamber-passes')!;
    expect(passes.rows.some((r) => r[0] === 'LACT-1/B')).toBe(true);
    const links = downloadLinks(html);
    for (const t of tables) {
      const csv = await b.get(links.get(t.id)!.csv!);
      expect(csv.headers.get('content-type')).toMatch(/^text\/csv; charset=utf-8/);
      expect(csv.headers.get('content-disposition')).toBe(
        `attachment; filename="line-${t.id}-20260918-20261018.csv"`,
      );
      const rows = Papa.parse<string[]>(await csv.text(), { skipEmptyLines: true }).data;
      expect(rows[0]).toEqual(t.header);
      expect(rows.slice(1)).toEqual(t.rows);
    }
  });
});
