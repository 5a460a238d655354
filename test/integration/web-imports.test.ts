/**
 * The Imports page through app.request(): upload → background job → validation report, with the
 * real ingest pipeline (importFile) on a real SQLite file, so the import runs in its worker thread
 * as it does in the server.
 */
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase, openDataDir } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';

const ORIGIN = 'http://localhost';

// A small locations file (columns of the locations kind: location_id, parent_id, level, name, environment, iso_class,
// floor_area_m2). Names are free text and carry markup, quotes and ampersands on purpose.
const HOSTILE = `<script>alert(1)</script> "Bay" & Co's <b>bold</b>`;
const GOOD = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2',
  'site-a,,site,Site A,open-room,,',
  `bay-1,site-a,area,"${HOSTILE.replaceAll('"', '""')}",open-room,5,52`,
  'me-1,bay-1,bay,Bonder mini-environment,mini-environment,2,',
  '',
].join('\n');
// Line 3: an id with characters ids may not hold; line 4: ISO class 12 (ISO 14644-1 classes run 1 to 9).
const BAD = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2',
  'site-b,,site,Site B,open-room,,',
  '<img src=x onerror=alert(2)>,site-b,area,Bad id,open-room,5,52',
  'bay-9,site-b,area,Bad class,open-room,12,52',
  '',
].join('\n');

interface Harness {
  app: ReturnType<typeof createApp>;
  db: Db;
  dir: string;
  lines: string[];
  cookie: string;
  token: string;
}

const harnesses: Harness[] = [];
afterEach(() => {
  for (const h of harnesses.splice(0)) {
    h.db.close();
    rmSync(h.dir, { recursive: true, force: true });
  }
});

async function harness(opts: { memory?: boolean; limit?: string } = {}): Promise<Harness> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-web-imports-'));
  let db: Db;
  if (opts.memory) {
    db = openDatabase(':memory:');
    migrate(db);
  } else db = openDataDir(dir);
  if (opts.limit) setSetting(db, 'web.upload_limit', opts.limit);
  const lines: string[] = [];
  const app = createApp({ db, dataDir: dir, version: '9.9.9', log: (l) => lines.push(l) });
  const res = await app.request('/imports');
  expect(res.status).toBe(200);
  const cookie = (res.headers.get('set-cookie') ?? '').split(';')[0]!;
  const token = /name="_csrf" value="([^"]+)"/.exec(await res.text())?.[1] ?? '';
  expect(cookie).toMatch(/^voidcast_csrf=/);
  expect(token).not.toBe('');
  const h = { app, db, dir, lines, cookie, token };
  harnesses.push(h);
  return h;
}

function form(
  fields: Record<string, string>,
  files: { name: string; content: string | Uint8Array }[],
): FormData {
  const fd = new FormData();
  for (const [k, v] of Object.entries(fields)) fd.append(k, v);
  for (const f of files) fd.append('files', new File([f.content], f.name, { type: 'text/csv' }));
  return fd;
}

function post(h: Harness, body: FormData, headers: Record<string, string> = {}) {
  return h.app.request('/imports', {
    method: 'POST',
    body,
    headers: { cookie: h.cookie, origin: ORIGIN, ...headers },
  });
}

