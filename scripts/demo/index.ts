/**
 * The demo generator: draws the whole Tramontane scenario and writes the files of sample-counts/.
 *
 * Deterministic: the same code and seed write the same bytes (test/integration/demo-generator.test.ts
 * regenerates into a temporary directory and compares with the committed files). The manifest
 * (sample-counts/manifest.json) lists the files in the order they must be imported (references first).
 */
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { INSPECTIONS, pairInterface } from './bonded.ts';
import { COUNTED_LOCATIONS, DEMO_AS_OF_MS, DEMO_SEED, lineClean, lineTool, PRODUCT } from './line.ts';
import {
  LOTS,
  type LotPlan,
  MONITOR_LOT,
  MONITORS,
  PAIRS_PER_LOT,
  WAFERS_PER_LOT,
  waferId,
  waferLedger,
} from './lots.ts';
import { survivalThrough } from './physics.ts';
import { stream } from './random.ts';
import {
  drawAdders,
  drawPowerLaw,
  scanSurface,
  type TruthParticle,
  type WaferSurface,
  waferSurface,
} from './surfaces.ts';
import { json } from './text.ts';
import { AREAS, countersCsv, locationsCsv, productJson, toolsJson } from './write-reference.ts';
import { ledgerCsv, monitorLedgerCsv, pairsCsv, voidInspectionCsv } from './write-route.ts';
import {
  MONITOR_SCANNER,
  POST_CLEAN_SCANNER,
  PRE_BOND_SCANNER,
  type ScannerSpec,
  type ScanRecord,
  scansCsv,
} from './write-scans.ts';

export type DemoKind =
  | 'locations'
  | 'tools'
  | 'products'
  | 'counter-samples'
  | 'scans'
  | 'ledger'
  | 'pairs'
  | 'void-inspections';

export interface ManifestEntry {
  kind: DemoKind;
  /** Path relative to the demo directory, with forward slashes. */
  path: string;
  title: string;
}

export interface DemoFile extends ManifestEntry {
  text: string;
}

/** Import order: what a file refers to is imported before it. */
export const KIND_ORDER: readonly DemoKind[] = [
  'locations',
  'tools',
  'products',
  'counter-samples',
  'scans',
  'ledger',
  'pairs',
  'void-inspections',
];

const lotSurfaces = new Map<string, WaferSurface[]>();

/** Truth of every wafer of a lot at its inspections (memoised). */
export function surfacesOf(lot: LotPlan): WaferSurface[] {
  const hit = lotSurfaces.get(lot.id);
  if (hit) return hit;
  const stocker = lineTool('ZSTK-1').adders!;
  const out = Array.from({ length: WAFERS_PER_LOT }, (_, i) =>
    waferSurface(lot, i + 1, waferId(lot.id, i + 1), stocker),
  );
  lotSurfaces.set(lot.id, out);
  return out;
}

function scanThreshold(spec: ScannerSpec) {
  return { thresholdM: spec.thresholdNm * 1e-9, edgeExclusionM: spec.edgeExclusionMm * 1e-3 };
}

function lotScans(lot: LotPlan, point: 'post-clean' | 'pre-bond'): ScanRecord[] {
  const spec = point === 'post-clean' ? POST_CLEAN_SCANNER : PRE_BOND_SCANNER;
  return surfacesOf(lot).map((w, i) => {
    const step = waferLedger(lot, i + 1).find((s) => s.scan === point)!;
    const particles = point === 'post-clean' ? w.postClean : w.preBond;
    return {
      scanId: `${w.waferId}-${point === 'post-clean' ? 'PC' : 'PB'}`,
      lotId: lot.id,
      waferId: w.waferId,
      step: step.step,
      timeMs: step.startMs + 60_000,
      defects: scanSurface(`${w.waferId}:${point}`, particles, w.nonParticle, scanThreshold(spec)),
    };
  });
}

/** Monitor wafers: pre-scan, one pass through a tool (adders) or a clean (removal), post-scan. */
export function monitorScans(): ScanRecord[] {
  const out: ScanRecord[] = [];
  const spec = scanThreshold(MONITOR_SCANNER);
  for (const m of MONITORS) {
    const rng = stream(`monitor:${m.waferId}`);
    let ps: TruthParticle[] =
      m.seededAbove40nm > 0
        ? drawPowerLaw(rng, rng.poisson(m.seededAbove40nm * (40 / 30) ** 0.9), 0.9, 'seeded', 30e-9)
        : drawPowerLaw(rng, rng.poisson(6), 1.5, 'monitor');
    ps = ps.filter((p) => p.dM <= 2e-6);
    const pre: ScanRecord = {
      scanId: `${m.waferId}-PRE`,
      lotId: MONITOR_LOT,
      waferId: m.waferId,
      step: 'monitor pre-scan',
      timeMs: m.preScanMs,
      defects: scanSurface(`${m.waferId}:pre`, ps, [], spec),
    };
    let after = ps;
    if (m.cleanId) {
      const clean = lineClean(m.cleanId);
      after = ps.filter((p) => rng.uniform() < survivalThrough(clean, p.dM));
      after.push(...drawAdders(rng, lineTool(m.toolId).adders!, 'rinse'));
    } else {
      after = [...ps, ...drawAdders(rng, lineTool(m.toolId, m.chamber).adders!, 'activation')];
    }
    const post: ScanRecord = {
      scanId: `${m.waferId}-POST`,
      lotId: MONITOR_LOT,
      waferId: m.waferId,
      step: `monitor post-scan after ${m.toolId}${m.chamber ? ` chamber ${m.chamber}` : ''}`,
      timeMs: m.postScanMs,
      defects: scanSurface(`${m.waferId}:post`, after, [], spec),
    };
    out.push(pre, post);
  }
  return out;
}

