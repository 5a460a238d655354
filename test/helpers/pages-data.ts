/**
 * A small line for page tests, built through the real import paths (importFile), so the pages
 * read what an import stores. Names carry markup, quotes and ampersands on purpose: pages must
 * show them escaped.
 *
 * Counter data: two locations sampled continuously in 15-min samples (424.5 L each, a 28.3 L/min
 * counter) for 24 h from 2025-03-03T00:00Z, with a 2¾-hour gap (samples 41–51 missing) and one
 * excursion in Bay 3 at 17:30 (sample 70). Concentrations are stated per 28.3 L below.
 */
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { importFile } from '../../src/ingest/pipeline.ts';
import type { ImportKindName, ImportReport } from '../../src/ingest/types.ts';
import type { Db } from '../../src/store/db.ts';

export const HOSTILE = `<script>alert(1)</script> "Bay" & Co's`;
export const T0_MS = Date.UTC(2025, 2, 3, 0, 0);
const MIN = 60_000;

function csvCell(s: string): string {
  return /[",\n]/.test(s) ? `"${s.replaceAll('"', '""')}"` : s;
}

export const LOCATIONS_CSV = [
  'location_id,parent_id,level,name,environment,iso_class,floor_area_m2,alert_ge_0.5um_per_m3,action_ge_0.5um_per_m3',
  'site-a,,site,Site A,open-room,,,,',
  `fab-1,site-a,area,${csvCell(`Bonding ${HOSTILE}`)},open-room,5,52,,`,
  `bay-3,fab-1,bay,${csvCell(`Bay 3 ${HOSTILE}`)},open-room,5,,12000,13000`,
  'me-1,fab-1,bay,Bonder mini-environment,mini-environment,3,,40,60',
  '',
].join('\n');

/** Deterministic counts (no randomness): Bay 3 ~300 ≥ 0.5 µm per 28.3 L, the mini-environment ~0–1 per 28.3 L. */
export function counterCsv(): string {
  const rows = [
    '# units: counts=raw',
    'counter_id,location_id,start,duration_s,volume_L,status,ge_0.1um,ge_0.3um,ge_0.5um,ge_1um',
  ];
  for (const [loc, base] of [
    ['bay-3', 300],
    ['me-1', 0],
  ] as const) {
    for (let i = 0; i < 96; i++) {
      if (i > 40 && i < 52) continue;
      const t = new Date(T0_MS + i * 15 * MIN).toISOString().replace('.000Z', 'Z');
      const c05 =
        base +
        (i % 7) * (base > 0 ? 5 : 0) +
        (loc === 'me-1' && i % 5 === 0 ? 1 : 0) +
        (loc === 'bay-3' && i === 70 ? 80 : 0);
      const k = 15; // 15 × 28.3 L per sample
      rows.push(
        `CPC-${loc},${loc},${t},900,424.5,ok,${c05 * 8 * k},${c05 * 2 * k},${c05 * k},${Math.floor(c05 / 4) * k}`,
      );
    }
  }
  return `${rows.join('\n')}\n`;
}

/** Tools with adders (power law, bands, none) and three cleans: stated logistic, fittable bands, too few bands. */
export const TOOLS_JSON = JSON.stringify(
  {
    format: 'voidcast tools 1',
    tools: [
      {
        id: 'BOND-1',
        name: `Bonder ${HOSTILE}`,
        kind: 'bonder',
        adders: { model: 'power-law', countAbove: 1.5, atDiameterNm: 45, slope: 1.8 },
        adderUncertaintyFactor: 2,
        chambers: [
          { chamber: 'ALN', adders: { model: 'power-law', countAbove: 0.6, atDiameterNm: 45, slope: 2 } },
        ],
      },
      {
        id: 'ACT-1',
        name: 'Plasma activation',
        kind: 'activation',
        adders: {
          model: 'bands',
          bands: [
            { fromNm: 45, toNm: 100, count: 2 },
            { fromNm: 100, toNm: 1000, count: 0.5 },
          ],
        },
      },
      { id: 'STK-1', name: 'Stocker', kind: 'storage', adders: null },
      {
        id: 'CLN-1',
        name: 'Single-wafer clean',
        kind: 'clean',
        adders: { model: 'power-law', countAbove: 0.3, atDiameterNm: 45, slope: 2 },
      },
    ],
    cleans: [
      {
        id: 'PBC-MEG',
        name: 'Pre-bond megasonic clean',
        tool: 'CLN-1',
        recipe: 'MEG-A',
        removal: { model: 'logistic-log-d', maxEfficiency: 0.99, d50Nm: 30, widthDecades: 0.2 },
      },
      {
        id: 'RINSE',
        name: `Rinse ${HOSTILE}`,
        tool: null,
        removal: {
          model: 'bands',
          bands: [
            { fromNm: 30, toNm: 50, before: 400, after: 220 },
            { fromNm: 50, toNm: 100, before: 300, after: 80 },
            { fromNm: 100, toNm: 300, before: 200, after: 16 },
            { fromNm: 300, toNm: 1000, before: 100, after: 3 },
          ],
        },
      },
      {
        id: 'DIW',
        name: 'Water rinse',
        tool: null,
        removal: {
          model: 'bands',
          bands: [
            { fromNm: 50, toNm: 100, before: 100, after: 60 },
            { fromNm: 100, toNm: 300, before: 80, after: 30 },
          ],
        },
      },
    ],
  },
  null,
  2,
);

/**
 * The product: test/fixtures/good/products-hybrid-300.json (HB300-LOGIC, re-clean PBC-MEG) with a
 * looser spec than that fixture's zero-void one, so that the page line shows all three calls.
 */
export const PRODUCT_JSON = (() => {
  const p = JSON.parse(
    readFileSync(new URL('../fixtures/good/products-hybrid-300.json', import.meta.url), 'utf8'),
  );
  p.spec = {
    ...p.spec,
    version: 'page-test spec 1',
    maxVoids: 8,
    maxUnbondedFraction: 0.05,
    minDieYield: 0.6,
  };
  return JSON.stringify(p, null, 2);
})();

/**
 * Lot L-01 waits to bond (three pairs: few particles → bond; many → re-clean; many with the
 * re-clean limit reached → hold); lot L-02 is bonded (one pair, bonded before AS_OF_MS).
 */
export const LOT = 'L-01';
export const WAFERS = ['L-01-01', 'L-01-02', 'L-01-03', 'L-01-04', 'L-01-05', 'L-01-06'];
export const BONDED_LOT = 'L-02';
export const BONDED_WAFERS = ['L-02-01', 'L-02-02'];
/** Detected particles per wafer in its pre-bond scan. */
const PARTICLES: Record<string, number> = {
  'L-01-01': 3,
  'L-01-02': 4,
  'L-01-03': 25,
  'L-01-04': 30,
  'L-01-05': 25,
  'L-01-06': 30,
  'L-02-01': 2,
  'L-02-02': 3,
};
/** The pages assess at this time: after the last step, before L-01's planned bonds, after L-02's. */
export const AS_OF_MS = Date.UTC(2025, 2, 3, 20, 0);

const iso = (h: number, m = 0) => new Date(T0_MS + (h * 60 + m) * MIN).toISOString().replace('.000Z', 'Z');
const lotOf = (w: string) => w.slice(0, 4);

/** One pre-bond scan per wafer at 14:00 (45 nm threshold, centre origin), particles on a spiral, 45–400 nm. */
export function scansCsv(): string {
  const rows = [
    '# format: voidcast scans 1',
    '# tool: SCN-1',
    '# recipe: PREBOND-45',
    '# threshold_nm: 45',
    '# wafer_diameter_mm: 300',
    '# edge_exclusion_mm: 3',
    '# coordinates: origin=centre x=right y=up view=front',
    '# notch_deg: 270',
    'record,scan_id,lot,wafer,step,scan_time,x_mm,y_mm,size_nm,class',
  ];
  [...WAFERS, ...BONDED_WAFERS].forEach((w, k) => {
    const n = PARTICLES[w]!;
    rows.push(`scan,${w}-PB,${lotOf(w)},${w},pre-bond inspection,${iso(14)},,,,`);
    for (let i = 0; i < n; i++) {
      const r = 12 + (125 * (i + 1)) / n;
      const a = i * 2.399 + k;
      const size = 46 * (400 / 46) ** ((((i * 7) % n) / n) ** 2);
      rows.push(
        `defect,${w}-PB,,,,,${(r * Math.cos(a)).toFixed(3)},${(r * Math.sin(a)).toFixed(3)},${size.toFixed(1)},particle`,
      );
    }
  });
  return `${rows.join('\n')}\n`;
}

/**
 * Every wafer: clean on CLN-1 (PBC-MEG) 12:00–12:30, scan, a closed-carrier wait in Bay 3
 * 14:30–17:30, activation on ACT-1, an open wait in the bonder's mini-environment 18:15–19:30.
 * L-01-05 and L-01-06 have had two re-cleans already (the product's limit).
 */
/**
 * A later scan of wafer L-01-01 (pair P-01 of the waiting lot L-01), 15 h after T0 (before the
 * clock): 40 particles of 900 nm. Importing it changes P-01's inputs and starts a new data generation.
 */
export function rescanCsv(): string {
  const iso = new Date(T0_MS + 15 * 3_600_000).toISOString().replace('.000Z', 'Z');
  return [
    '# format: voidcast scans 1',
    '# tool: SCN-1',
    '# threshold_nm: 45',
    '# wafer_diameter_mm: 300',
    '# edge_exclusion_mm: 3',
    '# coordinates: origin=centre x=right y=up view=front',
    '# notch_deg: 270',
    'record,scan_id,lot,wafer,step,scan_time,x_mm,y_mm,size_nm,class',
    `scan,L-01-01-RS,L-01,L-01-01,re-scan,${iso},,,,`,
    ...Array.from({ length: 40 }, (_, i) => `defect,L-01-01-RS,,,,,${i * 3 - 60},${i - 20},900,particle`),
    '',
  ].join('\n');
}

export function ledgerCsv(): string {
  const rows = [
    'lot,wafer,step,step_kind,tool,chamber,recipe,clean,location,carrier,orientation,start,end,reclean_count',
  ];
  for (const w of [...WAFERS, ...BONDED_WAFERS]) {
    const rc = w === 'L-01-05' || w === 'L-01-06' ? 2 : 0;
    const lot = lotOf(w);
    rows.push(
      `${lot},${w},post-CMP clean,clean,CLN-1,,MEG-A,PBC-MEG,,in-tool,,${iso(12)},${iso(12, 30)},${rc}`,
    );
    rows.push(`${lot},${w},pre-bond inspection,inspection,SCN-1,,,,,in-tool,,${iso(14)},${iso(14, 5)},${rc}`);
    rows.push(`${lot},${w},Q-time wait,wait,,,,,bay-3,closed,,${iso(14, 30)},${iso(17, 30)},${rc}`);
    rows.push(`${lot},${w},plasma activation,activation,ACT-1,,,,,in-tool,,${iso(18)},${iso(18, 10)},${rc}`);
    rows.push(`${lot},${w},load at bonder,wait,,,,,me-1,open,,${iso(18, 15)},${iso(19, 30)},${rc}`);
  }
  return `${rows.join('\n')}\n`;
}

/** L-01's pairs are planned for 21:00 (after AS_OF_MS: waiting); L-02's pair bonded at 19:40. */
export function pairsCsv(): string {
  return [
    'pair,product,top_wafer,bottom_wafer,flip_axis,rotation_deg,offset_x_mm,offset_y_mm,bonder,planned_bond_time,lot',
    `P-01,HB300-LOGIC,L-01-02,L-01-01,y,0,0,0,BOND-1,${iso(21)},${LOT}`,
    `P-02,HB300-LOGIC,L-01-04,L-01-03,y,0,0,0,BOND-1,${iso(21)},${LOT}`,
    `P-03,HB300-LOGIC,L-01-06,L-01-05,y,0,0,0,BOND-1,${iso(21)},${LOT}`,
    `P-04,HB300-LOGIC,L-02-02,L-02-01,y,0,0,0,BOND-1,${iso(19, 40)},${BONDED_LOT}`,
    '',
  ].join('\n');
}

/** The files of the full line, in import order. */
export function lineFiles(): { kind: ImportKindName; name: string; text: string }[] {
  return [
    { kind: 'products', name: 'product.json', text: PRODUCT_JSON },
    { kind: 'scans', name: 'scans.csv', text: scansCsv() },
    { kind: 'ledger', name: 'ledger.csv', text: ledgerCsv() },
    { kind: 'pairs', name: 'pairs.csv', text: pairsCsv() },
  ];
}

export interface LineFiles {
  dir: string;
  reports: ImportReport[];
  cleanup: () => void;
}

/** Writes the files to a temporary directory and imports them; throws when an import is rejected. */
export async function importPageLine(
  db: Db,
  extra: { kind: ImportKindName; name: string; text: string }[] = [],
): Promise<LineFiles> {
  const dir = mkdtempSync(join(tmpdir(), 'voidcast-pages-'));
  const files: { kind: ImportKindName; name: string; text: string }[] = [
    { kind: 'locations', name: 'locations.csv', text: LOCATIONS_CSV },
    { kind: 'counter-samples', name: 'counters.csv', text: counterCsv() },
    { kind: 'tools', name: 'tools.json', text: TOOLS_JSON },
    ...extra,
  ];
  const reports: ImportReport[] = [];
  for (const f of files) {
    const path = join(dir, f.name);
    writeFileSync(path, f.text);
    const r = await importFile(db, { kind: f.kind, path });
    if (r.status === 'rejected')
      throw new Error(
        `${f.name} was rejected: ${r.issues.map((i) => `${i.line}:${i.column} ${i.rule}`).join('; ')}`,
      );
    reports.push(r);
  }
  return { dir, reports, cleanup: () => rmSync(dir, { recursive: true, force: true }) };
}
