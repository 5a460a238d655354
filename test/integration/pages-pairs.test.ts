import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { readDispositions } from '../../src/store/dispositions.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, lineFiles());
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

/** A session: the cookie and form token the CSRF middleware hands a page (src/web/csrf.ts). */
async function session(
  path: string,
): Promise<{ cookie: string; token: string; hash: string; asOf: string; ref: string; html: string }> {
  const res = await app.request(path);
  const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
  const html = await res.text();
  const field = (name: string) => new RegExp(`name="${name}" value="([^"]+)"`).exec(html)![1]!;
  return {
    cookie,
    token: field('_csrf'),
    hash: field('inputsHash'),
    asOf: field('asOfMs'),
    ref: field('assessmentRef'),
    html,
  };
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

describe('GET /pairs/:id', () => {
  it('shows the call with its reasons and, for a re-clean, the caution beside it', async () => {
    const res = await app.request('/pairs/P-02');
    expect(res.status).toBe(200);
    const html = await res.text();
    const box = /<div class="vc-call-box" data-call="re-clean">([\s\S]*?)<\/div>/.exec(html)![1]!;
    expect(box).toContain('vc-reasons');
    expect(box).toContain('authorised recipes');
    expect(box).toContain('qualified people');
    expect(box).toContain('safety data sheets');
  });

  it('draws both wafer maps (the top mirrored, said in words), the void map, the spectrum and the Pareto', async () => {
    const html = await (await app.request('/pairs/P-02')).text();
    const svg = (id: string) => new RegExp(`<svg[^>]*id="${id}"[\\s\\S]*?</svg>`).exec(html)?.[0] ?? '';
    expect(svg('map-bottom').match(/class="vc-mark vc-particle"/g)).toHaveLength(25);
    expect(svg('map-top').match(/class="vc-mark vc-particle"/g)).toHaveLength(30);
    expect(svg('map-top')).toContain('Seen from the bond interface: mirrored (x → −x)');
    expect(svg('map-bottom')).not.toContain('mirrored');
    expect(svg('void-map')).toContain('class="vc-mark vc-void"');
    expect(svg('void-map')).toContain('vc-die vc-die-killed');
    expect(svg('spectrum-chart')).toContain('class="vc-mark vc-layer"');
    expect(html).toContain('id="pareto-panel" data-by="tool"');
    expect(html).toContain('Modelled re-clean: Pre-bond megasonic clean');
    expect(html.match(/<table class="vc-table vc-table-compact vc-before-after">/g)).toHaveLength(1);
  });

  it('colours the void map’s dies by kill probability from all sources, adding up to the die-loss figure', async () => {
    const html = await (await app.request('/pairs/P-02')).text();
    const map = /<svg[^>]*id="void-map"[\s\S]*?<\/svg>/.exec(html)![0];
    const a = (await (await app.request(`/api/pairs/P-02/assessment?asOf=${AS_OF_MS}`)).json()) as {
      figures: { dieKillsNB: { value: number }; dieKillsPoisson: { value: number } };
      voidMap: { dieGrid: { yieldModel: string; dies: unknown[] } };
    };
    // Every die's probability is in the map: on its own element (reached or killed dies) or in the
    // data-p-kill list of its colour class's path (the other dies, one path per class).
    const own = [...map.matchAll(/class="vc-die[ "][^>]*data-p-kill="([\d.]+)"/g)].map((m) => Number(m[1]));
    const pooled = [...map.matchAll(/class="vc-die-fill"[^>]*data-p-kill="([\d. ]+)"/g)].flatMap((m) =>
      m[1]!.split(' ').map(Number),
    );
    const p = [...own, ...pooled];
    expect(p).toHaveLength(a.voidMap.dieGrid.dies.length);
    expect(map).toContain(`data-dies="${a.voidMap.dieGrid.dies.length}"`);
    // written with 4 decimals: the sum is within 0.00005 per die of the figure
    const loss =
      a.voidMap.dieGrid.yieldModel === 'poisson'
        ? a.figures.dieKillsPoisson.value
        : a.figures.dieKillsNB.value;
    expect(Math.abs(p.reduce((s, x) => s + x, 0) - loss)).toBeLessThan(5e-5 * p.length);
    // the dies differ (the detected particles' dies stand out), and the colour follows the probability
    expect(new Set(p).size).toBeGreaterThan(1);
    const fills = [...map.matchAll(/class="vc-die-fill" data-colour="([^"]+)"/g)].map((m) => m[1]);
    const ownFills = [...map.matchAll(/class="vc-die[ "][^>]*><rect [^>]*fill="([^"]+)"/g)].map((m) => m[1]);
    expect(new Set([...fills, ...ownFills]).size).toBeGreaterThan(1);
    expect(map).toContain('Die kill probability, all sources');
    expect(map).toContain('reached by a detected void');
    expect(map).toMatch(/Sum over the dies: [\d.,]+/);
  });

  it('gives the intervals of counts (voids, killed dies) in whole numbers, as is and after a re-clean', async () => {
    const html = await (await app.request('/pairs/P-02')).text();
    // Figure tiles: "expectation (low–high)"; the count tiles are the voids and the two die-loss forms.
    const subs = [
      ...html.matchAll(
        /<span class="vc-tile-label">([^<]*)<\/span>\s*<span class="vc-small">([^<]*)<\/span>/g,
      ),
    ];
    const counts = subs.filter((m) => /voids|die loss/.test(m[1]!)).map((m) => m[2]!);
    expect(counts).toHaveLength(3);
    for (const c of counts) expect(c).toMatch(/\((\d+)–(\d+)\)/);
    const table = /<table class="vc-table vc-table-compact vc-before-after">([\s\S]*?)<\/table>/.exec(
      html,
    )![1]!;
    const rows = [
      ...table.matchAll(/<tr><td>(expected reportable voids|die loss[^<]*)<\/td>([\s\S]*?)<\/tr>/g),
    ];
    expect(rows.length).toBe(3);
    for (const r of rows) for (const m of r[2]!.matchAll(/\(([^)]*)\)/g)) expect(m[1]).toMatch(/^\d+–\d+$/);
  });

  it('escapes names from files (tool and location names) everywhere on the page', async () => {
    const html = await (await app.request('/pairs/P-02')).text();
    expect(html).not.toContain('<script>alert(1)</script>');
    expect(html).toContain('&lt;script&gt;alert(1)&lt;/script&gt;');
  });

  it('shows no caution box for a bond call, and 404 for an unknown pair', async () => {
    const html = await (await app.request('/pairs/P-01')).text();
    const box = /<div class="vc-call-box" data-call="bond">([\s\S]*?)<\/div>/.exec(html)![1]!;
    expect(box).not.toContain('vc-reclean-caution');
    expect(html).not.toContain('Modelled re-clean');
    expect((await app.request('/pairs/P-99')).status).toBe(404);
  });

  it('swaps the spectrum mode and the Pareto grouping as fragments', async () => {
    const sp = await app.request(`/pairs/P-02/spectrum?mode=cumulative&asOf=${AS_OF_MS}`, {
      headers: { 'HX-Request': 'true' },
    });
    const h = await sp.text();
    expect(h.startsWith('<div class="vc-spectrum" id="spectrum" data-mode="cumulative">')).toBe(true);
    expect(h).toContain('particles per pair ≥ d');
    const pa = await app.request(`/pairs/P-02/pareto?by=wait&asOf=${AS_OF_MS}`, {
      headers: { 'HX-Request': 'true' },
    });
    expect(
      (await pa.text()).startsWith('<section class="vc-pareto-panel" id="pareto-panel" data-by="wait">'),
    ).toBe(true);
  });
});

