/**
 * Route files: the exposure ledger (one CSV per lot), the bond pairs (one CSV) and the post-bond void
 * inspections of the earlier lots (one CSV per inspection). Formats: docs/formats.md.
 */
import {
  type InspectionSpec,
  type InterfaceTruth,
  inspectionTimeMs,
  inspectVoids,
  type VoidRecord,
} from './bonded.ts';
import { PRODUCT, SITE_UTC_OFFSET_H } from './line.ts';
import {
  bondStartMs,
  type LedgerStep,
  LOTS,
  type LotPlan,
  MONITOR_LOT,
  MONITORS,
  PAIRS_PER_LOT,
  pairId,
  pairSlots,
  WAFERS_PER_LOT,
  waferId,
  waferLedger,
} from './lots.ts';
import { csvLine, isoOffset, NL, num } from './text.ts';

const DEMO_NOTE =
  '# Demo data of voidcast: an invented pilot line (every name, number and event is fiction).';
const t = (ms: number | null) => (ms === null ? null : isoOffset(ms, SITE_UTC_OFFSET_H));

const LEDGER_HEADER = [
  'lot',
  'wafer',
  'step',
  'step_kind',
  'tool',
  'chamber',
  'recipe',
  'clean',
  'location',
  'carrier',
  'orientation',
  'start',
  'end',
  'reclean_count',
];

const RECIPE: Record<string, string> = {
  'ZCMP-1': 'HB-DIEL-CU-2',
  'ZCLN-1': 'PCMP-BRUSH-MEG-3',
  'ZSCN-1': 'PCMP-45',
  'LSCN-1': 'PREBOND-37',
  'LACT-1': 'N2-ACT-30S',
  'LRIN-1': 'MEG-DIW-60S',
  'LRIN-2': 'MEG-DIW-60S',
  'BBND-1': 'W2W-RT-CONTACT',
};

function ledgerRow(s: LedgerStep, recleanCount: number): string {
  return csvLine([
    s.lotId,
    s.waferId,
    s.step,
    s.kind,
    s.toolId,
    s.chamber,
    s.toolId ? (RECIPE[s.toolId] ?? null) : null,
    s.cleanId,
    s.locationId,
    s.carrier,
    'face-up',
    t(s.startMs),
    t(s.endMs),
    recleanCount,
  ]);
}

export function ledgerCsv(lot: LotPlan): string {
  let out = `# format: voidcast ledger 1${NL}${DEMO_NOTE}${NL}# Exposure ledger of lot ${lot.id} as exported ${lot.role === 'waiting' ? 'while it waits to bond (open steps have no end)' : 'after bonding'}.${NL}`;
  out += csvLine(LEDGER_HEADER);
  for (let slot = 1; slot <= WAFERS_PER_LOT; slot++)
    for (const s of waferLedger(lot, slot)) out += ledgerRow(s, lot.recleanCount);
  return out;
}

/** The monitor wafers' ledger: pre-scan, one pass through the tool, post-scan. */
export function monitorLedgerCsv(): string {
  let out = `# format: voidcast ledger 1${NL}${DEMO_NOTE}${NL}# Monitor lot ${MONITOR_LOT}, 12 October: one pass through a tool between two scans.${NL}`;
  out += csvLine(LEDGER_HEADER);
  const MIN = 60_000;
  for (const m of MONITORS) {
    const common = { lotId: MONITOR_LOT, waferId: m.waferId, cleanId: null, scan: null } as const;
    const rows: LedgerStep[] = [
      {
        ...common,
        seq: 10,
        step: 'monitor pre-scan',
        kind: 'inspection',
        toolId: 'LSCN-1',
        chamber: null,
        startMs: m.preScanMs,
        endMs: m.preScanMs + 2 * MIN,
        locationId: 'LEV-SCN-ME',
        carrier: 'in-tool',
      },
      {
        ...common,
        seq: 20,
        step: 'wait in FOUP',
        kind: 'wait',
        toolId: null,
        chamber: null,
        startMs: m.preScanMs + 2 * MIN,
        endMs: m.passMs,
        locationId: 'LEV-B1',
        carrier: 'closed',
      },
      {
        ...common,
        seq: 30,
        step: m.cleanId ? 'monitor pass: megasonic rinse and dry' : 'monitor pass: plasma activation',
        kind: m.cleanId ? 'clean' : 'activation',
        toolId: m.toolId,
        chamber: m.chamber,
        cleanId: m.cleanId,
        startMs: m.passMs,
        endMs: m.passMs + 3 * MIN,
        locationId: m.cleanId ? 'LEV-RIN-ME' : 'LEV-ACT-ME',
        carrier: 'in-tool',
      },
      {
        ...common,
        seq: 40,
        step: 'wait in FOUP',
        kind: 'wait',
        toolId: null,
        chamber: null,
        startMs: m.passMs + 3 * MIN,
        endMs: m.postScanMs,
        locationId: 'LEV-B1',
        carrier: 'closed',
      },
      {
        ...common,
        seq: 50,
        step: 'monitor post-scan',
        kind: 'inspection',
        toolId: 'LSCN-1',
        chamber: null,
        startMs: m.postScanMs,
        endMs: m.postScanMs + 2 * MIN,
        locationId: 'LEV-SCN-ME',
        carrier: 'in-tool',
      },
    ];
    for (const r of rows) out += ledgerRow(r, 0);
  }
  return out;
}

