import { describe, expect, it } from 'vitest';
import { migrate, openDatabase } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';

function app() {
  const db = openDatabase(':memory:');
  migrate(db);
  const lines: string[] = [];
  const a = createApp({ db, dataDir: '/tmp/voidcast-test', version: '9.9.9', log: (l) => lines.push(l) });
  return { a, lines, db };
}

describe('web shell', () => {
  it('renders the overview with a doctype, the navigation and htmx from our own server', async () => {
    const { a } = app();
    const res = await a.request('/');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html.startsWith('<!doctype html>')).toBe(true);
    for (const label of ['Lots', 'Areas', 'Tools &amp; cleans', 'Calculators', 'Imports'])
      expect(html).toContain(`>${label}</a>`);
    expect(html).toContain('<script src="/assets/htmx.min.js"');
    expect(html).not.toMatch(/unpkg|jsdelivr|cdn/i);
  });

  it('serves htmx 2.0.11 from node_modules', async () => {
    const { a } = app();
    const res = await a.request('/assets/htmx.min.js');
    expect(res.status).toBe(200);
    expect(res.headers.get('content-type')).toContain('javascript');
    const js = await res.text();
    expect(js).toContain('2.0.11');
  });

  it('answers /healthz with JSON: version and database status', async () => {
    const { a } = app();
    const res = await a.request('/healthz');
    expect(res.status).toBe(200);
    const body = (await res.json()) as { status: string; version: string; database: { ok: boolean } };
    expect(body).toMatchObject({ status: 'ok', version: '9.9.9', database: { ok: true } });
  });

  it('answers an unknown path with our 404 page', async () => {
    const { a } = app();
    const res = await a.request('/no/such/page');
    expect(res.status).toBe(404);
    const html = await res.text();
    expect(html).toContain('Nothing here');
    expect(html).toContain('There is no page at /no/such/page.');
  });

  it('shows a 500 page without the stack trace, and logs the stack', async () => {
    const { a, lines, db } = app();
    db.close(); // every query now throws inside the handler
    const res = await a.request('/');
    expect(res.status).toBe(500);
    const html = await res.text();
    expect(html).toContain('Something went wrong on our side');
    expect(html).not.toMatch(/\.ts:\d+|at [A-Za-z]+ \(|TypeError|database connection is not open/);
    expect(lines.join('\n')).toMatch(/ERROR GET \/: .*database connection is not open/s);
  });

  it('logs every request', async () => {
    const { a, lines } = app();
    await a.request('/healthz');
    expect(lines.some((l) => l.includes('GET /healthz'))).toBe(true);
  });
});