describe('POST /pairs/:id/signoff', () => {
  it('refuses a sign-off without a name, in place for htmx (200 with the error)', async () => {
    const s = await session('/pairs/P-01');
    const res = await post(
      '/pairs/P-01/signoff',
      s,
      {
        _csrf: s.token,
        inputsHash: s.hash,
        assessmentRef: s.ref,
        name: ' ',
        role: 'bonding process engineer',
      },
      true,
    );
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<section class="vc-signoff vc-panel" id="signoff">')).toBe(true);
    expect(html).toContain('Name: the name of the person signing is required.');
    expect(readDispositions(db, 'pair', 'P-01')).toHaveLength(0);
  });

  it('refuses when the inputs changed since the page was drawn (409 without script)', async () => {
    const s = await session('/pairs/P-01');
    const stale = s.hash.replace(/^./, (c) => (c === '0' ? '1' : '0'));
    const res = await post('/pairs/P-01/signoff', s, {
      _csrf: s.token,
      inputsHash: stale,
      assessmentRef: s.ref,
      name: 'A. Engineer',
      role: 'bonding process engineer',
    });
    expect(res.status).toBe(409);
    const html = await res.text();
    expect(html).toContain(
      'The inputs&#39; hash given is not that of the assessment of the current data as of',
    );
    expect(readDispositions(db, 'pair', 'P-01')).toHaveLength(0);
  });

  it('refuses an overridden call without a comment, then stores a signed call with name and role', async () => {
    const s = await session('/pairs/P-01');
    const base = { _csrf: s.token, inputsHash: s.hash, assessmentRef: s.ref, role: 'line or yield owner' };
    const refused = await post('/pairs/P-01/signoff', s, { ...base, name: 'B. Owner', call: 'hold' }, true);
    expect(await refused.text()).toContain('needs a comment');
    const ok = await post(
      '/pairs/P-01/signoff',
      s,
      { ...base, name: 'B. <Owner> & "Co"', call: 'bond', comment: '' },
      true,
    );
    expect(ok.status).toBe(200);
    const html = await ok.text();
    expect(html).toContain('class="vc-success"');
    expect(html).toContain('B. &lt;Owner&gt; &amp; &quot;Co&quot; (line or yield owner)');
    const stored = readDispositions(db, 'pair', 'P-01');
    expect(stored).toHaveLength(1);
    expect(stored[0]).toMatchObject({
      call: 'bond',
      proposedCall: 'bond',
      signedBy: 'B. <Owner> & "Co" (line or yield owner)',
      inputsHash: s.hash,
    });
  });

  it('redirects a plain (no-script) sign-off back to the pair at the signed assessment time', async () => {
    const s = await session('/pairs/P-04');
    const res = await post('/pairs/P-04/signoff', s, {
      _csrf: s.token,
      inputsHash: s.hash,
      assessmentRef: s.ref,
      name: 'C. Engineer',
      role: 'bonding process engineer',
    });
    expect(res.status).toBe(303);
    expect(res.headers.get('location')).toBe(`/pairs/P-04?asOf=${s.asOf}#signoff`);
    expect(readDispositions(db, 'pair', 'P-04')).toHaveLength(1);
  });

  it('is refused without the form token (CSRF)', async () => {
    const s = await session('/pairs/P-01');
    const res = await post('/pairs/P-01/signoff', s, {
      inputsHash: s.hash,
      assessmentRef: s.ref,
      name: 'X',
      role: 'line or yield owner',
    });
    expect(res.status).toBe(403);
  });
});

