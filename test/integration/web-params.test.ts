/**
 * Every page and API route under hostile parameters: empty, white space, NaN, Infinity, 1e300,
 * negative, out-of-range and impossible times, huge and unknown ids. None may answer 500; a bad
 * value answers 400 with the parameter and the rule (HTML for pages, JSON under /api), an id that
 * names nothing 404. Data: the small page line of test/helpers/pages-data.ts, through the real
 * import path; expected statuses follow the validation rules of src/web/params.ts and
 * src/engine/as-of.ts (hand-derived per value below).
 */

import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { Hono } from 'hono';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { ModelInputError } from '../../src/model/errors.ts';
import { type Db, migrate, openDatabase, openDataDir } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { CSRF_COOKIE, csrfSecret, tokenFor } from '../../src/web/csrf.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, importPageLine, type LineFiles, LOCATIONS_CSV, lineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;
const errors: string[] = [];

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({
    db,
    dataDir: files.dir,
    version: 'test',
    log: (l) => {
      if (l.startsWith('ERROR')) errors.push(l);
    },
  });
}, 60_000);
afterAll(() => {
  files?.cleanup();
  db?.close();
});

/** Values no parameter of the product accepts (each refused by a rule named beside it). */
const BAD_VALUES: [value: string, why: string][] = [
  ['NaN', 'not a number'],
  ['Infinity', 'not finite'],
  ['-Infinity', 'not finite'],
  ['1e300', 'not a whole number, a time or a plausible size'],
  ['-5', 'negative'],
  ['garbage', 'not a number'],
  ['99999999999999999999', 'beyond the safe integers and any time'],
  ['0x10', 'not decimal'],
  ['<script>alert(1)</script>', 'markup'],
  ['x'.repeat(5000), 'long'],
];
/** Treated as "not given" (forms send empty fields): the default applies. */
const ABSENT_VALUES = ['', ' ', '%20%09'];

const TIMES_REFUSED: [value: string, why: string][] = [
  ...BAD_VALUES,
  ['1969-12-31T23:59:59Z', 'before 1970'],
  ['2100-01-01T00:00Z', 'not before 2100'],
  ['4102444800000', '2100-01-01 in ms'],
  ['8640000000000001', 'beyond the last JavaScript date'],
  ['2026-10-18T19:00:00', 'no zone'],
  ['2026-02-30T00:00Z', 'no 30 February'],
  ['2026-10-18T24:00Z', 'no 24:00'],
  ['1.5', 'fractional ms'],
];

const enc = encodeURIComponent;
const fragment = { 'HX-Request': 'true' };

async function get(path: string, headers: Record<string, string> = {}) {
  const res = await app.request(path, { headers });
  return { status: res.status, type: res.headers.get('content-type') ?? '', body: await res.text() };
}

