/**
 * Without an explicit time, `voidcast assess` and the JSON API assess at the installation's clock
 * (settings clock.as_of — the demo sets it to its own "now"), as the pages do; else at the real now.
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadDemoOnce, readDemoManifest } from '../../src/cli/demo.ts';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import { type Db, openDataDir } from '../../src/store/db.ts';
import { CLOCK_SETTING, installationClockMs, setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';

function cli() {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: '/tmp' };
  return { io, out: () => out, err: () => err };
}

describe('the assessment clock', () => {
  let dir: string;
  let db: Db;
  let demoNow: number;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'voidcast-clock-'));
    db = openDataDir(dir);
    await loadDemoOnce(db);
    demoNow = Date.parse(readDemoManifest().asOf);
  }, 180_000);
  afterAll(() => {
    db.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('the demo load sets the installation clock to the demo’s now', () => {
    expect(installationClockMs(db)).toBe(demoNow);
  });

  it('voidcast assess uses it when --as-of is absent, and says so on stderr', async () => {
    const t = cli();
    expect(await main(['assess', '--lot', 'TR2653', '--json', '--data', dir], t.io)).toBe(0);
    expect((JSON.parse(t.out()) as { asOfMs: number }).asOfMs).toBe(demoNow);
    expect(t.err()).toContain('as of the installation clock 2026-10-18T19:00:00.000Z');
  });

  it('--as-of overrides it', async () => {
    const t = cli();
    const code = await main(
      ['assess', '--lot', 'TR2653', '--json', '--as-of', '2026-10-18T12:00:00Z', '--data', dir],
      t.io,
    );
    expect(code).toBe(0);
    expect((JSON.parse(t.out()) as { asOfMs: number }).asOfMs).toBe(Date.parse('2026-10-18T12:00:00Z'));
    expect(t.err()).toBe('');
  });

  it('the JSON API uses it when ?asOf is absent', async () => {
    const app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
    const res = await app.request('/api/lots/TR2653/assessment');
    expect(res.status).toBe(200);
    expect(((await res.json()) as { asOfMs: number }).asOfMs).toBe(demoNow);
  });

  it('without the setting both follow the real time', async () => {
    setSetting(db, CLOCK_SETTING, '');
    const before = Date.now();
    const app = createApp({ db, dataDir: dir, version: 'test', log: () => {} });
    const res = await app.request('/api/lots/TR2653/assessment');
    const asOf = ((await res.json()) as { asOfMs: number }).asOfMs;
    expect(asOf).toBeGreaterThanOrEqual(before);
    setSetting(db, CLOCK_SETTING, readDemoManifest().asOf);
  });
});