/** Polls the job partial (as htmx does) until the report is there. */
async function finished(h: Harness, url: string): Promise<string> {
  const deadline = Date.now() + 30_000;
  for (;;) {
    const res = await h.app.request(url, { headers: { cookie: h.cookie, 'HX-Request': 'true' } });
    expect(res.status).toBe(200);
    const html = await res.text();
    if (html.includes('vc-job-done')) return html;
    if (Date.now() > deadline) throw new Error(`job did not finish: ${html}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

const count = (db: Db, table: string) =>
  (db.prepare(`SELECT COUNT(*) AS n FROM ${table}`).get() as { n: number }).n;

describe('the Imports page', () => {
  it('shows the form (all eight kinds, the checkbox, the CSRF field first) and an empty history', async () => {
    const h = await harness();
    const html = await (await h.app.request('/imports', { headers: { cookie: h.cookie } })).text();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    expect(html).toMatch(/<form[^>]+method="post"[^>]+action="\/imports"[^>]+enctype="multipart\/form-data"/);
    expect(html).toMatch(/<form[^>]*>\s*<input type="hidden" name="_csrf"/);
    for (const k of [
      'locations',
      'counter-samples',
      'scans',
      'ledger',
      'tools',
      'products',
      'pairs',
      'void-inspections',
    ])
      expect(html).toContain(`<option value="${k}"`);
    expect(html).toContain('name="acceptValidRows"');
    expect(html).toContain('Import the');
    expect(html).toContain('type="file" name="files" multiple');
    expect(html).toContain('Up to 512 MiB per upload');
    expect(html).toContain('No files have been imported');
  });

  it('imports a good file: 303 to the job, progress, then the report, and the history lists it', async () => {
    const h = await harness();
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'locations.csv', content: GOOD }]),
    );
    expect(res.status).toBe(303);
    const url = res.headers.get('location')!;
    expect(url).toMatch(/^\/imports\/jobs\/[0-9a-f-]{36}$/);
    const html = await finished(h, url);
    expect(html).toContain('Imported');
    expect(html).toMatch(/Rows read<\/dt>\s*<dd class="num">3</);
    expect(html).toMatch(/Stored<\/dt>\s*<dd class="num">3</);
    // The finished job refreshes the history out of band.
    expect(html).toContain('id="import-history" class="vc-history" hx-swap-oob="true"');
    expect(html).toContain('locations.csv');
    expect(count(h.db, 'locations')).toBe(3);
    // The full page of the job shows the report too.
    const full = await (await h.app.request(url, { headers: { cookie: h.cookie } })).text();
    expect(full).toContain('Import report');
    expect(full).toMatch(
      /<td class="vc-filename"><a href="\/imports\/history\/\d+">locations.csv<\/a><\/td>/,
    );
    // The upload's temporary files are gone once the job has finished.
    expect(readdirSync(join(h.dir, 'uploads-in-progress'))).toEqual([]);
  });

  it('imports a browser-like upload: Content-Length declared, the token only in its field (no script)', async () => {
    const h = await harness();
    const encoded = new Request('http://x/', {
      method: 'POST',
      body: form({ _csrf: h.token, kind: 'locations' }, [{ name: 'plain.csv', content: GOOD }]),
    });
    const bytes = new Uint8Array(await encoded.clone().arrayBuffer());
    const res = await h.app.request('/imports', {
      method: 'POST',
      body: bytes,
      headers: {
        cookie: h.cookie,
        origin: ORIGIN,
        'content-type': encoded.headers.get('content-type')!,
        'content-length': String(bytes.length),
      },
    });
    expect(res.status).toBe(303);
    expect(await finished(h, res.headers.get('location')!)).toContain('Imported');
  });

  it('answers an htmx upload with the progress partial (200), pushes the job URL, then polls to the report', async () => {
    const h = await harness();
    const res = await post(h, form({ kind: 'locations' }, [{ name: 'locations.csv', content: GOOD }]), {
      'HX-Request': 'true',
      'X-CSRF-Token': h.token,
    });
    expect(res.status).toBe(200);
    const url = res.headers.get('HX-Push-Url')!;
    expect(url).toMatch(/^\/imports\/jobs\//);
    const first = await res.text();
    expect(first).not.toContain('<!doctype');
    // The self-polling partial: it asks for its own replacement after 500 ms.
    expect(first).toContain(`hx-get="${url}"`);
    expect(first).toContain('hx-trigger="load delay:500ms"');
    expect(first).toContain('hx-swap="outerHTML"');
    expect(first).toMatch(/<progress class="vc-progress" max="\d+" value="\d+"/);
    const done = await finished(h, url);
    expect(done).not.toContain('hx-trigger="load');
  });

  it('rejects a broken file with file, line, column, value and rule, and stores nothing', async () => {
    const h = await harness();
    const before = count(h.db, 'locations');
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'broken & "odd".csv', content: BAD }]),
    );
    const html = await finished(h, res.headers.get('location')!);
    expect(html).toContain('Rejected');
    expect(html).toContain('Nothing of this file was stored');
    // Every rejected row with its line (as the pipeline counts lines: header = 1), column, value and rule.
    const rows = [
      ...html.matchAll(
        /<tr><td class="vc-filename">(.*?)<\/td><td class="num">(\d+)<\/td><td><code>(.*?)<\/code><\/td><td>(.*?)<\/td><td>(.*?)<\/td><\/tr>/g,
      ),
    ].map((m) => m.slice(1));
    expect(rows).toEqual([
      [
        'broken &amp; &quot;odd&quot;.csv',
        '3',
        'location_id',
        '<code class="vc-value">&lt;img src=x onerror=alert(2)&gt;</code>',
        expect.stringMatching(/^may contain only letters, digits/),
      ],
      [
        'broken &amp; &quot;odd&quot;.csv',
        '4',
        'iso_class',
        '<code class="vc-value">12</code>',
        expect.stringMatching(/ISO 14644-1 class from 1 to 9/),
      ],
    ]);
    expect(html).not.toContain('<img src=x');
    expect(count(h.db, 'locations')).toBe(before);
    expect(count(h.db, 'imports')).toBe(0);
  });

  it('imports the valid rows and lists the rest when the checkbox is ticked (status partial)', async () => {
    const h = await harness();
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations', acceptValidRows: 'on' }, [
        { name: 'mixed.csv', content: BAD },
      ]),
    );
    const html = await finished(h, res.headers.get('location')!);
    expect(html).toContain('Partly imported');
    expect(html).toMatch(/Rejected<\/dt>\s*<dd class="num">2</);
    expect(count(h.db, 'locations')).toBe(1);
    // The stored import keeps its left-out rows; its history page shows them.
    const id = (h.db.prepare('SELECT id FROM imports').get() as { id: number }).id;
    const stored = await (
      await h.app.request(`/imports/history/${id}`, { headers: { cookie: h.cookie } })
    ).text();
    expect(stored).toContain(`Stored import #${id}`);
    expect(stored).toContain('iso_class');
  });

  it('says "unchanged" when the same content is uploaded again, and stores nothing more', async () => {
    const h = await harness();
    const first = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'a.csv', content: GOOD }]),
    );
    await finished(h, first.headers.get('location')!);
    const imports = count(h.db, 'imports');
    const again = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'renamed.csv', content: GOOD }]),
    );
    const html = await finished(h, again.headers.get('location')!);
    expect(html).toContain('Unchanged');
    expect(html).toContain('same content as import #');
    expect(count(h.db, 'imports')).toBe(imports);
  });

  it('lists jobs still running on the plain Imports page, with a link to follow each', async () => {
    const h = await harness();
    // The page is kept (src/web/page-cache.ts): a job started without a write must still show on it.
    const before = await (await h.app.request('/imports', { headers: { cookie: h.cookie } })).text();
    expect(before).not.toContain('still running');
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'slow & "big".csv', content: GOOD }]),
    );
    const url = res.headers.get('location')!;
    // The worker thread needs far longer to start than this request takes: the job is still running.
    const during = await (await h.app.request('/imports', { headers: { cookie: h.cookie } })).text();
    expect(during).toContain(
      `An import is still running: <a href="${url}">slow &amp; &quot;big&quot;.csv</a>.`,
    );
    await finished(h, url);
    const after = await (await h.app.request('/imports', { headers: { cookie: h.cookie } })).text();
    expect(after).not.toContain('still running');
  });

  it('lists a long list of rejected rows 100 to a page; the pager works as a swap and as a page', async () => {
    const h = await harness();
    const rows = ['location_id,parent_id,level,name,environment,iso_class,floor_area_m2'];
    for (let i = 0; i < 250; i++) rows.push(`site-${i},,site,S,open-room,12,`);
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'many.csv', content: rows.join('\n') }]),
    );
    const url = res.headers.get('location')!;
    const html = await finished(h, url);
    const lines = (text: string) =>
      [...text.matchAll(/<td class="num">(\d+)<\/td><td><code>iso_class/g)].map((m) => Number(m[1]));
    expect(html).toContain('Showing 1–100 of 250 listed problems.');
    expect(lines(html)).toEqual(Array.from({ length: 100 }, (_, i) => i + 2));
    const next =
      /<a href="([^"]+)" hx-get="([^"]+)" hx-target="#issues-0" hx-swap="outerHTML" rel="next">Next<\/a>/.exec(
        html,
      );
    expect(next).not.toBeNull();
    const swap = await h.app.request(next![2]!.replaceAll('&amp;', '&'), {
      headers: { cookie: h.cookie, 'HX-Request': 'true' },
    });
    const part = await swap.text();
    expect(part.startsWith('<section class="vc-issues" id="issues-0">')).toBe(true);
    expect(part).toContain('Showing 101–200 of 250 listed problems.');
    expect(lines(part)).toEqual(Array.from({ length: 100 }, (_, i) => i + 102));
    // Without script the link is a full page showing page 2 of that file.
    const full = await (
      await h.app.request(next![1]!.replaceAll('&amp;', '&'), { headers: { cookie: h.cookie } })
    ).text();
    expect(full.startsWith('<!doctype html>')).toBe(true);
    expect(full).toContain('Showing 101–200 of 250 listed problems.');
    // The last page holds the rest; a page number beyond it shows the last page.
    const last = await (
      await h.app.request(`${url}/files/0/issues?page=99`, {
        headers: { cookie: h.cookie, 'HX-Request': 'true' },
      })
    ).text();
    expect(lines(last)).toEqual(Array.from({ length: 50 }, (_, i) => i + 202));
  });

  it('imports several files of one upload in order, one report each', async () => {
    const h = await harness();
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [
        { name: 'good.csv', content: GOOD },
        { name: 'bad.csv', content: BAD },
      ]),
    );
    const html = await finished(h, res.headers.get('location')!);
    expect(html).toContain('2 files: 1 imported, 1 rejected.');
    expect(html.indexOf('good.csv')).toBeLessThan(html.indexOf('bad.csv'));
  });

  it('runs in this thread for an in-memory database (nothing to share with a worker)', async () => {
    const h = await harness({ memory: true });
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'mem.csv', content: GOOD }]),
    );
    const html = await finished(h, res.headers.get('location')!);
    expect(html).toContain('Imported');
    expect(count(h.db, 'locations')).toBe(3);
  });

  it('refuses a form without files or with an unknown kind: 422 with the reasons, the choices kept', async () => {
    const h = await harness();
    const none = await post(h, form({ _csrf: h.token, kind: 'scans', acceptValidRows: 'on' }, []));
    expect(none.status).toBe(422);
    const html = await none.text();
    expect(html).toContain('Choose at least one file to import.');
    expect(html).toMatch(/<option value="scans" selected/);
    expect(html).toMatch(/name="acceptValidRows" value="on" checked/);
    const odd = await post(
      h,
      form({ _csrf: h.token, kind: '<b>x</b>' }, [{ name: 'a.csv', content: GOOD }]),
      {
        'HX-Request': 'true',
      },
    );
    expect(odd.status).toBe(422);
    const frag = await odd.text();
    expect(frag).not.toContain('<!doctype');
    expect(frag).toContain('“&lt;b&gt;x&lt;/b&gt;” is not a kind of file voidcast imports');
    expect(count(h.db, 'imports')).toBe(0);
  });

  it('refuses a body that is not multipart with 400', async () => {
    const h = await harness();
    const res = await h.app.request('/imports', {
      method: 'POST',
      body: new URLSearchParams({ kind: 'locations' }),
      headers: { cookie: h.cookie, origin: ORIGIN, 'X-CSRF-Token': h.token },
    });
    expect(res.status).toBe(400);
    expect(await res.text()).toContain('multipart/form-data');
  });

  it('says when a job is no longer held (404), in place for htmx', async () => {
    const h = await harness();
    const res = await h.app.request('/imports/jobs/00000000-0000-4000-8000-000000000000', {
      headers: { cookie: h.cookie },
    });
    expect(res.status).toBe(404);
    expect(await res.text()).toContain('This import job is no longer held');
  });
});

