/**
 * The what-if pages on the demo line (docs/demo.md), through app.request with accounts on: each page
 * answers, a scenario without levers shows the stored assessment's figures exactly (compared with the
 * JSON API's assessment of the same pair at the same time — an independent path through the
 * engine), a refused lever is a 400 naming the field, and no what-if request changes anything stored
 * (a content dump of every table before and after).
 *
 * Expected calls: docs/demo.md's story (TR2652 RE-CLEAN on LACT-1 chamber B's adders; TR2653 HOLD
 * after its night in Boreas bay 2).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo, readDemoManifest } from '../../src/cli/demo.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { type Browser, makeUser, signIn } from '../helpers/accounts.ts';
import { dumpDatabase } from '../helpers/db-dump.ts';

let db: Db;
let app: ReturnType<typeof createApp>;
let viewer: Browser;
let engineer: Browser;
const errors: string[] = [];

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  await loadDemo(db);
  setSetting(db, AS_OF_SETTING, readDemoManifest().asOf);
  app = createApp({
    db,
    dataDir: '/nonexistent',
    version: 'test',
    auth: { mode: 'accounts', sessionSecret: 'w'.repeat(43) },
    log: (l) => {
      if (l.startsWith('ERROR')) errors.push(l);
    },
  });
  await makeUser(db, 'vera', 'viewer', 'Vera Viewer');
  await makeUser(db, 'enzo', 'engineer', 'Enzo Engineer');
  viewer = await signIn(app, 'vera');
  engineer = await signIn(app, 'enzo');
}, 180_000);
afterAll(() => db?.close());

const text = (html: string) =>
  html
    .replace(/<svg[\s\S]*?<\/svg>/g, ' ')
    .replace(/<[^>]+>/g, ' ')
    .replace(/&#39;/g, "'")
    .replace(/&quot;/g, '"')
    .replace(/&amp;/g, '&')
    .replace(/\s+/g, ' ');

/** The cells of one figure row of the what-if table: [as is, scenario]. */
function figureCells(html: string, figure: string): [string, string] {
  const row = new RegExp(`<tr data-figure="${figure}">([\\s\\S]*?)</tr>`).exec(html)?.[1] ?? '';
  const cell = (side: string) =>
    text(new RegExp(`data-side="${side}">([\\s\\S]*?)</td>`).exec(row)?.[1] ?? '').trim();
  return [cell('as-is'), cell('scenario')];
}

