/**
 * Learning from a small invented line (src/engine/learn): files written here from a seeded
 * scenario with known adders and a known removal curve are imported through the real import
 * pipeline; learning must recover what the scenario used (within the fits' intervals: the
 * statistical recovery over many repetitions is in test/unit/model/adders-fit.test.ts and
 * removal-fit.test.ts), and refuse the bad cases with messages naming the records — a wafer scanned
 * twice after one pass, a wafer with no scan before the tool, scans in another frame (a wafer size
 * that differs; positions written mirrored under a front-side convention), an open carrier between
 * the scans, two tool steps between the scans.
 *
 * Sources: the scenario's own truth (stated below); messages as the engine words them.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { learnAdders, learnRemoval } from '../../src/engine/learn/index.ts';
import type { AddersReport, RemovalReport } from '../../src/engine/learn/types.ts';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportKindName } from '../../src/ingest/types.ts';
import { createRng, type Rng } from '../../src/model/rng.ts';
import { type Db, migrate, openDatabase } from '../../src/store/db.ts';
import { good } from './import-kinds-fixtures.ts';

const R_MM = 147; // usable radius, mm
const STAGE_UM = 20; // stage error per scan and axis, µm
// Truth: ACT-9/P1 adds 12 per pass ≥ 60 nm (1.5 × the 40 nm threshold), cumulative slope 1.3.
const ADDERS_AT_60 = 12;
const ADDER_SLOPE = 1.3;
// Truth: clean RNS-CLEAN removes E_max / (1 + (d50/d)^k), E_max 0.95, d50 70 nm, k 2.6.
const CLEAN = { e: 0.95, d50Nm: 70, k: 2.6 };

interface P {
  x: number; // mm
  y: number;
  d: number; // nm
}

function disc(rng: Rng): [number, number] {
  const r = (R_MM - 1) * Math.sqrt(rng.uniform());
  const t = 2 * Math.PI * rng.uniform();
  return [r * Math.cos(t), r * Math.sin(t)];
}

function powerLaw(rng: Rng, n: number, fromNm: number, slope: number): P[] {
  return Array.from({ length: n }, () => {
    const [x, y] = disc(rng);
    return { x, y, d: fromNm * (1 - rng.uniform()) ** (-1 / slope) };
  });
}

/** What a scanner with a 40 nm threshold reports: stage error, 3 % size error, nothing below 40 nm. */
function scanned(rng: Rng, ps: P[], mirror = false): P[] {
  const out: P[] = [];
  for (const p of ps) {
    const d = p.d * Math.exp(0.03 * rng.normal());
    if (d < 40) continue;
    const x = p.x + (STAGE_UM / 1000) * rng.normal();
    out.push({ x: mirror ? -x : x, y: p.y + (STAGE_UM / 1000) * rng.normal(), d: Math.min(d, 5000) });
  }
  return out;
}

interface Scan {
  id: string;
  wafer: string;
  time: string;
  defects: P[];
}

function scansCsv(scans: Scan[], diameterMm = 300): string {
  const rows = [
    '# format: voidcast scans 1',
    '# tool: SCN-9',
    '# threshold_nm: 40',
    `# wafer_diameter_mm: ${diameterMm}`,
    '# edge_exclusion_mm: 3',
    '# coordinates: origin=centre x=right y=up view=front',
    '# notch_deg: 270',
    'record,scan_id,lot,wafer,step,scan_time,x_mm,y_mm,size_nm,class',
  ];
  for (const s of scans) {
    rows.push(`scan,${s.id},LM1,${s.wafer},scan,${s.time},,,,`);
    for (const d of s.defects)
      rows.push(`defect,${s.id},,,,,${d.x.toFixed(4)},${d.y.toFixed(4)},${d.d.toFixed(2)},particle`);
  }
  return `${rows.join('\n')}\n`;
}

const TOOLS = JSON.stringify({
  format: 'voidcast tools 1',
  tools: [
    { id: 'SCN-9', name: 'Scanner 9', kind: 'inspection', adders: null },
    {
      id: 'ACT-9',
      name: 'Activation 9',
      kind: 'activation',
      adders: null,
      chambers: [
        { chamber: 'P1', adders: { model: 'power-law', countAbove: 20, atDiameterNm: 45, slope: 1.5 } },
      ],
    },
    { id: 'RNS-9', name: 'Rinse 9', kind: 'clean', adders: null },
    { id: 'STK-9', name: 'Stocker 9', kind: 'storage', adders: null },
  ],
  cleans: [
    {
      id: 'RNS-CLEAN',
      name: 'Rinse 9 clean',
      tool: 'RNS-9',
      recipe: 'R1',
      removal: { model: 'logistic-log-d', maxEfficiency: 0.99, d50Nm: 40, widthDecades: 0.25 },
    },
  ],
});

