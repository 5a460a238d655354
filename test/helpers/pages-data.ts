/**
 * A small line for page tests, built through the real import paths (importFile), so the pages
 * read what an import stores. Names carry markup, quotes and ampersands on purpose: pages must
 * show them escaped.
 *
 * Counter data: two locations sampled every 15 min for 24 h from 2025-03-03T00:00Z with a
 * 2¾-hour gap (samples 41–51 missing) and one excursion in Bay 3 at 17:30 (sample 70).
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
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

/** Deterministic counts (no randomness): Bay 3 ~300 ≥ 0.5 µm per 28.3 L sample, the mini-environment ~0–1. */
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
      rows.push(`CPC-${loc},${loc},${t},60,28.3,ok,${c05 * 8},${c05 * 2},${c05},${Math.floor(c05 / 4)}`);
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