/** Every demo file, in import order. */
export function demoFiles(): DemoFile[] {
  const files: DemoFile[] = [];
  const add = (kind: DemoKind, path: string, title: string, text: string) =>
    files.push({ kind, path, title, text });
  add(
    'locations',
    'locations.csv',
    'Location hierarchy, ISO classes, alert and action levels',
    locationsCsv(),
  );
  add(
    'tools',
    'tools.json',
    'Tools and chambers with adders per pass; cleans with removal curves',
    toolsJson(),
  );
  add(
    'products',
    `products/${PRODUCT.id.toLowerCase()}.json`,
    `Product ${PRODUCT.id}: stack, die layout, spec`,
    productJson(),
  );
  for (const area of AREAS)
    add(
      'counter-samples',
      `counters/${area.toLowerCase()}.csv`,
      `Particle counters of the ${area[0]}${area.slice(1).toLowerCase()} area, two weeks`,
      countersCsv(area),
    );
  for (const lot of LOTS) {
    add(
      'scans',
      `scans/${lot.id}-post-clean.csv`,
      `${lot.id} post-clean scans (ZSCN-1, 45 nm)`,
      scansCsv(
        POST_CLEAN_SCANNER,
        lotScans(lot, 'post-clean'),
        `Lot ${lot.id}, post-clean inspection on ZSCN-1`,
      ),
    );
    add(
      'scans',
      `scans/${lot.id}-pre-bond.csv`,
      `${lot.id} pre-bond scans (LSCN-1, 37 nm)`,
      scansCsv(PRE_BOND_SCANNER, lotScans(lot, 'pre-bond'), `Lot ${lot.id}, pre-bond inspection on LSCN-1`),
    );
  }
  add(
    'scans',
    `scans/${MONITOR_LOT}-monitors.csv`,
    'Monitor wafers of 12 October: adders of LACT-1 A/B, removal of LRIN-1/2',
    scansCsv(
      MONITOR_SCANNER,
      monitorScans(),
      'Monitor lot TRMON1 on LSCN-1: pre and post scans around one pass',
    ),
  );
  for (const lot of LOTS) add('ledger', `ledger/${lot.id}.csv`, `${lot.id} exposure ledger`, ledgerCsv(lot));
  add(
    'ledger',
    `ledger/${MONITOR_LOT}.csv`,
    'Monitor wafers: their one pass between two scans',
    monitorLedgerCsv(),
  );
  add('pairs', 'pairs.csv', 'Bond pairs of every lot', pairsCsv());
  for (const lot of LOTS.filter((l) => l.role === 'earlier')) {
    const surf = surfacesOf(lot);
    for (let p = 0; p < PAIRS_PER_LOT; p++) {
      const truth = pairInterface(
        lot,
        p,
        (slot) => surf[slot - 1]!.preBond,
        (slot) => waferLedger(lot, slot),
      );
      for (const spec of INSPECTIONS) {
        const f = voidInspectionCsv(lot, truth, spec);
        add(
          'void-inspections',
          `void-inspections/${lot.id}/${f.id}.csv`,
          `${f.id}: ${spec.method} ${spec.stage}`,
          f.text,
        );
      }
    }
  }
  files.sort((a, b) => KIND_ORDER.indexOf(a.kind) - KIND_ORDER.indexOf(b.kind));
  return files;
}

export interface Manifest {
  format: 'voidcast demo manifest 1';
  seed: number;
  /** The assessment time the demo's story is told at (the waiting lots wait until then), ISO 8601. */
  asOf: string;
  locations: number;
  files: ManifestEntry[];
}

export function manifestOf(files: readonly DemoFile[]): Manifest {
  return {
    format: 'voidcast demo manifest 1',
    seed: DEMO_SEED,
    asOf: new Date(DEMO_AS_OF_MS).toISOString().replace('.000Z', 'Z'),
    locations: COUNTED_LOCATIONS.length,
    files: files.map(({ kind, path, title }) => ({ kind, path, title })),
  };
}

/** Writes the demo into `outDir` (emptied first); returns the manifest. */
export function writeDemo(outDir: string): Manifest {
  const files = demoFiles();
  rmSync(outDir, { recursive: true, force: true });
  for (const f of files) {
    const p = join(outDir, f.path);
    mkdirSync(dirname(p), { recursive: true });
    writeFileSync(p, f.text);
  }
  const manifest = manifestOf(files);
  writeFileSync(join(outDir, 'manifest.json'), json(manifest));
  return manifest;
}
