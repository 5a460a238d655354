/**
 * A lot that no pairs file names (a monitor lot: bare wafers scanned before and after a tool pass)
 * is not "waiting to bond": the queue leaves it out and lists it apart, saying why.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import { createApp } from '../../src/web/app.ts';
import { AS_OF_SETTING } from '../../src/web/routes/lots.tsx';
import { AS_OF_MS, importPageLine, type LineFiles, lineFiles } from '../helpers/pages-data.ts';

const MONITOR_SCANS = [
  '# format: voidcast scans 1',
  '# tool: SCN-1',
  '# recipe: MON-45',
  '# threshold_nm: 45',
  '# wafer_diameter_mm: 300',
  '# edge_exclusion_mm: 3',
  '# coordinates: origin=centre x=right y=up view=front',
  '# notch_deg: 270',
  'record,scan_id,lot,wafer,step,scan_time,x_mm,y_mm,size_nm,class',
  'scan,MON-01-PRE,MON,MON-01,monitor pre-scan,2025-03-03T09:00:00Z,,,,',
  'defect,MON-01-PRE,,,,,10.000,20.000,60.0,particle',
  'scan,MON-02-PRE,MON,MON-02,monitor pre-scan,2025-03-03T09:05:00Z,,,,',
  '',
].join('\n');

let db: Db;
let files: LineFiles;
let app: ReturnType<typeof createApp>;

beforeAll(async () => {
  db = openDatabase(':memory:');
  migrate(db);
  files = await importPageLine(db, [
    ...lineFiles(),
    { kind: 'scans', name: 'monitor.csv', text: MONITOR_SCANS },
  ]);
  setSetting(db, AS_OF_SETTING, new Date(AS_OF_MS).toISOString());
  app = createApp({ db, dataDir: files.dir, version: 'test', log: () => {} });
});
afterAll(() => {
  files?.cleanup();
  db?.close();
});

describe('a lot without bond pairs', () => {
  it('is not in the queue of lots waiting to bond, but listed apart with its wafers and why', async () => {
    const html = await (await app.request('/lots')).text();
    const waiting = /<table[^>]*data-table="waiting">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(waiting).not.toContain('data-lot="MON"');
    // One lot waits (L-01); the heading counts only it.
    expect(html).toContain('Waiting to bond (1)');
    const unpaired = /<table[^>]*data-table="unpaired">([\s\S]*?)<\/table>/.exec(html)![1]!;
    expect(unpaired).toMatch(/data-lot="MON"[\s\S]*?<td class="num">2<\/td>/);
    expect(html).toContain('Lots without bond pairs (1)');
    expect(html).toContain('not waiting to bond');
  });

  it('has a page that says it is not waiting to bond, not that it failed', async () => {
    const res = await app.request('/lots/MON');
    expect(res.status).toBe(200);
    const html = await res.text();
    expect(html).toContain('Lot MON is not waiting to bond');
    expect(html).toContain('no bond pairs');
  });
});
