/**
 * Hardening of every request: the Host allow-list against DNS rebinding, and the security headers.
 *
 * Sources of the rules checked: RFC 9110 §15.5.20 (421 Misdirected Request), W3C Content Security
 * Policy Level 3 (script-src without 'unsafe-inline', frame-ancestors 'none'), WHATWG Fetch
 * (X-Content-Type-Options: nosniff), W3C Referrer Policy (same-origin), RFC 6797 §7.2 (no
 * Strict-Transport-Security over plain HTTP).
 */

import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { request } from 'node:http';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { openDataDir } from '../../src/store/db.ts';
import { createApp } from '../../src/web/app.ts';
import { hostName, isLoopbackBind, isLoopbackName, parseAllowedHosts } from '../../src/web/hardening.ts';
import { type RunningServer, startServer } from '../../src/web/server.ts';

const LOCATIONS =
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2\nsite-a,,site,A,open-room,,\n';

function raw(
  server: RunningServer,
  opts: { method?: string; path: string; host: string; headers?: Record<string, string>; body?: string },
): Promise<{ status: number; headers: Record<string, string | string[] | undefined>; body: string }> {
  return new Promise((resolve, reject) => {
    const req = request(
      {
        host: '127.0.0.1',
        port: server.port,
        method: opts.method ?? 'GET',
        path: opts.path,
        headers: { host: opts.host, ...opts.headers },
      },
      (res) => {
        let body = '';
        res.on('data', (b: Buffer) => {
          body += b.toString();
        });
        res.on('end', () => resolve({ status: res.statusCode ?? 0, headers: res.headers, body }));
      },
    );
    req.on('error', reject);
    if (opts.body) req.write(opts.body);
    req.end();
  });
}

let dir: string;
let server: RunningServer;
const logLines: string[] = [];

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-hardening-'));
  server = await startServer({
    host: '127.0.0.1',
    port: 0,
    dataDir: dir,
    allowedHosts: ['voidcast.fab.example'],
    log: (l) => logLines.push(l),
  });
});
afterAll(async () => {
  await server.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('Host allow-list (DNS rebinding)', () => {
  it('answers loopback names and configured names', async () => {
    for (const host of [
      `127.0.0.1:${server.port}`,
      `localhost:${server.port}`,
      'voidcast.fab.example',
      'VOIDCAST.FAB.EXAMPLE:443',
    ]) {
      const res = await raw(server, { path: '/healthz', host });
      expect(res.status, host).toBe(200);
    }
  });

  it('refuses a page under a foreign name with 421, before anything else runs', async () => {
    const res = await raw(server, { path: '/', host: `rebind.attacker.example:${server.port}` });
    expect(res.status).toBe(421);
    expect(res.body).toContain('does not answer to the name');
    // No CSRF cookie is handed out: the rebound page cannot even obtain a form token.
    expect(res.headers['set-cookie']).toBeUndefined();
    expect(logLines.some((l) => l.includes('REFUSED GET /') && l.includes('rebind.attacker.example'))).toBe(
      true,
    );
  });

  it('refuses a rebound import with a valid token and stores nothing', async () => {
    // The token and cookie are real ones (fetched under the loopback name); only the Host differs,
    // as when a rebound page posts: the browser then sends Origin = the attacker's name too.
    const page = await raw(server, { path: '/imports', host: `127.0.0.1:${server.port}` });
    const cookie = String(page.headers['set-cookie']).split(';')[0]!;
    const token = /name="_csrf" value="([^"]+)"/.exec(page.body)![1]!;
    const boundary = '----vcboundary';
    const body = [
      `--${boundary}`,
      'Content-Disposition: form-data; name="_csrf"',
      '',
      token,
      `--${boundary}`,
      'Content-Disposition: form-data; name="kind"',
      '',
      'locations',
      `--${boundary}`,
      'Content-Disposition: form-data; name="files"; filename="locations.csv"',
      'Content-Type: text/csv',
      '',
      LOCATIONS,
      `--${boundary}--`,
      '',
    ].join('\r\n');
    const host = `rebind.attacker.example:${server.port}`;
    const res = await raw(server, {
      method: 'POST',
      path: '/imports',
      host,
      headers: {
        cookie,
        origin: `http://${host}`,
        'sec-fetch-site': 'same-origin',
        'content-type': `multipart/form-data; boundary=${boundary}`,
        'content-length': String(Buffer.byteLength(body)),
      },
      body,
    });
    expect(res.status).toBe(421);
    const n = server.db.prepare('SELECT COUNT(*) AS n FROM imports').get() as { n: number };
    expect(n.n).toBe(0);
    expect(server.db.prepare('SELECT COUNT(*) AS n FROM locations').get()).toEqual({ n: 0 });
    expect(readdirSync(dir).filter((f) => f.startsWith('upload'))).toEqual([]);
  });

  it('refuses a missing or malformed Host', async () => {
    const app = createApp({ db: server.db, dataDir: dir, version: 't', log: () => undefined });
    const res = await app.request('http://localhost/healthz', { headers: { host: 'a b' } });
    expect(res.status).toBe(421);
  });
});