describe('what-if pages', () => {
  it('each page answers for a viewer: a pair, a lot, every waiting lot', async () => {
    for (const path of ['/whatif/pair/TR2653-P01', '/whatif/lot/TR2652', '/whatif/waiting']) {
      const res = await viewer.get(path);
      expect(res.status, path).toBe(200);
      const html = await res.text();
      expect(html).toContain('id="whatif-result"');
      expect(html).toContain('A scenario changes nothing stored');
      // The form works without script: a GET to the page itself.
      expect(html).toMatch(/<form class="vc-levers" id="whatif-levers" method="get" action="\/whatif\//);
    }
    expect(errors).toEqual([]);
  });

  it('a scenario without levers shows the stored figures and call exactly', async () => {
    const api = (await (await viewer.get('/api/pairs/TR2652-P01/assessment?detail=summary')).json()) as {
      call: string;
      figures: { voids: { value: number }; dieKillsNB: { value: number } | null };
    };
    const exported = (await (await viewer.get('/whatif/pair/TR2652-P01/export')).json()) as {
      scenario: { levers: unknown[] };
      asIs: { call: string; figures: unknown; inputsHash: string };
      whatIf: { call: string; figures: unknown; inputsHash: string };
      callChanged: boolean;
    };
    expect(exported.scenario.levers).toEqual([]);
    expect(exported.whatIf.figures).toEqual(exported.asIs.figures);
    expect(exported.whatIf.figures).toEqual(api.figures);
    expect(exported.whatIf.inputsHash).toBe(exported.asIs.inputsHash);
    expect(exported.whatIf.call).toBe(api.call);
    expect(exported.callChanged).toBe(false);
    // On the page, both columns show the same figures, and the page says no lever changed.
    const html = await (await viewer.get('/whatif/pair/TR2652-P01')).text();
    for (const f of ['voids', 'unbonded', 'dies-nb', 'particles']) {
      const [a, b] = figureCells(html, f);
      expect(a, f).not.toBe('');
      expect(b, f).toBe(a);
    }
    expect(html).toContain('data-applied="none"');
  });

  it('a lever changes the figures beside the as-is ones: LACT-1 chamber B at a tenth of its adders bonds TR2652-P01', async () => {
    // docs/demo.md: chamber B's adders are ≈ 80 % of TR2652's risk, so a tenth of them brings the pair
    // within spec; the call goes from re-clean to bond.
    const res = await viewer.get('/whatif/pair/TR2652-P01?tool=LACT-1%2FB&adders=0.1');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(text(html)).toContain('As is re-clean → scenario bond the call changes');
    const [a, b] = figureCells(html, 'voids');
    expect(Number.parseFloat(b)).toBeLessThan(Number.parseFloat(a));
    expect(text(html)).toContain('adders of LACT-1/B: ×0.1');
  });

  it('an extra rinse changes TR2652-P01’s call and carries the safety words, as do the clean solvers', async () => {
    // demo-calls test: one more LRIN-1 rinse (CLN-RIN1) brings every TR2652 pair within spec.
    const html = text(await (await viewer.get('/whatif/pair/TR2652-P01?clean=CLN-RIN1&passes=1')).text());
    expect(html).toContain('As is re-clean → scenario bond the call changes');
    for (const words of [
      'authorised recipes',
      're-clean count limits',
      'qualified people',
      'safety data sheets',
    ])
      expect(html).toContain(words);
    const solved = text(
      await (
        await viewer.get('/whatif/pair/TR2652-P01/solve?solver=extra-passes', { 'HX-Request': 'true' })
      ).text(),
    );
    expect(solved).toContain('1 extra pass');
    expect(solved).toContain('authorised recipes');
    expect(solved).toContain('licensed practice');
  });

  it('the htmx swap is the result alone, and the same query as the page', async () => {
    const res = await viewer.get('/whatif/pair/TR2652-P01?tool=LACT-1%2FB&adders=0.1', {
      'HX-Request': 'true',
    });
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<div id="whatif-result"')).toBe(true);
    expect(html).not.toContain('<html');
    expect(html).toContain('/whatif/pair/TR2652-P01?tool=LACT-1%2FB&amp;adders=0.1');
  });

  it('a bad lever is a 400 naming the field and the rule, on the page and in the swap, never a 500', async () => {
    const cases: [string, string][] = [
      ['clean=CLN-RIN1&removal=2&removalAt=50', 'removal must be a number above 0 up to 1'],
      ['air=BOR-B2&iso=10', 'iso must be a number from 1'],
      ['air=BOR-B2&iso=0', 'iso must be a number from 1'],
      ['wait=BOR-B2&waitH=-2', 'waitH must be a number from 0 h'],
      ['wait=NO-SUCH-BAY&waitH=1', 'wait names no location of this line: "NO-SUCH-BAY"'],
      ['clean=NO-SUCH-CLEAN&passes=1', 'clean names no clean of this line: "NO-SUCH-CLEAN"'],
      ['tool=NOPE&adders=0.5', 'tool names no tool or chamber of this line'],
      ['passes=1', 'clean is needed for passes'],
      ['clean=CLN-RIN1&passes=11', 'passes must be a whole number from 0 to 10'],
      ['energy=NaN', 'energy must be a number above 0'],
      ['threshold=1e300', 'threshold must be a number above 0'],
      ['params=abc', 'params must be a whole number'],
    ];
    for (const [q, words] of cases) {
      for (const headers of [{}, { 'HX-Request': 'true' }] as Record<string, string>[]) {
        const res = await viewer.get(`/whatif/pair/TR2653-P01?${q}`, headers);
        expect(res.status, q).toBe(400);
        const body = text(await res.text());
        expect(body, q).toContain(words);
        expect(body, q).toContain('Nothing was changed');
      }
    }
    const lot = await viewer.get('/whatif/lot/TR2653?wait=BOR-B2&waitH=-1');
    expect(lot.status).toBe(400);
    const waiting = await viewer.get('/whatif/waiting?air=BOR-B2&iso=12');
    expect(waiting.status).toBe(400);
    const exp = await viewer.get('/whatif/pair/TR2653-P01/export?air=BOR-B2&iso=12');
    expect(exp.status).toBe(400);
    expect(errors).toEqual([]);
  });

  it('an unknown pair or lot is a 404', async () => {
    expect((await viewer.get('/whatif/pair/NO-SUCH-PAIR')).status).toBe(404);
    expect((await viewer.get('/whatif/lot/NO-SUCH-LOT')).status).toBe(404);
    expect((await viewer.get('/whatif/pair/NO-SUCH-PAIR/export')).status).toBe(404);
  });

  it('the export is a JSON download of the scenario, its words and both sides', async () => {
    const res = await viewer.get('/whatif/lot/TR2653/export?wait=BOR-B2&waitH=2');
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toContain('application/json');
    expect(res.headers.get('content-disposition')).toBe('attachment; filename="whatif-TR2653.json"');
    const j = (await res.json()) as {
      scenario: { levers: { kind: string; locationId: string; durationS: number }[] };
      applied: string[];
      link: string;
      pairs: unknown[];
    };
    // 2 h in the form is 7200 s in the scenario (SI inside).
    expect(j.scenario.levers).toEqual([{ kind: 'wait', locationId: 'BOR-B2', durationS: 7200 }]);
    expect(j.applied).toEqual(['waits at BOR-B2: each wait 2 h']);
    expect(j.link).toBe('/whatif/lot/TR2653?wait=BOR-B2&waitH=2');
    expect(j.pairs).toHaveLength(12);
  });

  it('no what-if request changes anything stored', async () => {
    const before = dumpDatabase(db);
    for (const path of [
      '/whatif/pair/TR2652-P01?clean=CLN-RIN1&passes=2&d50=20',
      '/whatif/pair/TR2652-P01?tool=LACT-1%2FB&adders=0&params=typed',
      '/whatif/lot/TR2653?wait=BOR-B2&waitH=0.5&carrier=closed&isolation=50',
      '/whatif/lot/TR2653?air=BOR-B2&iso=3',
      '/whatif/waiting?energy=1.5&threshold=60',
      '/whatif/pair/TR2652-P01/export?energy=2',
      '/whatif/waiting/export?tool=LACT-1%2FB&adders=0.5',
    ])
      expect((await engineer.get(path)).status, path).toBe(200);
    const after = dumpDatabase(db);
    // The sessions table changes with every request of a signed-in account (last seen); nothing else may.
    const withoutSessions = (d: Record<string, unknown>) =>
      Object.fromEntries(Object.entries(d).filter(([k]) => k !== 'sessions'));
    expect(withoutSessions(after)).toEqual(withoutSessions(before));
  });

  it('saving a scenario needs an engineer, is audited, stores only the scenario, and opens, exports and compares', async () => {
    const form = {
      name: 'chamber B at a tenth',
      target: 'pair:TR2652-P01',
      query: 'tool=LACT-1%2FB&adders=0.1',
    };
    const before = dumpDatabase(db);
    const refused = await viewer.post('/whatif/scenarios', form);
    expect(refused.status).toBe(403);
    expect(dumpDatabase(db).scenarios).toEqual(before.scenarios);

    const res = await engineer.post('/whatif/scenarios', form);
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe(
      '/whatif/pair/TR2652-P01?tool=LACT-1%2FB&adders=0.1#saved-scenarios',
    );
    const after = dumpDatabase(db);
    // Only the scenario and its audit line are new (with SQLite's AUTOINCREMENT counters in
    // sqlite_sequence): no data, no call, no sign-off changed.
    const changed = Object.keys(after).filter(
      (k) =>
        k !== 'sessions' && k !== 'sqlite_sequence' && JSON.stringify(after[k]) !== JSON.stringify(before[k]),
    );
    expect(changed.sort(), JSON.stringify(changed)).toEqual(['audit_log', 'scenarios'].sort());
    const auditRows = db
      .prepare("SELECT actor, action, subject FROM audit_log WHERE action = 'save-scenario'")
      .all() as { actor: string; action: string; subject: string }[];
    expect(auditRows).toHaveLength(1);
    expect(auditRows[0]!.actor).toContain('enzo');

    // Listed on the pair's what-if page and the list, opened again at its address, exported as JSON.
    const page = await (await viewer.get('/whatif/pair/TR2652-P01')).text();
    expect(page).toContain('chamber B at a tenth');
    const list = await (await viewer.get('/whatif/scenarios')).text();
    const id = /data-scenario="(\d+)"/.exec(list)![1]!;
    const open = await viewer.get(`/whatif/scenarios/${id}`);
    expect(open.status).toBe(303);
    expect(open.headers.get('location')).toBe('/whatif/pair/TR2652-P01?tool=LACT-1%2FB&adders=0.1');
    const exported = (await (await viewer.get(`/whatif/scenarios/${id}/export`)).json()) as {
      format: string;
      scenario: { levers: unknown[] };
      createdBy: string;
    };
    expect(exported.format).toBe('voidcast-scenario/1');
    expect(exported.scenario.levers).toEqual([{ kind: 'adders', toolKey: 'LACT-1/B', factor: 0.1 }]);
    expect(exported.createdBy).toBe('Enzo Engineer [enzo]');

    // A second scenario, compared side by side with the first and with the figures as they are.
    await engineer.post('/whatif/scenarios', {
      ...form,
      name: 'one more rinse',
      query: 'clean=CLN-RIN1&passes=1',
    });
    const ids = [
      ...(await (await viewer.get('/whatif/scenarios')).text()).matchAll(/data-scenario="(\d+)"/g),
    ].map((m) => m[1]);
    const cmp = await viewer.get(`/whatif/scenarios/compare?${ids.map((i) => `id=${i}`).join('&')}`);
    expect(cmp.status).toBe(200);
    const t = text(await cmp.text());
    expect(t).toContain('Pair TR2652-P01');
    expect(t).toContain('as is');
    expect(t).toContain('chamber B at a tenth');
    expect(t).toContain('one more rinse');
    // The as-is column's call is the stored assessment's (re-clean); both scenarios bond.
    expect(t).toMatch(/call re-clean bond bond|call re-clean bond bond/);
  });

  it('a bad save is a 400 naming the field, and stores nothing', async () => {
    const before = dumpDatabase(db).scenarios;
    for (const [form, words] of [
      [{ name: '', target: 'pair:TR2652-P01', query: '' }, 'name is needed'],
      [{ name: 'x', target: 'pair:NO-SUCH', query: '' }, 'target names no pair'],
      [{ name: 'x', target: 'nonsense', query: '' }, 'target must be'],
      [
        { name: 'x', target: 'pair:TR2652-P01', query: 'wait=BOR-B1&waitH=-1' },
        'waitH must be a number from 0 h',
      ],
    ] as [Record<string, string>, string][]) {
      const res = await engineer.post('/whatif/scenarios', form);
      expect(res.status, words).toBe(400);
      expect(text(await res.text()), words).toContain(words);
    }
    expect(dumpDatabase(db).scenarios).toEqual(before);
  });
});