describe('the assessment a sign-off refers to is the server’s', () => {
  // Issue 14: a client-sent assessment time such as 1e300 used to be stored. The form now returns the
  // server's signed reference (src/web/assessment-ref.ts); a time of the client's own is never used.
  it('refuses a form whose assessment time is the client’s own (1e300, no reference) and stores nothing', async () => {
    const s = await session('/pairs/P-02');
    const res = await post('/pairs/P-02/signoff', s, {
      _csrf: s.token,
      inputsHash: s.hash,
      asOfMs: '1e300',
      name: 'D. Engineer',
      role: 'bonding process engineer',
    });
    expect(res.status).toBe(422);
    expect(await res.text()).toContain('does not carry a reference to an assessment this server showed');
    expect(readDispositions(db, 'pair', 'P-02')).toHaveLength(0);
  });

  it('refuses a reference with a time changed by the client, or one made for another pair', async () => {
    const s = await session('/pairs/P-02');
    const other = await session('/pairs/P-01');
    const [, mac] = s.ref.split('.');
    for (const assessmentRef of [`${Number(s.asOf) + 60_000}.${mac}`, other.ref, '1e300.x']) {
      const res = await post('/pairs/P-02/signoff', s, {
        _csrf: s.token,
        inputsHash: s.hash,
        assessmentRef,
        name: 'D. Engineer',
        role: 'bonding process engineer',
      });
      expect(res.status).toBe(422);
    }
    expect(readDispositions(db, 'pair', 'P-02')).toHaveLength(0);
  });

  it('stores the assessment time the server put in the page, whatever asOfMs the form carries', async () => {
    const s = await session('/pairs/P-02');
    const res = await post('/pairs/P-02/signoff', s, {
      _csrf: s.token,
      inputsHash: s.hash,
      assessmentRef: s.ref,
      asOfMs: '1e300',
      name: 'D. Engineer',
      role: 'bonding process engineer',
    });
    expect(res.status).toBe(303);
    const stored = readDispositions(db, 'pair', 'P-02');
    expect(stored).toHaveLength(1);
    // AS_OF_MS: the installation clock this test set (pages-data.ts), which the page assessed at.
    expect(stored[0]!.assessedAtMs).toBe(AS_OF_MS);
    expect(String(AS_OF_MS)).toBe(s.asOf);
  });
});