/** Every GET route with each parameter it reads; `{}` marks where a value goes. */
const QUERY_ROUTES: {
  path: string;
  param: string;
  headers?: Record<string, string>;
  kind: 'time' | 'word' | 'page' | 'number';
}[] = [
  { path: '/lots?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/lots/L-01?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/lots/L-01?pareto={}', param: 'pareto', kind: 'word' },
  { path: '/lots/L-01/pareto?by={}', param: 'by', headers: fragment, kind: 'word' },
  { path: '/lots/L-01/pareto?by=tool&asOf={}', param: 'asOf', headers: fragment, kind: 'time' },
  { path: '/pairs/P-01?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/pairs/P-01?pareto={}', param: 'pareto', kind: 'word' },
  { path: '/pairs/P-01?spectrum={}', param: 'spectrum', kind: 'word' },
  { path: '/pairs/P-01/pareto?by={}', param: 'by', headers: fragment, kind: 'word' },
  { path: '/pairs/P-01/pareto?by=clean&asOf={}', param: 'asOf', headers: fragment, kind: 'time' },
  { path: '/pairs/P-01/spectrum?mode={}', param: 'mode', headers: fragment, kind: 'word' },
  { path: '/pairs/P-01/spectrum?mode=per-bin&asOf={}', param: 'asOf', headers: fragment, kind: 'time' },
  { path: '/areas?window={}', param: 'window', kind: 'word' },
  { path: '/areas?channel={}', param: 'channel', kind: 'number' },
  { path: '/areas/trend?window={}', param: 'window', headers: fragment, kind: 'word' },
  { path: '/areas/trend?channel={}', param: 'channel', headers: fragment, kind: 'number' },
  { path: '/areas/fab-1/audit?from={}', param: 'from', kind: 'time' },
  { path: '/areas/fab-1/audit?to={}', param: 'to', kind: 'time' },
  { path: '/areas/fab-1/audit?occupancy={}', param: 'occupancy', kind: 'word' },
  { path: '/areas/fab-1/audit?edition={}', param: 'edition', kind: 'word' },
  { path: '/areas/fab-1/audit?limitsFrom={}', param: 'limitsFrom', kind: 'time' },
  { path: '/areas/fab-1/audit?limitsTo={}', param: 'limitsTo', kind: 'time' },
  { path: '/areas/fab-1/audit/report?from={}', param: 'from', kind: 'time' },
  { path: '/areas/fab-1/audit/report?occupancy={}', param: 'occupancy', kind: 'word' },
  { path: '/areas/fab-1/audit/tables/classification-summary?format={}', param: 'format', kind: 'word' },
  { path: '/areas/fab-1/audit/tables/classification-summary?to={}', param: 'to', kind: 'time' },
  { path: '/line?from={}', param: 'from', kind: 'time' },
  { path: '/line?to={}', param: 'to', kind: 'time' },
  { path: '/line/tables/pareto-tool?format={}', param: 'format', kind: 'word' },
  { path: '/imports/history/1?page={}', param: 'page', kind: 'page' },
  { path: '/imports/history/1/issues?page={}', param: 'page', headers: fragment, kind: 'page' },
  { path: '/api/lots/L-01/assessment?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/api/lots/L-01/assessment?detail={}', param: 'detail', kind: 'word' },
  { path: '/api/pairs/P-01/assessment?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/whatif/pair/P-01?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/whatif/pair/P-01?energy={}', param: 'energy', kind: 'number' },
  { path: '/whatif/pair/P-01?energy={}', param: 'energy', headers: fragment, kind: 'number' },
  { path: '/whatif/pair/P-01?threshold={}', param: 'threshold', kind: 'number' },
  { path: '/whatif/pair/P-01?pareto={}', param: 'pareto', kind: 'word' },
  { path: '/whatif/pair/P-01/export?energy={}', param: 'energy', kind: 'number' },
  { path: '/whatif/pair/P-01/solve?solver={}', param: 'solver', kind: 'word' },
  { path: '/whatif/pair/P-01/solve?solver={}', param: 'solver', headers: fragment, kind: 'word' },
  { path: '/whatif/lot/L-01?energy={}', param: 'energy', kind: 'number' },
  { path: '/whatif/lot/L-01?asOf={}', param: 'asOf', kind: 'time' },
  { path: '/whatif/waiting?energy={}', param: 'energy', kind: 'number' },
  { path: '/whatif/scenarios/compare?id={}', param: 'id', kind: 'number' },
];

