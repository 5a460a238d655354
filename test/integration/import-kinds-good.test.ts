/**
 * The good example files of the six kinds import through the shared pipeline, land in SI in the
 * internal frame, read back through the store helpers the engine uses, and re-import idempotently.
 * Expected values are hand computations from the files (named beside each check).
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { CleanInput, LedgerStepInput, ProductInput, ScanInput } from '../../src/engine/types.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import { readLedger, recleanCountOf } from '../../src/store/ledger.ts';
import { listWafers, readLot, readWafer } from '../../src/store/lots.ts';
import { listPairsOfLot, pairOfWafer, readPair } from '../../src/store/pairs.ts';
import { readProduct } from '../../src/store/products.ts';
import {
  DEFECT_CLASSES,
  latestScanBefore,
  listScansOfLot,
  readScanDefects,
  readScanHeader,
  readScanInput,
} from '../../src/store/scans.ts';
import { findCleanFor, readClean, readCleans, readToolFor, readTools } from '../../src/store/tools.ts';
import { listVoidInspections, readVoidInspection, readVoids, VOID_CLASSES } from '../../src/store/voids.ts';
import {
  BASE_FILES,
  freshDb,
  good,
  INSPECTION_FILES,
  importAll,
  PAIR_FILES,
  snapshot,
} from './import-kinds-fixtures.ts';

const ALL = [...BASE_FILES, ...PAIR_FILES, ...INSPECTION_FILES];
const dir = mkdtempSync(join(tmpdir(), 'voidcast-kinds-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));
function temp(name: string, text: string): string {
  const p = join(dir, name);
  writeFileSync(p, text);
  return p;
}

describe('good files of the six kinds', () => {
  it('imports every good example in order, each as "imported"', async () => {
    const db = freshDb();
    const reports = await importAll(db, ALL);
    expect(reports.map((r) => r.status)).toEqual(ALL.map(() => 'imported'));
  });

  it('re-importing the same bytes changes nothing and says so', async () => {
    const db = freshDb();
    await importAll(db, ALL);
    const before = snapshot(db);
    for (const [kind, name] of ALL) {
      const r = await importFile(db, { kind, path: good(name) });
      expect(r.status).toBe('unchanged');
    }
    expect(snapshot(db)).toEqual(before);
  });

  it('stores a one-scan file in SI, in the internal frame, with its header', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const h = readScanHeader(db, 'SC-2403-0117')!;
    expect(h).toMatchObject({
      waferId: 'L2403-07',
      lotId: 'L2403',
      step: 'post-CMP inspection',
      toolId: 'SSI-1',
      recipe: 'OX45-HS',
      film: 'SiCN',
      timeText: '2026-03-02T08:15:00+01:00',
      waferDiameterM: 0.3,
      edgeExclusionM: 0.003,
      thresholdM: 45e-9,
      defectCount: 7,
      convention: 'origin=centre x=right y=up view=front notch=270',
    });
    // 08:15 at +01:00 is 07:15 UTC (ISO 8601 offset arithmetic).
    expect(h.timeMs).toBe(Date.UTC(2026, 2, 2, 7, 15));
    const d = readScanDefects(db, 'SC-2403-0117')!;
    // The file is already in the internal convention: mm → m only (first row 12.5, −40.2, 61 nm).
    expect(d.xM[0]).toBe(0.0125);
    expect(d.yM[0]).toBe(-0.0402);
    expect(d.diameterM[0]).toBe(61e-9);
    expect(Array.from(d.classCode, (c) => DEFECT_CLASSES[c])).toEqual([
      'particle',
      'particle',
      'residue',
      'cluster',
      'cluster',
      'unknown',
      'scratch',
    ]);
    // The engine's view keeps particle, cluster and unknown (not residue, scratch): 5 of 7.
    const input: ScanInput = readScanInput(db, 'SC-2403-0117')!;
    expect(input.particles.count).toBe(5);
    expect(Array.from(input.particles.diameterM)).toEqual([61e-9, 45e-9, 230e-9, 180e-9, 52e-9]);
  });

  it('maps the record layout with y down and the notch at +y into the internal frame', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    // scans-batch.csv: y=down, notch_deg 90 (the file's +y, i.e. pointing down): the frames differ by a
    // mirror of y only, so (10, 20) mm → (0.01, −0.02) m (hand computation, wafer-frame.ts steps 2–3).
    const d = readScanDefects(db, 'SC-2403-0201')!;
    expect(Array.from(d.xM)).toEqual([0.01, -0.0505]);
    expect(Array.from(d.yM)).toEqual([-0.02, 0.00325]);
    const empty = readScanDefects(db, 'SC-2403-0202')!;
    expect(empty.count).toBe(0);
    expect(empty.xM.length).toBe(0);
    expect(listScansOfLot(db, 'L2403').map((s) => s.scanId)).toEqual([
      'SC-2403-0201',
      'SC-2403-0202',
      'SC-2403-0203',
      'SC-2403-0117',
    ]);
    expect(listWafers(db, 'L2403').map((w) => w.waferId)).toEqual([
      'L2403-01',
      'L2403-02',
      'L2403-03',
      'L2403-07',
      'L2403-08',
    ]);
  });

  it('finds the latest scan strictly before an instant', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const t = Date.UTC(2026, 2, 2, 7, 15);
    expect(latestScanBefore(db, 'L2403-07', t)).toBeNull();
    expect(latestScanBefore(db, 'L2403-07', t + 1)?.scanId).toBe('SC-2403-0117');
    expect(latestScanBefore(db, 'no-such-wafer', t + 1)).toBeNull();
  });

  it('reads a wafer ledger with its lot-level steps, in start order, local times turned to UTC', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const steps: LedgerStepInput[] = readLedger(db, 'L2403-08');
    expect(steps.map((s) => [s.seq, s.step])).toEqual([
      [0, 'dielectric CMP'],
      [1, 'post-CMP clean'],
      [2, 'queue before inspection'],
      [3, 'plasma activation'],
      [4, 'transfer to bonder'],
      [5, 'bond'],
    ]);
    // "2026-03-02 07:20" in Europe/Berlin (CET, UTC+1 in March before the DST change) is 06:20 UTC.
    expect(steps[2]!.startMs).toBe(Date.UTC(2026, 2, 2, 6, 20));
    expect(steps[2]).toMatchObject({
      kind: 'wait',
      carrier: 'purged',
      locationId: 'STK-3',
      orientation: 'face-up',
    });
    expect(steps[0]!.orientation).toBe('face-down');
    expect(steps[5]!.endMs).toBeNull();
    expect(steps[1]!.cleanId).toBe('PBC-MEG');
    expect(recleanCountOf(db, 'L2403-08')).toBe(0);
    expect(readLedger(db, 'L2403-07').map((s) => s.step)).toContain('surface scan');
    expect(readLedger(db, 'unknown')).toEqual([]);
  });

  it('stores pairs with radians and metres, and sets the lot product', async () => {
    const db = freshDb();
    await importAll(db, [...BASE_FILES, ...PAIR_FILES]);
    const p = readPair(db, 'P2403-04')!;
    expect(p).toMatchObject({
      productId: 'HB300-LOGIC',
      lotId: 'L2403',
      topWaferId: 'L2403-07',
      bottomWaferId: 'L2403-08',
      flipAxis: 'y',
      rotationRad: 0,
      offsetXM: 2e-6,
      offsetYM: -1e-6,
      bonderToolId: 'BND-1',
      plannedBondMs: Date.UTC(2026, 2, 2, 9, 20),
    });
    expect(pairOfWafer(db, 'L2403-08')?.pairId).toBe('P2403-04');
    expect(listPairsOfLot(db, 'L2403').length).toBe(1);
    expect(readLot(db, 'L2403')?.productId).toBe('HB300-LOGIC');
  });

  it('stores a void inspection in the bond frame, in metres', async () => {
    const db = freshDb();
    await importAll(db, ALL);
    const h = readVoidInspection(db, 'IR-P2403-04-A')!;
    expect(h).toMatchObject({
      pairId: 'P2403-04',
      method: 'infrared',
      stage: 'after-anneal',
      toolId: 'IRI-1',
      smallestVoidM: 3e-4,
      voidCount: 3,
    });
    const v = readVoids(db, 'IR-P2403-04-A')!;
    expect(Array.from(v.xM)).toEqual([0.0121, -0.1204, 0.0005]);
    expect(Array.from(v.diameterM)).toEqual([0.0068, 0.0021, 0.0014]);
    expect(Array.from(v.classCode, (c) => VOID_CLASSES[c])).toEqual(['particle', 'bubble', 'edge']);
    expect(listVoidInspections(db, 'P2403-04').map((i) => i.inspectionId)).toEqual(['IR-P2403-04-A']);
  });

  it('keeps the position error an inspection states (mm → m), null when it states none, and refuses a bad one', async () => {
    const db = freshDb();
    await importAll(db, [...BASE_FILES, ...PAIR_FILES]);
    const text = readFileSync(good('void-inspections-pair.csv'), 'utf8');
    const withSigma = text
      .replace('# inspection_id: IR-P2403-04-A', '# inspection_id: IR-P2403-04-S')
      .replace('# smallest_void_mm: 0.3', '# smallest_void_mm: 0.3\n# position_sigma_mm: 0.15');
    expect(
      (await importFile(db, { kind: 'void-inspections', path: temp('sigma.csv', withSigma) })).status,
    ).toBe('imported');
    expect(readVoidInspection(db, 'IR-P2403-04-S')?.positionSigmaM).toBe(0.00015);
    await importAll(db, INSPECTION_FILES);
    expect(readVoidInspection(db, 'IR-P2403-04-A')?.positionSigmaM).toBeNull();
    const before = snapshot(db);
    const bad = withSigma
      .replace('IR-P2403-04-S', 'IR-P2403-04-T')
      .replace('# position_sigma_mm: 0.15', '# position_sigma_mm: -1');
    const r = await importFile(db, { kind: 'void-inspections', path: temp('sigma-bad.csv', bad) });
    expect(r.status).toBe('rejected');
    expect(r.issues).toEqual([
      {
        file: 'sigma-bad.csv',
        line: 8,
        column: null,
        value: '# position_sigma_mm: -1',
        rule: 'position_sigma_mm must be a number > 0 and ≤ 10 (mm)',
      },
    ]);
    expect(snapshot(db)).toEqual(before);
  });

  it('reads products and cleans in the engine’s shapes', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const p: ProductInput = readProduct(db, 'HB300-LOGIC')!;
    expect(p.stack).toEqual({
      model: 'two-flexible-plates',
      topThicknessM: 775e-6,
      bottomThicknessM: 775e-6,
      plateModulusPa: 155.4e9,
    });
    const c = readClean(db, 'PBC-MEG')!;
    if (c.removal.model !== 'logistic-log-d') throw new Error('expected a logistic clean');
    const ci: CleanInput = { cleanId: c.cleanId, name: c.name, toolId: c.toolId, ...c.removal };
    expect(ci.halfSizeM).toBe(24e-9);
    expect(Object.keys(readCleans(db))).toEqual(['ACT-RINSE', 'PBC-MEG']);
    expect(findCleanFor(db, 'CLN-4', 'MEG-A')?.cleanId).toBe('PBC-MEG');
    expect(findCleanFor(db, 'CLN-4', null)?.cleanId).toBe('PBC-MEG');
    expect(findCleanFor(db, 'CMP-2', null)).toBeNull();
    // A chamber's own entry wins; an unknown chamber falls back to the tool level.
    expect(readToolFor(db, 'ACT-1', 'PM2')?.adders).toEqual({
      model: 'power-law',
      countAbove: 2.5,
      atDiameterM: 45e-9,
      slope: 1.8,
      fromM: null,
    });
    expect(readToolFor(db, 'ACT-1', 'PM9')?.chamber).toBeNull();
    expect(readTools(db)['BND-1']?.adders).toEqual({
      model: 'bands',
      bands: [
        { fromM: 45e-9, toM: 100e-9, count: 0.6 },
        { fromM: 100e-9, toM: 300e-9, count: 0.25 },
        { fromM: 300e-9, toM: 1000e-9, count: 0.05 },
      ],
    });
  });
});

describe('re-imports with new bytes', () => {
  it('tools: the same content in other bytes is all duplicates; a changed tool is one update', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const text = readFileSync(good('tools-line.json'), 'utf8');
    const same = await importFile(db, { kind: 'tools', path: temp('tools-same.json', `${text}\n\n`) });
    expect([same.status, same.rowsStored, same.duplicates]).toEqual(['imported', 0, 7]);
    const changed = await importFile(db, {
      kind: 'tools',
      path: temp('tools-changed.json', text.replace('"countAbove": 4,', '"countAbove": 6,')),
    });
    expect([changed.rowsStored, changed.duplicates]).toEqual([1, 6]);
    expect(changed.notes).toContain('1 existing entries updated');
    expect(readToolFor(db, 'CMP-2', null)?.adders).toMatchObject({ countAbove: 6 });
  });

  it('ledger and pairs flag tools that are not stored', async () => {
    const db = freshDb();
    await importAll(db, BASE_FILES);
    const l = await importFile(db, {
      kind: 'ledger',
      path: temp(
        'ledger-unknown-tool.csv',
        'lot,wafer,step,step_kind,tool,location,carrier,start,end\nL2403,L2403-07,anneal,process,FURN-9,BOND-BAY,in-tool,2026-03-03T09:00:00Z,2026-03-03T11:00:00Z\n',
      ),
    });
    expect(l.flags).toEqual([
      {
        code: 'tool-unknown',
        count: 1,
        detail: 'tools not stored (no adders known for their steps): FURN-9',
      },
    ]);
    const p = await importFile(db, {
      kind: 'pairs',
      path: temp(
        'pairs-unknown-bonder.csv',
        'pair,product,top_wafer,bottom_wafer,flip_axis,bonder\nP-9,HB300-LOGIC,L2403-01,L2403-02,x,BND-9\n',
      ),
    });
    expect(p.flags).toEqual([
      { code: 'tool-unknown', count: 1, detail: 'bonders not stored (no adders known for them): BND-9' },
    ]);
  });
});

describe('names are data', () => {
  const NAMES = {
    lot: 'Lot <script>alert("x")</script> & "B"',
    wafer: "W&amp;1 'quoted' <b>",
    tool: 'Tool "A" & <i>',
  };

  it('stores lot, wafer and tool names with markup, quotes and ampersands verbatim', async () => {
    const db = freshDb();
    const csvQuote = (s: string) => `"${s.replace(/"/g, '""')}"`;
    const scan = temp(
      'scans-names.csv',
      [
        '# format: voidcast scans 1',
        '# threshold_nm: 45',
        '# wafer_diameter_mm: 300',
        '# edge_exclusion_mm: 3',
        '# coordinates: origin=centre x=right y=up view=front',
        '# notch_deg: 270',
        'record,scan_id,lot,wafer,tool,scan_time,x_mm,y_mm,size_nm,class',
        `scan,S-1,${csvQuote(NAMES.lot)},${csvQuote(NAMES.wafer)},${csvQuote(NAMES.tool)},2026-03-03T06:40:00Z,,,,`,
        'defect,S-1,,,,,1,2,50,particle',
        '',
      ].join('\n'),
    );
    const r = await importFile(db, { kind: 'scans', path: scan });
    expect(r.issues).toEqual([]);
    expect(r.status).toBe('imported');
    expect(readWafer(db, NAMES.wafer)).toEqual({ waferId: NAMES.wafer, lotId: NAMES.lot });
    expect(readScanHeader(db, 'S-1')?.toolId).toBe(NAMES.tool);
  });
});

describe('scans: more layouts and rules', () => {
  const head = (extra: string[]) =>
    [
      '# format: voidcast scans 1',
      '# lot: L1',
      '# wafer: L1-01',
      '# scan_time: 2026-03-03T06:40:00Z',
      '# threshold_nm: 45',
      '# wafer_diameter_mm: 300',
      '# edge_exclusion_mm: 3',
      ...extra,
    ].join('\n');

  it('accepts a one-scan file with no defects (a clean wafer is a result)', async () => {
    const db = freshDb();
    const p = temp(
      'scans-empty.csv',
      `${head(['# coordinates: origin=centre x=right y=up view=front', '# notch_deg: 270'])}\nx_mm,y_mm,size_nm,class\n`,
    );
    const r = await importFile(db, { kind: 'scans', path: p });
    expect(r.status).toBe('imported');
    expect(readScanDefects(db, 'L1-01@2026-03-03T06:40:00Z')?.count).toBe(0);
  });

  it('maps a lower-left origin, back view and µm units to the centre frame', async () => {
    const db = freshDb();
    // origin at the lower-left corner of the 300 mm square, seen from the back, notch at 270° in the
    // file's axes: (150 000, 150 000) µm is the centre; (160 000, 150 000) µm is 10 mm to the file's
    // right, which seen from the front is 10 mm to the left: (−0.01, 0) (hand computation).
    const p = temp(
      'scans-corner.csv',
      `${head(['# coordinates: origin=lower-left x=right y=up view=back', '# notch_deg: 270'])}\nx_um,y_um,size_um,class\n150000,150000,0.045,particle\n160000,150000,0.1,particle\n`,
    );
    const r = await importFile(db, { kind: 'scans', path: p });
    expect(r.issues).toEqual([]);
    const d = readScanDefects(db, 'L1-01@2026-03-03T06:40:00Z')!;
    expect(Array.from(d.xM)).toEqual([0, -0.01]);
    expect(Array.from(d.yM)).toEqual([0, 0]);
    // 0.045 µm equals the 45 nm threshold (kept, not "below").
    expect(d.diameterM[0]).toBe(45e-9);
  });

  it('flags defects in the edge exclusion, without a class, and repeated rows, storing them all', async () => {
    const db = freshDb();
    const p = temp(
      'scans-flags.csv',
      `${head(['# coordinates: origin=centre x=right y=up view=front', '# notch_deg: 270'])}\nx_mm,y_mm,size_nm,class\n0,-148.5,60,particle\n1,1,60,\n1,1,60,\n`,
    );
    const r = await importFile(db, { kind: 'scans', path: p });
    expect(r.status).toBe('imported');
    expect(r.flags.map((f) => [f.code, f.count])).toEqual([
      ['in-edge-exclusion', 1],
      ['class-missing', 2],
      ['repeated-defect', 1],
    ]);
    expect(readScanDefects(db, 'L1-01@2026-03-03T06:40:00Z')?.count).toBe(3);
  });

  it('skips a scan stored with the same content from another file and refuses other content', async () => {
    const db = freshDb();
    const conv = ['# coordinates: origin=centre x=right y=up view=front', '# notch_deg: 270'];
    const a = temp('scans-a.csv', `${head(conv)}\nx_mm,y_mm,size_nm,class\n1,2,60,particle\n`);
    const b = temp('scans-b.csv', `${head(conv)}\nx_mm , y_mm,size_nm,class\n1,2,60,particle\n`);
    const c = temp('scans-c.csv', `${head(conv)}\nx_mm,y_mm,size_nm,class\n1,2,61,particle\n`);
    expect((await importFile(db, { kind: 'scans', path: a })).status).toBe('imported');
    const rb = await importFile(db, { kind: 'scans', path: b });
    expect(rb.status).toBe('imported');
    expect(rb.notes.some((n) => n.includes('stored already with the same content'))).toBe(true);
    const rc = await importFile(db, { kind: 'scans', path: c });
    expect(rc.status).toBe('rejected');
    expect(rc.issues[0]?.rule).toBe(
      'scan "L1-01@2026-03-03T06:40:00Z" is stored already (import #1) with other content; give the new scan its own scan_id',
    );
  });
});
