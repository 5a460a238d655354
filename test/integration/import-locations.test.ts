/** Locations imports end to end: hierarchy, SI levels, quoted fields, updates and re-imports. */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { importFile } from '../../src/ingest/pipeline.ts';
import { M3_PER_FT3 } from '../../src/model/units.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { getLocation, listLocations, locationPath } from '../../src/store/locations.ts';
import { dumpDatabase } from '../helpers/db-dump.ts';

const GOOD = join(import.meta.dirname, '../fixtures/good');
let dir: string;
let db: Db;
let n = 0;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-loc-'));
  db = openDatabase(':memory:');
  migrate(db);
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

async function importText(text: string) {
  const path = join(dir, `l${n++}.csv`);
  writeFileSync(path, text);
  return importFile(db, { kind: 'locations', path, displayName: 'loc.csv' });
}

describe('locations', () => {
  it('imports the hierarchy with environment, ISO class, area, exposed states and levels in SI', async () => {
    const r = await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
    expect(r.status).toBe('imported');
    expect(r.rowsStored).toBe(7);
    const bay = getLocation(db, 'BAY-BOND')!;
    expect(bay).toMatchObject({
      parentId: 'SITE-A',
      level: 'bay',
      name: 'Bonding bay',
      environment: 'open-room',
      isoClass: 5,
      floorAreaM2: 52,
      exposedStates: ['cleaned'],
      airVelocityMps: 0.4,
    });
    expect(bay.levels).toEqual([{ diameterM: 1e-7, alertPerM3: 50000, actionPerM3: 100000 }]);
    // Levels per ft³ are stored per m³: 1 per ft³ = 1 / 0.028316846592 per m³ (NIST SP 811, exact factor).
    const lp = getLocation(db, 'ACT-1-LP')!;
    expect(lp.name).toBe('Activation 1, load port');
    expect(lp.exposedStates).toEqual(['cleaned', 'activated']);
    expect(lp.levels).toEqual([
      { diameterM: 1e-7, alertPerM3: 500, actionPerM3: 1000 },
      { diameterM: 5e-7, alertPerM3: 1 / M3_PER_FT3, actionPerM3: 2 / M3_PER_FT3 },
    ]);
    expect(getLocation(db, 'FOUP-N2')!.isoClass).toBeNull();
    expect(listLocations(db).map((l) => l.locationId)).toEqual([
      'SITE-A',
      'BAY-BOND',
      'ACT-1',
      'ACT-1-LP',
      'BND-1',
      'BND-1-EFEM',
      'FOUP-N2',
    ]);
    expect(locationPath(db, 'BND-1-EFEM')).toEqual(['SITE-A', 'BAY-BOND', 'BND-1', 'BND-1-EFEM']);
  });

  it('reads quoted names with commas, doubled quotes and line breaks; parents may follow children', async () => {
    const r = await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-quoted.csv') });
    expect(r.status).toBe('imported');
    expect(getLocation(db, 'SITE-Q')!.name).toBe('Site "Q", north');
    expect(getLocation(db, 'BAY-Q')!.name).toBe('Bay Q\n(two-line name)');
    expect(getLocation(db, 'PT-Q')!.isoClass).toBe(3.5);
    const back = await importText(
      'location_id,parent_id,level,environment\nPT-Z,BAY-Z,point,efem\nBAY-Z,SITE-Z,bay,open-room\nSITE-Z,,site,open-room\n',
    );
    expect(back.status).toBe('imported');
  });

  it('re-importing the same file changes nothing; an edited file updates its locations in place', async () => {
    const path = join(GOOD, 'locations-line.csv');
    await importFile(db, { kind: 'locations', path });
    const before = dumpDatabase(db);
    const same = await importFile(db, { kind: 'locations', path });
    expect(same.status).toBe('unchanged');
    expect(dumpDatabase(db)).toEqual(before);
    const idBefore = db.prepare("SELECT id FROM locations WHERE location_id = 'BND-1'").pluck().get();
    const r = await importText(
      'location_id,parent_id,level,name,environment,iso_class\nBND-1,BAY-BOND,tool,Bonder 1,mini-environment,3\nSITE-A,,site,Site A,open-room,\n',
    );
    expect(r.status).toBe('imported');
    expect(r.notes).toEqual(['1 existing rows updated']);
    expect(getLocation(db, 'BND-1')!.isoClass).toBe(3);
    expect(getLocation(db, 'BND-1')!.levels).toEqual([]); // a row describes its location completely
    expect(db.prepare("SELECT id FROM locations WHERE location_id = 'BND-1'").pluck().get()).toBe(idBefore);
  });

  it('refuses a change that puts a stored child above its parent, naming the line of the change', async () => {
    await importFile(db, { kind: 'locations', path: join(GOOD, 'locations-line.csv') });
    const before = dumpDatabase(db);
    const r = await importText(
      'location_id,parent_id,level,environment\nBND-1,BAY-BOND,point,mini-environment\n',
    );
    expect(r.status).toBe('rejected');
    expect(r.issues).toEqual([
      {
        file: 'loc.csv',
        line: 2,
        column: 'level',
        value: 'point',
        rule: 'a point cannot sit in a point ("BND-1-EFEM" in "BND-1"): the order is site > area > bay > tool > point',
      },
    ]);
    expect(dumpDatabase(db)).toEqual(before);
  });
});