describe('upload size limit', () => {
  it('refuses a declared oversize upload at once with 413 naming the limit, storing nothing', async () => {
    const h = await harness({ limit: '4 KiB' });
    const big = 'x'.repeat(5000);
    const fd = form({ _csrf: h.token, kind: 'locations' }, [{ name: 'big.csv', content: big }]);
    const encoded = new Request('http://x/', { method: 'POST', body: fd });
    const type = encoded.headers.get('content-type')!;
    const bytes = new Uint8Array(await encoded.arrayBuffer());
    // The same bytes with their length declared, as a browser sends them.
    const res = await h.app.request('/imports', {
      method: 'POST',
      body: bytes,
      headers: {
        cookie: h.cookie,
        origin: ORIGIN,
        'content-type': type,
        'content-length': String(bytes.length),
        'X-CSRF-Token': h.token,
      },
    });
    expect(res.status).toBe(413);
    const html = await res.text();
    expect(html).toContain('larger than the limit of 4 KiB per upload. Nothing was stored.');
    expect(count(h.db, 'imports')).toBe(0);
  });

  it('refuses a streamed upload (no Content-Length) when it passes the limit while reading', async () => {
    const h = await harness({ limit: '4 KiB' });
    const res = await post(
      h,
      form({ _csrf: h.token, kind: 'locations' }, [{ name: 'big.csv', content: GOOD.repeat(40) }]),
      {
        'HX-Request': 'true',
      },
    );
    expect(res.status).toBe(413);
    const html = await res.text();
    expect(html).not.toContain('<!doctype');
    expect(html).toContain('larger than the limit of 4 KiB per upload');
    expect(count(h.db, 'imports')).toBe(0);
    expect(count(h.db, 'locations')).toBe(0);
    expect(readdirSync(join(h.dir, 'uploads-in-progress'))).toEqual([]);
  });
});