describe('query parameters: a bad value is a 400 with its reason, never a 500', () => {
  for (const r of QUERY_ROUTES) {
    it(`${r.path.replace('{}', '…')}`, async () => {
      const refused = r.kind === 'time' ? TIMES_REFUSED : BAD_VALUES;
      for (const [value, why] of refused) {
        const res = await get(r.path.replace('{}', enc(value)), r.headers);
        expect(res.status, `${r.param}=${value.slice(0, 40)} (${why})`).toBe(400);
        if (r.path.startsWith('/api/')) {
          expect(res.type).toContain('application/json');
          expect(JSON.parse(res.body).detail).toContain(r.param);
        } else {
          expect(res.type).toContain('text/html');
          expect(res.body).toContain(`${r.param} `);
          expect(res.body).not.toContain('<script>alert(1)</script>'); // shown escaped
        }
      }
      for (const value of ABSENT_VALUES) {
        const res = await get(r.path.replace('{}', value), r.headers);
        expect(res.status, `${r.param}="${value}" counts as not given`).toBe(200);
      }
    });
  }

  it('valid values are accepted (the checks refuse only what they should)', async () => {
    for (const path of [
      `/lots?asOf=${AS_OF_MS}`,
      `/lots/L-01?asOf=${enc(new Date(AS_OF_MS).toISOString())}&pareto=clean`,
      `/pairs/P-01?asOf=${enc('2025-03-03T21:00+01:00')}&pareto=size&spectrum=cumulative`,
      '/lots?asOf=0', // 1970-01-01T00:00Z: the first accepted time
      `/lots?asOf=${Date.UTC(2100, 0, 1) - 1}`, // the last accepted time
      '/areas?window=all&channel=0.5',
      '/areas?channel=7', // a size no location reports: the default channel is shown
      '/imports/history/1?page=3',
      '/areas/fab-1/audit?from=2025-03-03T00:00Z&to=2025-03-04T00:00Z&occupancy=any&edition=1999',
      '/areas/me-1/audit/tables/classification-sizes?format=xls-csv&from=2025-03-01T00:00Z',
      '/search?q=bay',
      `/api/lots/L-01/assessment?detail=full&asOf=${AS_OF_MS}`,
      '/whatif/pair/P-01?energy=0.5&threshold=80&params=typed',
      '/whatif/lot/L-01?pareto=clean',
      '/whatif/pair/P-01/sensitivity', // a clean this line cannot vary is said in words, not a 422
      '/whatif/lot/L-01/sensitivity',
      '/whatif/waiting',
    ]) {
      const res = await get(path);
      expect(res.status, path).toBe(200);
    }
  });
});

describe('routes that read no parameter of these names', () => {
  it('answer without a server error whatever the query holds', async () => {
    for (const path of ['/', '/tools', '/calculators', '/imports', '/healthz', '/api/lots', '/search'])
      for (const [value] of BAD_VALUES) {
        const res = await get(`${path}?asOf=${enc(value)}&page=${enc(value)}&zz=${enc(value)}`);
        expect(res.status, `${path} with ${value.slice(0, 30)}`).toBeLessThan(500);
      }
  });
});

describe('ids in the path: unknown or impossible ids are 404, never a 500', () => {
  it('pages and API routes', async () => {
    const cases: [string, number][] = [
      ['/lots/NO-SUCH-LOT', 404],
      ['/lots/%00', 404],
      [`/lots/${'9'.repeat(400)}`, 404],
      ['/pairs/NO-SUCH-PAIR', 404],
      ['/pairs/%20', 404],
      ['/pairs/NO-SUCH-PAIR/pareto?by=tool', 404],
      ['/pairs/NO-SUCH-PAIR/spectrum?mode=per-bin', 404],
      ['/lots/NO-SUCH-LOT/pareto?by=tool', 404],
      ['/imports/history/0', 404],
      ['/imports/history/-1', 404],
      ['/imports/history/99999999999999999999', 404],
      ['/imports/history/1e3', 404],
      ['/imports/history/NaN/issues', 404],
      ['/imports/jobs/nope', 404],
      ['/imports/jobs/nope/files/0/issues', 404],
      ['/calculators/nope', 404],
      ['/calculators/nope/result', 404],
      ['/areas?location=NO-SUCH-LOCATION', 404],
      ['/areas/NO-SUCH-AREA/audit', 404],
      ['/areas/NO-SUCH-AREA/audit/report', 404],
      ['/areas/fab-1/audit/tables/no-such-table', 404],
      ['/line/tables/no-such-table', 404],
      ['/api/lots/NO-SUCH-LOT/assessment', 404],
      ['/api/pairs/NO-SUCH-PAIR/assessment', 404],
      ['/whatif/pair/NO-SUCH-PAIR', 404],
      ['/whatif/pair/NO-SUCH-PAIR/solve?solver=extra-passes', 404],
      ['/whatif/pair/NO-SUCH-PAIR/sensitivity', 404],
      ['/whatif/lot/NO-SUCH-LOT', 404],
      ['/whatif/lot/NO-SUCH-LOT/export', 404],
      ['/whatif/scenarios/999999', 404],
      ['/whatif/scenarios/abc', 404],
      ['/whatif/scenarios/1e3/export', 404],
    ];
    for (const [path, status] of cases) {
      const headers = /pareto|spectrum|issues/.test(path) ? fragment : {};
      const res = await get(path, headers);
      expect(res.status, path).toBe(status);
    }
  });
});

