/**
 * The Calibration page (app.request) on the demo line: the fitted values with intervals and n, the
 * comparison with the tail, the backtest plots and coverage, a pair's observed voids over its
 * predicted discs (and the htmx swap of that map), proposing the line's fits as one parameter set (name +
 * CSRF, no script; 303 to the set on the Parameters page; nothing adopted); and the bonded pair's
 * page with its inspection over the prediction. Expected values: the demo's own (docs/demo.md) and
 * the engine's calibration of it (test/integration/calibration-demo.test.ts checks those against the
 * generator's truth).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemo, readDemoManifest } from '../../src/cli/demo.ts';
import { readParameterSets } from '../../src/engine/parameter-sets.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';

let db: Db;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  await loadDemo(db);
  setSetting(db, AS_OF_SETTING, readDemoManifest().asOf);
  app = createApp({ db, dataDir: '/tmp', version: 'test', log: () => {} });
}, 120_000);
afterAll(() => db?.close());

async function session(path: string): Promise<{ cookie: string; token: string; html: string }> {
  const res = await app.request(path);
  const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
  const html = await res.text();
  return { cookie, token: /name="_csrf" value="([^"]+)"/.exec(html)![1]!, html };
}

function post(path: string, s: { cookie: string }, form: Record<string, string>) {
  const body = new URLSearchParams(form).toString();
  return app.request(path, {
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
}

describe('the Calibration page', () => {
  it('is in the navigation and shows the fitted energy, multiplier and unexplained rate with intervals and n', async () => {
    const res = await app.request('/calibration');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('<a href="/calibration" class="active" aria-current="page">Calibration</a>');
    expect(html).toContain('24 bonded pairs of lots TR2641, TR2642');
    const row = (q: string) => new RegExp(`<tr data-quantity="${q}">([\\s\\S]*?)</tr>`).exec(html)![1]!;
    expect(row('energy')).toMatch(
      /<td class="num">0\.5\d*<\/td><td class="num">0\.4\d*–0\.5\d*<\/td><td class="num">0\.8<\/td><td class="num">24 explained voids<\/td>/,
    );
    expect(row('multiplier')).toContain('24 small-gap, 0 thick-plate');
    expect(row('unexplained')).toMatch(/<td class="num">1\.\d+<\/td>/);
    expect(row('unexplained')).toContain('24 pairs');
    expect(html).toMatch(
      /The undetected tail predicts 0 per pair — outside the observed interval: they disagree/,
    );
  });

  it('shows the backtest: three plots with the 1:1 line, the coverage before and after, each lot left out', async () => {
    const html = await (await app.request('/calibration')).text();
    expect(html.match(/data-chart="backtest"/g)).toHaveLength(3);
    expect(html.match(/class="vc-one-to-one"/g)).toHaveLength(3);
    // 24 pairs before and 24 after in each plot
    expect(html.match(/class="vc-mark vc-backtest-after"/g)).toHaveLength(72);
    expect(html).toMatch(/<td>before calibration<\/td><td class="num">\d+ % \(\d+\/24\)<\/td>/);
    expect(html).toMatch(/<td>after \(left out\)<\/td><td class="num">\d+ % \(\d+\/24\)<\/td>/);
    expect(html).toMatch(/<tr data-lot="TR2641"><td>TR2641<\/td><td>TR2642<\/td><td class="num">40<\/td>/);
    expect(html).toMatch(/<tr data-lot="TR2642"><td>TR2642<\/td><td>TR2641<\/td><td class="num">44<\/td>/);
  });

  it('maps the pair with the most explained voids, observed over predicted, and each pair on request', async () => {
    const html = await (await app.request('/calibration')).text();
    expect(html).toContain('data-pair="TR2642-P02"'); // 4 explained (ties: the first)
    expect(html).toContain('data-chart="void-overlay"');
    expect(html.match(/data-match="explained"/g)).toHaveLength(4);
    const p07 = await (await app.request('/calibration?pair=TR2641-P07')).text();
    expect(p07).toMatch(
      /<figure class="vc-panel vc-void-overlay" id="calibration-map-panel" data-pair="TR2641-P07">/,
    );
    const missing = await app.request('/calibration?pair=NOPE');
    expect(missing.status).toBe(400);
    expect(await missing.text()).toContain(
      'There is no inspected pair &quot;NOPE&quot;; the map shows another.',
    );
  });

  it('swaps the map as a fragment for htmx and redirects a plain request to the page', async () => {
    const frag = await app.request('/calibration/map?pair=TR2642-P09', { headers: { 'HX-Request': 'true' } });
    expect(frag.status).toBe(200);
    const body = await frag.text();
    expect(body.startsWith('<figure')).toBe(true);
    expect(body).toContain('data-pair="TR2642-P09"');
    const plain = await app.request('/calibration/map?pair=TR2642-P09');
    expect(plain.status).toBe(303);
    expect(plain.headers.get('location')).toBe('/calibration?pair=TR2642-P09#calibration-map');
    expect((await app.request('/calibration/map?pair=X', { headers: { 'HX-Request': 'true' } })).status).toBe(
      404,
    );
  });

  it('proposes the fits as a set (name and CSRF, no script) and sends the person to adopt it on the Parameters page', async () => {
    const s = await session('/calibration');
    expect(s.html).toContain('action="/calibration/propose"');
    // without the form token: refused, nothing stored
    const noToken = await post('/calibration/propose', s, { name: 'Ada', label: 'x' });
    expect(noToken.status).toBe(403);
    // without a name: the page again with the reason, 422
    const noName = await post('/calibration/propose', s, { _csrf: s.token, name: ' ', label: 'voids' });
    expect(noName.status).toBe(422);
    expect(await noName.text()).toContain('Your name: the name of the person proposing the set is required.');
    expect(readParameterSets(db)).toEqual([]);
    const ok = await post('/calibration/propose', s, { _csrf: s.token, name: 'Ada', label: 'October voids' });
    expect(ok.status).toBe(303);
    const sets = readParameterSets(db);
    expect(sets).toHaveLength(1);
    expect(ok.headers.get('location')).toBe(`/parameters/${sets[0]!.id}`);
    expect(sets[0]!.state).toBe('proposed');
    expect(sets[0]!.createdBy).toBe('Ada');
    expect(Object.keys(sets[0]!.values.voidSize)).toEqual(['GALE-7']);
    expect(Object.keys(sets[0]!.values.unexplainedVoids)).toEqual(['GALE-7']);
    // the whole line's fits, as one set: the scans' adders and removal curves too (learn-propose.test.ts)
    expect(Object.keys(sets[0]!.values.adders).sort()).toEqual(['LACT-1/B', 'ZSTK-1']);
    expect(Object.keys(sets[0]!.values.removal).sort()).toEqual(['CLN-RIN1', 'CLN-RIN2']);
    const page = await (await app.request(`/parameters/${sets[0]!.id}`)).text();
    expect(page).toContain('October voids');
  });
});

describe('the pair page of a bonded pair', () => {
  it('shows its inspection over the predicted map; a pair waiting to bond has none', async () => {
    const html = await (await app.request('/pairs/TR2642-P09')).text();
    expect(html).toContain('<h2>Observed voids over the prediction</h2>');
    expect(html).toContain('id="pair-void-overlay"');
    expect(html).toContain('Inspection TR2642-P09-SAM (acoustic, after-anneal, voids ≥ 100 µm)');
    expect(html).toContain('Other inspections of this pair, not drawn: TR2642-P09-IR.');
    const waiting = await (await app.request('/pairs/TR2651-P01')).text();
    expect(waiting).not.toContain('Observed voids over the prediction');
  });
});
