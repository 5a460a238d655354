/**
 * The counter-sample import checks its foreign keys itself (once per distinct key) and sets SQLite's
 * per-row checks aside for its transaction (src/store/key-checks.ts). Checked here against the plain
 * twin — the same files imported with SQLite checking every row — and against SQLite's own audit
 * (`PRAGMA foreign_key_check`, which must find nothing), with the connection's setting put back
 * after an accepted file, a rejected one and a throwing write.
 * Expected values: the plain twin's stored rows; SQLite's foreign-key audit; hand-written fixtures.
 */
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { getKind } from '../../src/ingest/kinds/index.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { withOwnKeyChecks } from '../../src/store/key-checks.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
const BAD = join(import.meta.dirname, '../fixtures/bad');
const FILES = [
  'counter-samples-bay.csv',
  'counter-samples-differential-zone.csv',
  'counter-samples-semicolon-decimal-comma.csv',
];

async function line(): Promise<Db> {
  const db = openDatabase(':memory:');
  migrate(db);
  const r = await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
  expect(r.status).toBe('imported');
  return db;
}

function stored(db: Db) {
  return {
    samples: db
      .prepare(
        'SELECT location, start_ms, counter, duration_ms, volume_m3, channel_set, hex(counts) AS counts, flags, room_state, import_id, line FROM counter_samples ORDER BY location, start_ms, counter, duration_ms',
      )
      .all(),
    hourly: db
      .prepare('SELECT * FROM counter_hourly ORDER BY location, diameter_nm, room_state, hour_ms')
      .all(),
    counters: db.prepare('SELECT * FROM counters ORDER BY id').all(),
  };
}

const foreignKeys = (db: Db) => db.pragma('foreign_keys', { simple: true });

describe('counter import: own foreign-key checks', () => {
  it('stores what the import with SQLite checking every row stores, and SQLite finds no broken key', async () => {
    const kind = getKind('counter-samples')!;
    expect(kind.ownKeyChecks).toBe(true);
    const own = await line();
    const plain = await line();
    for (const f of FILES) {
      const a = await importFile(own, { kind: 'counter-samples', path: join(GOOD, f) });
      expect(a.status).toBe('imported');
      expect(foreignKeys(own)).toBe(1);
      kind.ownKeyChecks = false;
      try {
        const b = await importFile(plain, { kind: 'counter-samples', path: join(GOOD, f) });
        expect(b.rowsStored).toBe(a.rowsStored);
      } finally {
        kind.ownKeyChecks = true;
      }
    }
    expect(stored(own)).toEqual(stored(plain));
    expect(stored(own).samples.length).toBeGreaterThan(10);
    expect(own.pragma('foreign_key_check')).toEqual([]);
    own.close();
    plain.close();
  });

  it('refuses a sample at an unknown location (nothing stored) and puts the setting back', async () => {
    const db = await line();
    const r = await importFile(db, {
      kind: 'counter-samples',
      path: join(BAD, 'counter-samples-unknown-location.csv'),
    });
    expect(r.status).toBe('rejected');
    expect(r.issues[0]).toMatchObject({ column: 'location_id' });
    expect(r.issues[0]!.rule).toMatch(/unknown location/);
    expect(db.prepare('SELECT count(*) FROM counter_samples').pluck().get()).toBe(0);
    expect(db.prepare("SELECT count(*) FROM imports WHERE kind = 'counter-samples'").pluck().get()).toBe(0);
    expect(foreignKeys(db)).toBe(1);
    db.close();
  });

  it('puts the setting back when the write throws, and changes nothing inside an open transaction', async () => {
    const db = await line();
    expect(() =>
      withOwnKeyChecks(db, () => {
        expect(foreignKeys(db)).toBe(0);
        throw new Error('boom');
      }),
    ).toThrow('boom');
    expect(foreignKeys(db)).toBe(1);
    db.transaction(() => {
      withOwnKeyChecks(db, () => expect(foreignKeys(db)).toBe(1));
    })();
    db.close();
  });
});