describe('calculator inputs: a bad value is shown in its card, never a 500', () => {
  it('the page without script answers 400 with the field named; the htmx swap 200 (htmx 2 swaps no 4xx)', async () => {
    for (const value of [...BAD_VALUES.map(([v]) => v), '-1']) {
      const page = await get(`/calculators/void-radius?size=${enc(value)}`);
      expect(page.status, value.slice(0, 40)).toBe(400);
      expect(page.body).toContain('Particle diameter d');
      const swap = await get(`/calculators/void-radius/result?size=${enc(value)}`, fragment);
      expect(swap.status).toBe(200);
      expect(swap.body).toContain('vc-error');
    }
  });
});

describe('form and JSON bodies', () => {
  /** The cookie and the form token the CSRF middleware hands a page (src/web/csrf.ts). */
  async function csrf(): Promise<{ cookie: string; token: string; formToken: string }> {
    const res = await app.request('/pairs/P-01');
    const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
    const formToken = /name="_csrf" value="([^"]+)"/.exec(await res.text())![1]!;
    return { cookie, formToken, token: tokenFor(csrfSecret(db), cookie.slice(CSRF_COOKIE.length + 1)) };
  }

  it('POST /pairs/:id/signoff with a hostile or forged assessment reference is refused, nothing stored', async () => {
    const s = await csrf();
    // The assessment time is the server's (src/web/assessment-ref.ts): a client-made time, a
    // reference signed for another pair, or garbage re-renders the form (422) with the reason.
    const forged = [...TIMES_REFUSED.map(([v]) => v), `${AS_OF_MS}.${'0'.repeat(64)}`, '1e300.abc'];
    for (const value of forged) {
      const body = new URLSearchParams({
        _csrf: s.formToken,
        inputsHash: '0'.repeat(64),
        assessmentRef: value,
        name: 'A. Engineer',
        role: 'bonding process engineer',
      }).toString();
      const res = await app.request('/pairs/P-01/signoff', {
        method: 'POST',
        headers: {
          cookie: s.cookie,
          'content-type': 'application/x-www-form-urlencoded',
          'content-length': String(Buffer.byteLength(body)),
          origin: 'http://localhost',
          'sec-fetch-site': 'same-origin',
        },
        body,
      });
      expect(res.status, value.slice(0, 40)).toBe(422);
    }
    expect(db.prepare('SELECT COUNT(*) AS n FROM dispositions').get()).toEqual({ n: 0 });
  });

  it('POST /api/pairs/:id/signoff with hostile JSON is a 400 (or 404 for an unknown pair)', async () => {
    const s = await csrf();
    const post = (path: string, body: string) =>
      app.request(path, {
        method: 'POST',
        headers: {
          'content-type': 'application/json',
          cookie: s.cookie,
          'X-CSRF-Token': s.token,
          origin: 'http://localhost',
        },
        body,
      });
    const hash = '0'.repeat(64);
    const assessed = (await (await app.request(`/api/pairs/P-01/assessment?asOf=${AS_OF_MS}`)).json()) as {
      assessmentRef: string;
    };
    const ref = assessed.assessmentRef;
    const bodies = [
      'not json',
      'null',
      '5',
      '[]',
      JSON.stringify({ inputsHash: hash, asOfMs: 1e300, signedBy: 'A' }),
      JSON.stringify({ inputsHash: hash, assessmentRef: `${1e300}.abc`, signedBy: 'A' }),
      JSON.stringify({ inputsHash: hash, assessmentRef: -5, signedBy: 'A' }),
      JSON.stringify({ inputsHash: hash, assessmentRef: `${AS_OF_MS}.${'0'.repeat(64)}`, signedBy: 'A' }),
      JSON.stringify({ inputsHash: hash, assessmentRef: ref, signedBy: { name: 'A' } }),
      JSON.stringify({ inputsHash: 'short', assessmentRef: ref, signedBy: 'A' }),
      JSON.stringify({ inputsHash: hash, assessmentRef: ref, signedBy: 'A', call: 'launch' }),
    ];
    for (const b of bodies) {
      const res = await post('/api/pairs/P-01/signoff', b);
      expect(res.status, b.slice(0, 60)).toBe(400);
      expect(res.headers.get('content-type')).toContain('application/json');
    }
    const unknown = await post(
      '/api/pairs/NO-SUCH-PAIR/signoff',
      JSON.stringify({ inputsHash: hash, assessmentRef: ref, signedBy: 'A' }),
    );
    expect(unknown.status).toBe(404);
  });
});

