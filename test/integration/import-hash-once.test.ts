/**
 * The import reads a file once when its content cannot have been imported before (no earlier import
 * of the kind had its size): the sha256 is then taken while the file is parsed and stored at the end
 * (src/ingest/pipeline.ts). Checked here: the stored and reported hash is the file's sha256 (Node's
 * crypto over the whole file, the reference); the same file again is 'unchanged'; a file of the same
 * size with other content is hashed beforehand and imported; a rejected file reports its hash and
 * stores nothing; and content imported meanwhile by another connection makes the import 'unchanged',
 * rolled back whole. Expected values: hand-written files and their sha256 from node:crypto.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { bufferSource } from '../../src/ingest/csv.ts';
import { getKind } from '../../src/ingest/kinds/index.ts';
import { importFile, importSource, sha256Text } from '../../src/ingest/pipeline.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
const dir = mkdtempSync(join(tmpdir(), 'voidcast-hash-once-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

async function line(): Promise<Db> {
  const db = openDatabase(':memory:');
  migrate(db);
  const r = await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
  expect(r.status).toBe('imported');
  return db;
}

const counterImports = (db: Db) =>
  db.prepare("SELECT sha256, bytes FROM imports WHERE kind = 'counter-samples' ORDER BY id").all() as {
    sha256: string;
    bytes: number;
  }[];

describe('import: the hash taken while the file is read', () => {
  it('stores the file’s sha256, and the same file again is unchanged', async () => {
    const db = await line();
    const path = join(GOOD, 'counter-samples-bay.csv');
    const want = sha256Text(readFileSync(path));
    const r = await importFile(db, { kind: 'counter-samples', path });
    expect(r.status).toBe('imported');
    expect(r.sha256).toBe(want);
    expect(counterImports(db)).toEqual([{ sha256: want, bytes: readFileSync(path).length }]);
    const again = await importFile(db, { kind: 'counter-samples', path });
    expect(again.status).toBe('unchanged');
    expect(again.importId).toBe(r.importId);
    // the same size, other content: hashed beforehand, imported
    const text = readFileSync(path, 'utf8').replace('1200,400', '1201,400');
    expect(text.length).toBe(readFileSync(path, 'utf8').length);
    const other = join(dir, 'same-size.csv');
    writeFileSync(other, text);
    const r2 = await importFile(db, { kind: 'counter-samples', path: other });
    expect(r2.status).toBe('imported');
    expect(r2.sha256).toBe(sha256Text(text));
    expect(counterImports(db).map((i) => i.sha256)).toEqual([want, sha256Text(text)]);
    db.close();
  });

  it('reports the hash of a rejected file and stores nothing', async () => {
    const db = await line();
    const path = join(import.meta.dirname, '../fixtures/bad/counter-samples-unknown-location.csv');
    const r = await importFile(db, { kind: 'counter-samples', path });
    expect(r.status).toBe('rejected');
    expect(r.sha256).toBe(sha256Text(readFileSync(path)));
    expect(counterImports(db)).toEqual([]);
    expect(db.prepare('SELECT count(*) FROM counter_samples').pluck().get()).toBe(0);
    db.close();
  });

  it('is unchanged, with nothing kept, when the same content was imported meanwhile', async () => {
    const db = await line();
    const data = readFileSync(join(GOOD, 'counter-samples-bay.csv'));
    const first = await importFile(db, {
      kind: 'counter-samples',
      path: join(GOOD, 'counter-samples-bay.csv'),
    });
    const samples = db.prepare('SELECT count(*) FROM counter_samples').pluck().get();
    // as if the size check had run before the other import committed: no hash beforehand
    const r = importSource(db, getKind('counter-samples')!, {
      displayName: 'copy.csv',
      sha256: null,
      bytes: data.length,
      open: () => bufferSource(data),
    });
    expect(r.status).toBe('unchanged');
    expect(r.importId).toBe(first.importId);
    expect(r.notes[0]).toMatch(/same content as import/);
    expect(counterImports(db).length).toBe(1);
    expect(db.prepare('SELECT count(*) FROM counter_samples').pluck().get()).toBe(samples);
    db.close();
  });
});