const LEDGER_HEAD = [
  '# format: voidcast ledger 1',
  'lot,wafer,step,step_kind,tool,chamber,recipe,clean,location,carrier,orientation,start,end,reclean_count',
];

function t(minute: number): string {
  const h = Math.floor(minute / 60);
  const m = minute % 60;
  return `2026-05-04T${String(8 + h).padStart(2, '0')}:${String(m).padStart(2, '0')}:00Z`;
}

function step(
  wafer: string,
  name: string,
  kind: string,
  tool: string,
  from: number,
  to: number,
  extra: Partial<Record<'chamber' | 'recipe' | 'carrier', string>> = {},
): string {
  return `LM1,${wafer},${name},${kind},${tool},${extra.chamber ?? ''},${extra.recipe ?? ''},,BOND-BAY,${extra.carrier ?? (kind === 'wait' ? 'closed' : 'in-tool')},face-up,${t(from)},${t(to)},0`;
}

describe('learning from an invented line', () => {
  let dir: string;
  let db: Db;
  let adders: AddersReport;
  let removal: RemovalReport;
  beforeAll(async () => {
    dir = mkdtempSync(join(tmpdir(), 'voidcast-learn-'));
    const rng = createRng(20260504);
    const scans: Scan[] = [];
    const frame200: Scan[] = [];
    const ledger = [...LEDGER_HEAD];
    let minute = 0;
    const wafer = (n: number) => `LM1-${String(n).padStart(2, '0')}`;
    const residents = () => powerLaw(rng, 25, 45, 1.2);
    const adderDraw = () => powerLaw(rng, rng.poisson(ADDERS_AT_60), 60, ADDER_SLOPE);
    const pass = (w: string, m: number) =>
      step(w, 'activation', 'activation', 'ACT-9', m + 3, m + 5, { chamber: 'P1' });
    const scanStep = (w: string, m: number) => step(w, 'scan', 'inspection', 'SCN-9', m, m + 1);
    // 01–08: good adder monitors.
    for (let n = 1; n <= 8; n++, minute += 10) {
      const w = wafer(n);
      const before = residents();
      const after = [...before, ...adderDraw()];
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, after) });
      ledger.push(
        scanStep(w, minute),
        step(w, 'wait', 'wait', '', minute + 1, minute + 3),
        pass(w, minute),
        scanStep(w, minute + 7),
      );
    }
    // 09: scanned twice after one pass.
    {
      const w = wafer(9);
      const before = residents();
      const after = [...before, ...adderDraw()];
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, after) });
      scans.push({ id: `${w}-POST-AGAIN`, wafer: w, time: t(minute + 9), defects: scanned(rng, after) });
      ledger.push(scanStep(w, minute), pass(w, minute), scanStep(w, minute + 7), scanStep(w, minute + 9));
      minute += 12;
    }
    // 10: no scan before the tool.
    {
      const w = wafer(10);
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, residents()) });
      ledger.push(pass(w, minute), scanStep(w, minute + 7));
      minute += 10;
    }
    // 11: the post-scan states a 200 mm wafer (another frame).
    {
      const w = wafer(11);
      const before = residents().filter((p) => Math.hypot(p.x, p.y) < 90);
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      frame200.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, before) });
      ledger.push(scanStep(w, minute), pass(w, minute), scanStep(w, minute + 7));
      minute += 10;
    }
    // 12: the post-scan's positions are mirrored although the file declares a front-side convention.
    {
      const w = wafer(12);
      const before = [...residents(), ...residents()];
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, before, true) });
      ledger.push(scanStep(w, minute), pass(w, minute), scanStep(w, minute + 7));
      minute += 10;
    }
    // 13: an open carrier between the scans; 14: two tool steps between them.
    {
      const w = wafer(13);
      const before = residents();
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, before) });
      ledger.push(
        scanStep(w, minute),
        step(w, 'open wait', 'wait', '', minute + 1, minute + 3, { carrier: 'open' }),
        pass(w, minute),
        scanStep(w, minute + 7),
      );
      minute += 10;
      const w2 = wafer(14);
      scans.push({ id: `${w2}-PRE`, wafer: w2, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w2}-POST`, wafer: w2, time: t(minute + 7), defects: scanned(rng, before) });
      ledger.push(
        scanStep(w2, minute),
        step(w2, 'stocker', 'transfer', 'STK-9', minute + 1, minute + 2, { carrier: 'closed' }),
        pass(w2, minute),
        scanStep(w2, minute + 7),
      );
      minute += 10;
    }
    // 21–24: seeded wafers through the clean (600 spheres from 40 nm, slope 0.8, up to 3 µm).
    for (let n = 21; n <= 24; n++, minute += 10) {
      const w = wafer(n);
      const before = powerLaw(rng, 600, 40, 0.8).filter((p) => p.d < 3000);
      const after = before.filter((p) => rng.uniform() >= CLEAN.e / (1 + (CLEAN.d50Nm / p.d) ** CLEAN.k));
      scans.push({ id: `${w}-PRE`, wafer: w, time: t(minute), defects: scanned(rng, before) });
      scans.push({ id: `${w}-POST`, wafer: w, time: t(minute + 7), defects: scanned(rng, after) });
      ledger.push(
        scanStep(w, minute),
        step(w, 'rinse', 'clean', 'RNS-9', minute + 3, minute + 5, { recipe: 'R1' }),
        scanStep(w, minute + 7),
      );
    }
    const files: [ImportKindName, string, string][] = [
      ['tools', 'tools.json', TOOLS],
      ['scans', 'scans.csv', scansCsv(scans)],
      ['scans', 'scans-200mm.csv', scansCsv(frame200, 200)],
      ['ledger', 'ledger.csv', `${ledger.join('\n')}\n`],
    ];
    db = openDatabase(':memory:');
    migrate(db);
    const loc = await importFile(db, { kind: 'locations', path: good('locations-for-ledger.csv') });
    expect(loc.status).toBe('imported');
    for (const [kind, name, text] of files) {
      writeFileSync(join(dir, name), text);
      const r = await importFile(db, { kind, path: join(dir, name) });
      if (r.status !== 'imported')
        throw new Error(`${name}: ${r.status} ${JSON.stringify(r.issues.slice(0, 3))}`);
    }
    // One seeded scenario checks six intervals: at 99.7 % each, the chance that any misses the truth
    // by chance alone is below 2 % — this is a check of the wiring; nominal 95 % coverage is tested
    // over 200 repetitions in the model's tests.
    adders = learnAdders(db, { nowMs: Date.parse('2026-05-05T00:00:00Z'), confidence: 0.997 });
    removal = learnRemoval(db, { nowMs: Date.parse('2026-05-05T00:00:00Z'), confidence: 0.997 });
  }, 60_000);
  afterAll(() => {
    db.close();
    rmSync(dir, { recursive: true, force: true });
  });

  it('recovers the adders per pass and the slope of ACT-9/P1 within their intervals, from the 8 good passes', () => {
    const a = adders.results.find((r) => r.toolKey === 'ACT-9/P1')!;
    expect(a.passes.map((p) => p.waferId)).toEqual([1, 2, 3, 4, 5, 6, 7, 8].map((n) => `LM1-0${n}`));
    expect(a.referenceM).toBeCloseTo(60e-9, 15);
    const p = a.proposal!;
    expect(p.countLow).toBeLessThanOrEqual(ADDERS_AT_60);
    expect(p.countHigh).toBeGreaterThanOrEqual(ADDERS_AT_60);
    expect(a.fit!.slopeLow!).toBeLessThanOrEqual(ADDER_SLOPE);
    expect(a.fit!.slopeHigh!).toBeGreaterThanOrEqual(ADDER_SLOPE);
    expect(p.passes).toBe(8);
    expect(p.data).toContain('LM1-01-PRE');
    expect(p.fittedAtMs).toBe(Date.parse('2026-05-05T00:00:00Z'));
    // The typed value beside: 20 at 45 nm, slope 1.5 → 20 (60/45)^−1.5 = 12.99 at 60 nm.
    expect(a.typed!.countAtReference).toBeCloseTo(20 * (60 / 45) ** -1.5, 9);
    // The positioning error is estimated from the scans: 20 µm per scan → 28.3 µm per axis between two.
    expect(adders.position.source).toBe('estimated');
    expect(adders.position.sigmaM).toBeGreaterThan(22e-6);
    expect(adders.position.sigmaM).toBeLessThan(34e-6);
  });

  it('a wafer scanned twice after one pass: the pass is left out, both scans named with file and line', () => {
    const notes = adders.results.find((r) => r.toolKey === 'ACT-9/P1')!.notes.join('\n');
    expect(notes).toMatch(
      /wafer LM1-09 was scanned twice after one pass through ACT-9\/P1 \(ledger\.csv line \d+, [^)]+\): scan LM1-09-POST \(scans\.csv line \d+\) and scan LM1-09-POST-AGAIN \(scans\.csv line \d+\) with no step between them/,
    );
  });

  it('a wafer with no scan before the tool is named', () => {
    const notes = adders.results.find((r) => r.toolKey === 'ACT-9/P1')!.notes.join('\n');
    expect(notes).toMatch(
      /1 wafer \(LM1-10\) went through ACT-9\/P1 with a scan after it but no scan before/,
    );
  });

  it('scans in another frame: a different wafer size, and positions mirrored under a front-side convention', () => {
    const notes = adders.results.find((r) => r.toolKey === 'ACT-9/P1')!.notes.join('\n');
    expect(notes).toMatch(
      /wafer LM1-11: scan LM1-11-PRE \(scans\.csv line \d+\) states a 300 mm wafer and scan LM1-11-POST \(scans-200mm\.csv line \d+\) a 200 mm one/,
    );
    expect(notes).toMatch(
      /wafer LM1-12: scan LM1-12-PRE \(scans\.csv line \d+\) \(\d+ defects, convention [^)]+\) and scan LM1-12-POST \(scans\.csv line \d+\) .* share only \d defects/,
    );
  });

  it('an open carrier and two tool steps between the scans are refused with the steps named', () => {
    const notes = adders.results.find((r) => r.toolKey === 'ACT-9/P1')!.notes.join('\n');
    expect(notes).toMatch(
      /wafer LM1-13: between scan LM1-13-PRE .* the carrier is open during "open wait" \(ledger\.csv line \d+\)/,
    );
    expect(notes).toMatch(
      /wafer LM1-14: 2 tool steps \("stocker" on STK-9, "activation" on ACT-9\/P1\) lie between/,
    );
  });

  it('recovers the clean’s removal curve within its intervals and keeps its own adders apart', () => {
    const r = removal.results.find((x) => x.cleanId === 'RNS-CLEAN')!;
    expect(r.passes).toHaveLength(4);
    const p = r.proposal!;
    expect(p.halfSizeLowM).toBeLessThanOrEqual(CLEAN.d50Nm * 1e-9);
    expect(p.halfSizeHighM).toBeGreaterThanOrEqual(CLEAN.d50Nm * 1e-9);
    const w = 1 / (CLEAN.k * Math.LN10);
    expect(p.widthLowDecades).toBeLessThanOrEqual(w);
    expect(p.widthHighDecades).toBeGreaterThanOrEqual(w);
    expect(r.fit!.maxEfficiencyFitted).toBe(true);
    expect(r.fit!.maxEfficiencyLow!).toBeLessThanOrEqual(CLEAN.e);
    expect(r.fit!.maxEfficiencyHigh!).toBeGreaterThanOrEqual(CLEAN.e);
    // Data points: survival per band with intervals that hold the survival; the curve with its band.
    for (const b of r.bands) {
      expect(b.wilsonLow).toBeLessThanOrEqual(b.survival);
      expect(b.clopperPearsonHigh).toBeGreaterThanOrEqual(b.survival);
      expect(b.n).toBe(b.survived + b.removed);
    }
    expect(r.bands.reduce((s, b) => s + b.n, 0)).toBe(r.particles);
    expect(r.curve.length).toBeGreaterThan(10);
    // This clean adds nothing in the scenario: its own adders are near zero and reported apart.
    expect(r.ownAdders!.passes).toBe(4);
    expect(r.ownAdders!.meanPerPass).toBeLessThan(1);
  });

  it('proposes nothing where the data are too thin, and says why with the numbers', () => {
    const one = learnAdders(db, { toolId: 'STK-9' });
    const s = one.results.find((r) => r.toolKey === 'STK-9')!;
    expect(s.proposal).toBeNull();
    expect(s.tooLittle).toBe('too little data: no pass through this tool lies between two scans of a wafer');
    const unknown = learnRemoval(db, { cleanId: 'NO-SUCH' });
    expect(unknown.results[0]!.tooLittle).toMatch(/no pass through this clean/);
  });
});