describe('host names (hand computation from RFC 6761 §6.3 and RFC 5735 / RFC 4291 loopback ranges)', () => {
  it('knows the loopback names and bind addresses', () => {
    for (const n of ['localhost', 'app.localhost', '127.0.0.1', '127.8.9.10', '[::1]'])
      expect(isLoopbackName(n), n).toBe(true);
    for (const n of ['localhost.example', '128.0.0.1', '10.0.0.1', 'example.com', '[::]'])
      expect(isLoopbackName(n), n).toBe(false);
    for (const a of ['127.0.0.1', '::1', '[::1]', 'localhost']) expect(isLoopbackBind(a), a).toBe(true);
    for (const a of ['0.0.0.0', '::', '192.168.1.20']) expect(isLoopbackBind(a), a).toBe(false);
  });
  it('reads a Host header and an operator list', () => {
    expect(hostName('Example.COM:8080')).toBe('example.com');
    expect(hostName('[::1]:4180')).toBe('[::1]');
    expect(hostName('example.com.')).toBe('example.com');
    expect(hostName('')).toBeNull();
    expect(hostName('a b')).toBeNull();
    expect(hostName('evil.example@127.0.0.1')).toBeNull();
    expect(parseAllowedHosts(' a.example, B.example  c.example ')).toEqual([
      'a.example',
      'b.example',
      'c.example',
    ]);
    expect(parseAllowedHosts(undefined)).toEqual([]);
  });
});

describe('security headers', () => {
  it('sends a script-only-from-self CSP, frame-ancestors none, nosniff and a referrer policy on pages and assets', async () => {
    for (const path of ['/', '/imports', '/assets/voidcast.js', '/nowhere', '/healthz']) {
      const res = await raw(server, { path, host: `127.0.0.1:${server.port}` });
      const csp = String(res.headers['content-security-policy']);
      expect(csp, path).toContain("script-src 'self'");
      expect(csp, path).toContain("frame-ancestors 'none'");
      expect(csp, path).toContain("object-src 'none'");
      expect(csp, path).not.toContain('unsafe-inline');
      expect(csp, path).not.toContain('unsafe-eval');
      expect(res.headers['x-content-type-options'], path).toBe('nosniff');
      expect(res.headers['x-frame-options'], path).toBe('DENY');
      expect(res.headers['referrer-policy'], path).toBe('same-origin');
      expect(res.headers['strict-transport-security'], path).toBeUndefined();
    }
  });

  it('serves pages with no inline script and no inline event handler', async () => {
    const db = openDataDir(mkdtempSync(join(tmpdir(), 'voidcast-hardening-pages-')));
    const app = createApp({ db, dataDir: dir, version: 't', log: () => undefined });
    for (const path of ['/', '/lots', '/areas', '/tools', '/parameters', '/calculators', '/imports']) {
      const html = await (await app.request(path)).text();
      expect(html, path).not.toMatch(/<script(?![^>]*\bsrc=)[^>]*>/i);
      expect(html, path).not.toMatch(/\shx-on[:-]/i);
      expect(html, path).not.toMatch(/\son[a-z]+=/i);
      expect(html, path).not.toMatch(/\sstyle=/i);
      expect(html, path).toContain('<script src="/assets/voidcast.js" defer="">');
    }
    db.close();
  });
});