export function pairsCsv(): string {
  let out = `# format: voidcast pairs 1${NL}${DEMO_NOTE}${NL}# Bond pairs of Gale-7: odd slot on top, flipped about its y axis onto the next even slot; slot 25 is the spare.${NL}`;
  out += csvLine([
    'pair',
    'product',
    'top_wafer',
    'bottom_wafer',
    'flip_axis',
    'rotation_deg',
    'offset_x_mm',
    'offset_y_mm',
    'bonder',
    'planned_bond_time',
    'lot',
  ]);
  for (const lot of LOTS)
    for (let p = 0; p < PAIRS_PER_LOT; p++) {
      const { top, bottom } = pairSlots(p);
      out += csvLine([
        pairId(lot.id, p),
        PRODUCT.id,
        waferId(lot.id, top),
        waferId(lot.id, bottom),
        'y',
        0,
        0,
        0,
        'BBND-1',
        // Earlier lots: the time they were bonded; waiting lots: not yet planned.
        t(bondStartMs(lot, p)),
        lot.id,
      ]);
    }
  return out;
}

/** One inspection file: the bottom wafer's convention (IR: internal; acoustic: origin at the lower-left corner). */
export function voidInspectionCsv(
  lot: LotPlan,
  truth: InterfaceTruth,
  spec: InspectionSpec,
): { id: string; text: string; voids: VoidRecord[] } {
  const voids = inspectVoids(lot.id, truth, spec);
  const id = `${pairId(lot.id, truth.pairIndex)}-${spec.method === 'infrared' ? 'IR' : 'SAM'}`;
  const lowerLeft = spec.method === 'acoustic';
  const R = (PRODUCT.waferDiameterM / 2) * 1e3;
  let out = `# format: voidcast void-inspections 1${NL}${DEMO_NOTE}${NL}`;
  out += `# inspection_id: ${id}${NL}# pair: ${pairId(lot.id, truth.pairIndex)}${NL}# method: ${spec.method}${NL}# stage: ${spec.stage}${NL}# tool: ${spec.toolId}${NL}`;
  out += `# smallest_void_mm: ${num(spec.smallestM * 1e3, 3)}${NL}# position_sigma_mm: ${num(spec.positionSigmaM * 1e3, 3)}${NL}# inspection_time: ${t(inspectionTimeMs(truth, spec))}${NL}`;
  out += lowerLeft
    ? `# coordinates: origin=lower-left x=right y=up view=front${NL}`
    : `# coordinates: origin=centre x=right y=up view=front${NL}`;
  out += `# notch_deg: 270${NL}`;
  out += csvLine(['x_mm', 'y_mm', 'diameter_mm', 'class']);
  for (const v of voids) {
    const x = v.xM * 1e3 + (lowerLeft ? R : 0);
    const y = v.yM * 1e3 + (lowerLeft ? R : 0);
    const dMm = Math.max(Math.round(v.diameterM * 1e6) / 1e3, spec.smallestM * 1e3);
    out += `${num(x, 2)},${num(y, 2)},${num(dMm, 3)},${v.cls}${NL}`;
  }
  return { id, text: out, voids };
}