describe("an import job's parameters", () => {
  it('file and page of /imports/jobs/:id are checked; an impossible file number is a 404', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'voidcast-web-params-'));
    const fileDb = openDataDir(dir);
    try {
      const jobApp = createApp({ db: fileDb, dataDir: dir, version: 'test', log: () => {} });
      const page = await jobApp.request('/imports');
      const cookie = (page.headers.get('set-cookie') ?? '').split(';')[0]!;
      const token = /name="_csrf" value="([^"]+)"/.exec(await page.text())![1]!;
      const fd = new FormData();
      fd.append('_csrf', token);
      fd.append('kind', 'locations');
      fd.append('files', new File([LOCATIONS_CSV], 'locations.csv', { type: 'text/csv' }));
      const res = await jobApp.request('/imports', {
        method: 'POST',
        body: fd,
        headers: { cookie, origin: 'http://localhost' },
      });
      const where =
        res.headers.get('location') ?? (await res.text()).match(/\/imports\/jobs\/[0-9a-f-]+/)?.[0];
      const job = /\/imports\/jobs\/[0-9a-f-]+/.exec(where ?? '')![0];
      for (const [value] of BAD_VALUES) {
        const q = enc(value);
        expect(
          (await jobApp.request(`${job}?file=${q}&page=1`, { headers: { cookie } })).status,
          value.slice(0, 40),
        ).toBe(400);
        expect((await jobApp.request(`${job}?file=0&page=${q}`, { headers: { cookie } })).status).toBe(400);
        expect(
          (await jobApp.request(`${job}/files/${q}/issues`, { headers: { cookie, ...fragment } })).status,
        ).toBe(404);
      }
      expect((await jobApp.request(`${job}?file=1&page=1`, { headers: { cookie } })).status).toBe(400); // one file: index 0 only
      expect((await jobApp.request(`${job}?file=0&page=1`, { headers: { cookie } })).status).toBe(200);
    } finally {
      fileDb.close();
      rmSync(dir, { recursive: true, force: true });
    }
  });
});

describe('a model range error that reaches a route', () => {
  it('is a 422 in plain words, never a 500 and never the model function name', async () => {
    const throwing = {
      register(a: Hono) {
        const fail = () => {
          throw new ModelInputError(
            'poissonYield',
            'expectedDefects',
            'defects per die',
            '≤ 1000000 defects per die',
            2e6,
          );
        };
        a.get('/test-model-error', fail);
        a.get('/api/test-model-error', fail);
      },
    };
    const local = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} }, [throwing]);
    const page = await local.request('/test-model-error');
    expect(page.status).toBe(422);
    const html = await page.text();
    expect(html).toContain('expected defects = 2000000 defects per die is out of range');
    expect(html).not.toContain('poissonYield');
    const api = await local.request('/api/test-model-error');
    expect(api.status).toBe(422);
    expect(((await api.json()) as { detail: string }).detail).not.toContain('expectedDefects');
  });
});

describe('the server log', () => {
  it('recorded no internal error for any of the requests above', () => {
    expect(errors).toEqual([]);
  });
});
