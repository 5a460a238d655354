/**
 * The watched drop folder (issue 14): counter files written into it are imported once they stop
 * growing, moved to imported/ or rejected/ beside their report, and recorded in the audit trail —
 * through a running server, and poll by poll for the rule "not while it grows".
 * Expected values: the invented samples below (hand count).
 */
import {
  appendFileSync,
  existsSync,
  mkdirSync,
  mkdtempSync,
  readFileSync,
  rmSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { main } from '../../src/cli/main.ts';
import { readAudit } from '../../src/store/audit.ts';
import { openDataDir } from '../../src/store/db.ts';
import { watchDropFolder } from '../../src/web/drop-folder.ts';
import { startServer } from '../../src/web/server.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const HEADER = '# units: counts=raw\ncounter_id,location_id,start,duration_s,volume_L,ge_0.1um,ge_0.5um\n';
const row = (minute: number, a: number, b: number) =>
  `PC-8,BAY-BOND,2026-03-02T09:${String(minute).padStart(2, '0')}:00Z,60,28.3,${a},${b}\n`;
let dir: string;

beforeEach(async () => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-drop-'));
  const io = { out: () => {}, err: () => {}, isTty: false, env: {}, cwd: dir };
  expect(
    await main(
      [
        'import',
        'locations',
        join(ROOT, 'test/fixtures/good/locations-line.csv'),
        '--data',
        join(dir, 'data'),
      ],
      io,
    ),
  ).toBe(0);
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

async function until(cond: () => boolean, ms = 30_000): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > ms) throw new Error('timed out');
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('the drop folder', () => {
  it('imports a file dropped while the server runs, and sets a broken one aside with its report', async () => {
    const drop = join(dir, 'drop');
    mkdirSync(drop);
    const server = await startServer({
      host: '127.0.0.1',
      port: 0,
      dataDir: join(dir, 'data'),
      dropDir: drop,
      log: () => {},
    });
    try {
      writeFileSync(join(drop, 'bay-0900.csv'), HEADER + row(0, 700, 7) + row(1, 650, 6) + row(2, 600, 5));
      writeFileSync(join(drop, 'broken.csv'), 'this is not a counter log\n');
      writeFileSync(join(drop, 'notes.txt'), 'not a csv: left alone\n');
      await until(
        () =>
          existsSync(join(drop, 'imported/bay-0900.csv')) && existsSync(join(drop, 'rejected/broken.csv')),
      );
      const report = JSON.parse(readFileSync(join(drop, 'imported/bay-0900.csv.report.json'), 'utf8'));
      expect(report).toMatchObject({ status: 'imported', rowsStored: 3 });
      const refused = JSON.parse(readFileSync(join(drop, 'rejected/broken.csv.report.json'), 'utf8'));
      expect(refused.status).toBe('rejected');
      expect(refused.issues.length).toBeGreaterThan(0);
      expect(existsSync(join(drop, 'notes.txt'))).toBe(true);
      expect(server.db.prepare('SELECT COUNT(*) AS n FROM counter_samples').get()).toEqual({ n: 3 });
      expect(readAudit(server.db)[0]).toMatchObject({
        actor: 'drop folder',
        action: 'import',
        subject: 'bay-0900.csv',
      });
    } finally {
      await server.close();
    }
  }, 60_000);

  it('waits while a file is still growing, and takes it when it stopped', async () => {
    const drop = join(dir, 'drop');
    const db = openDataDir(join(dir, 'data'));
    const lines: string[] = [];
    const w = watchDropFolder(db, drop, (l) => lines.push(l), 3_600_000);
    try {
      mkdirSync(drop, { recursive: true });
      const file = join(drop, 'growing.csv');
      writeFileSync(file, HEADER + row(10, 500, 5));
      await w.poll(); // first sight: remembered, not taken
      appendFileSync(file, row(11, 450, 4));
      await w.poll(); // it grew: still not taken
      expect(existsSync(file)).toBe(true);
      await w.poll(); // unchanged since the last poll: taken, whole
      expect(existsSync(join(drop, 'imported/growing.csv'))).toBe(true);
      expect(db.prepare('SELECT COUNT(*) AS n FROM counter_samples').get()).toEqual({ n: 2 });
      expect(lines.at(-1)).toContain('drop folder: growing.csv imported (2 rows stored, 0 rejected)');
    } finally {
      await w.stop();
      db.close();
    }
  });
});
