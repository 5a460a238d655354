/**
 * The Parameters page (app.request): the list of sets with their states and counts, a set beside
 * the typed values it replaces, adopting (name + CSRF, no script) and reverting; the lot and pair
 * pages name the set their assessment used, and the memo of assessments follows an adoption.
 * Expected values: the invented set below and the typed values of test/helpers/pages-data.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { proposeParameterSet } from '../../src/engine/parameter-sets.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { readParameterSetEvents } from '../../src/store/parameter-sets.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, HOSTILE, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';
import { fittedAdders, fittedRemoval, fittedUnexplained } from '../helpers/parameter-values.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;
let setId: number;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
  const r = proposeParameterSet(
    db,
    {
      adders: {
        'BOND-1/ALN': fittedAdders('BOND-1', 'ALN', { countAbove: 0.9, countLow: 0.6, countHigh: 1.3 }),
      },
      removal: { 'PBC-MEG': fittedRemoval('PBC-MEG') },
      unexplainedVoids: { 'HB300-LOGIC': fittedUnexplained('HB300-LOGIC', { ratePerPair: 1.5 }) },
    },
    [`removal of RINSE: too few matched particles ${HOSTILE}`],
    `week 10 fits ${HOSTILE}`,
    'A. Fitter',
    Date.UTC(2025, 2, 3, 12, 0),
  );
  if (!r.ok) throw new Error(r.message);
  setId = r.set.id;
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

async function session(path: string): Promise<{ cookie: string; token: string; html: string }> {
  const res = await app.request(path);
  const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
  const html = await res.text();
  return { cookie, token: /name="_csrf" value="([^"]+)"/.exec(html)![1]!, html };
}

function post(path: string, s: { cookie: string }, form: Record<string, string>, htmx = false) {
  const body = new URLSearchParams(form).toString();
  return app.request(path, {
    method: 'POST',
    headers: {
      cookie: s.cookie,
      'content-type': 'application/x-www-form-urlencoded',
      'content-length': String(Buffer.byteLength(body)),
      origin: 'http://localhost',
      'sec-fetch-site': 'same-origin',
      ...(htmx ? { 'HX-Request': 'true' } : {}),
    },
    body,
  });
}

type Assessed = { parameters: { id: number | null }; inputsHash: string };
const assessed = async (path: string) => (await (await app.request(path)).json()) as Assessed;

const usedOn = async (path: string) =>
  /<span class="vc-params-used" data-parameter-set="([^"]+)">([\s\S]*?)<\/span>/.exec(
    await (await app.request(path)).text(),
  );

describe('the Parameters page', () => {
  it('is in the navigation and lists the set: version, label (escaped), state, who and when, counts', async () => {
    const res = await app.request('/parameters');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('<a href="/parameters" class="active" aria-current="page">Parameters</a>');
    expect(html).toContain('Assessments use the typed values (tools file, products): no set is adopted.');
    const row = new RegExp(`<tr data-set="${setId}" data-state="proposed">([\\s\\S]*?)</tr>`).exec(html)![1]!;
    expect(row).toContain('week 10 fits &lt;script&gt;');
    expect(row).not.toContain('<script>');
    expect(row).toContain('2025-03-03 12:00 UTC');
    expect(row).toContain('by A. Fitter');
    // counts: 1 adders, 1 removal, 0 void size, 1 unexplained voids
    expect([...row.matchAll(/<td class="num">(\d+)<\/td>/g)].map((m) => m[1])).toEqual([
      '1',
      '1',
      '1',
      '0',
      '1',
    ]);
  });

  it('shows a set: each value with its interval, method, data and n, the typed value beside it', async () => {
    const html = await (await app.request(`/parameters/${setId}`)).text();
    const entry = (kind: string, key: string) =>
      new RegExp(
        `<div class="vc-panel vc-param-entry" data-kind="${kind}" data-key="${key}">([\\s\\S]*?)</div>`,
      ).exec(html)![1]!;
    // The chamber ALN of BOND-1: fitted 0.9 per pass (0.6–1.3) beside its typed 0.6 (tools file).
    const adders = entry('adders', 'BOND-1/ALN');
    expect(adders).toMatch(
      /adders per pass at or above the reference size<\/td><td class="num">0\.9<\/td><td class="num">0\.6 – 1\.3<\/td><td class="num">0\.6<\/td>/,
    );
    expect(adders).toContain('method: hand-made for a test · n = 10');
    // PBC-MEG: d50 60 nm (50–70 nm) beside the typed 30 nm.
    expect(entry('removal', 'PBC-MEG')).toMatch(
      /half-efficiency size d50<\/td><td class="num">60 nm<\/td><td class="num">50 nm – 70 nm<\/td><td class="num">30 nm<\/td>/,
    );
    expect(entry('unexplainedVoids', 'HB300-LOGIC')).toContain('no typed counterpart');
    expect(html).toContain('removal of RINSE: too few matched particles &lt;script&gt;');
    expect(html).toContain('action="/parameters/');
    expect(html).toMatch(/<input type="hidden" name="_csrf" value="[^"]+"/);
  });

  it('answers an id that is not a number with 400 and an unknown set with 404', async () => {
    expect((await app.request('/parameters/abc')).status).toBe(400);
    expect((await app.request('/parameters/999')).status).toBe(404);
  });

  it('adopts a set without script; the pair and lot pages name it; reverting brings the typed values back', async () => {
    expect((await usedOn('/pairs/P-01'))![1]).toBe('typed');
    const before = await assessed('/api/pairs/P-01/assessment');
    const s = await session(`/parameters/${setId}`);
    // No name: refused, nothing stored (422 to a plain form, 200 to htmx so that it swaps).
    const refused = await post(`/parameters/${setId}/adopt`, s, { _csrf: s.token, name: '  ' });
    expect(refused.status).toBe(422);
    expect(await refused.text()).toContain('the name of the person adopting the set is required');
    expect((await post(`/parameters/${setId}/adopt`, s, { _csrf: s.token, name: '' }, true)).status).toBe(
      200,
    );
    expect(readParameterSetEvents(db)).toEqual([]);
    // Without the CSRF token: refused by the middleware.
    expect((await post(`/parameters/${setId}/adopt`, s, { name: 'B. Engineer' })).status).toBe(403);

    const ok = await post(`/parameters/${setId}/adopt`, s, { _csrf: s.token, name: 'B. Engineer' });
    expect(ok.status).toBe(303);
    expect(ok.headers.get('location')).toBe(`/parameters/${setId}`);
    const page = await (await app.request(`/parameters/${setId}`)).text();
    expect(page).toContain('data-state="adopted"');
    expect(page).toContain('by B. Engineer');
    for (const path of ['/pairs/P-01', '/lots/L-01']) {
      const used = (await usedOn(path))!;
      expect(used[1]).toBe(String(setId));
      expect(used[2]).toContain(`href="/parameters/${setId}"`);
      expect(used[2]).toContain('week 10 fits &lt;script&gt;');
    }
    const after = await assessed('/api/pairs/P-01/assessment');
    expect(after.parameters.id).toBe(setId);
    expect(after.inputsHash).not.toBe(before.inputsHash);

    const back = await post('/parameters/revert', s, { _csrf: s.token, name: 'C. Owner' });
    expect(back.status).toBe(303);
    expect(back.headers.get('location')).toBe('/parameters');
    expect((await usedOn('/pairs/P-01'))![1]).toBe('typed');
    expect((await usedOn('/lots/L-01'))![1]).toBe('typed');
    const again = await assessed('/api/pairs/P-01/assessment');
    expect(again.inputsHash).toBe(before.inputsHash);
    const list = await (await app.request('/parameters')).text();
    expect(list).toContain(`<tr data-set="${setId}" data-state="retired">`);
    expect(readParameterSetEvents(db).map((e) => [e.action, e.by])).toEqual([
      ['adopt', 'B. Engineer'],
      ['revert', 'C. Owner'],
    ]);
  });

  it('refuses a revert without a name', async () => {
    const s = await session(`/parameters/${setId}`);
    const r = await post('/parameters/revert', s, { _csrf: s.token, name: '' });
    expect(r.status).toBe(422);
    expect(await r.text()).toContain('the name of the person going back to the typed values is required');
  });
});
