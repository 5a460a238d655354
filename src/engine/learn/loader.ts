/**
 * Learning's only database access: what learning reads, through the store's read helpers, handed
 * to the rest of src/engine/learn as plain functions and records (the assessment's counterpart is
 * src/engine/loader.ts). Reads are lazy (a wafer's ledger, a scan's defects when asked) and cached.
 */
import type { MatchableScan } from '../../model/matching/index.ts';
import type { Db } from '../../store/db.ts';
import { ledgerRowSource, listAllScanHeaders, type RecordSource, scanSource } from '../../store/learning.ts';
import { type LedgerStep, readLedger } from '../../store/ledger.ts';
import { PARTICLE_LIKE_CLASSES, readScanDefects, type ScanHeader, selectDefects } from '../../store/scans.ts';
import { findCleanFor, readCleans, readTools, type StoredClean, type StoredTool } from '../../store/tools.ts';
import {
  listInspectedLots,
  listVoidInspections,
  listVoidInspectionsOfLot,
  readVoids,
  VOID_CLASSES,
  type VoidInspectionHeader,
} from '../../store/voids.ts';
import { loadLot } from '../loader.ts';
import type { CalibrationLotInput, InspectionInput } from './calibration-types.ts';

export interface LearnData {
  /** Every scan header, by wafer then time. */
  scans: ScanHeader[];
  /** A wafer's ledger (its own and its lot's steps), in order. */
  ledger: (waferId: string) => LedgerStep[];
  /** A scan's particle-like defects within `radiusM` of the centre, with its threshold; null when gone. */
  defects: (scan: ScanHeader, radiusM: number) => MatchableScan | null;
  /** "scan S (file line n)" for messages. */
  scanWhere: (scanId: string) => string;
  /** "file line n" of a ledger row for messages. */
  rowWhere: (step: LedgerStep) => string;
  /** The clean a clean step ran when the step names none: by tool and recipe; null when unknown. */
  cleanFor: (toolId: string, recipe: string | null) => string | null;
  tools: Record<string, StoredTool>;
  cleans: Record<string, StoredClean>;
}

function whereText(s: RecordSource | null): string | null {
  return s ? `${s.fileName} line ${s.line}` : null;
}

/** Reads what learning needs from the database (lazily where it can). */
export function learnDataFrom(db: Db): LearnData {
  const ledgers = new Map<string, LedgerStep[]>();
  return {
    scans: listAllScanHeaders(db),
    ledger: (waferId) => {
      let l = ledgers.get(waferId);
      if (!l) {
        l = readLedger(db, waferId);
        ledgers.set(waferId, l);
      }
      return l;
    },
    defects: (h, radiusM) => {
      const d = readScanDefects(db, h.scanId);
      if (!d) return null;
      const p = selectDefects(d, PARTICLE_LIKE_CLASSES);
      const keep: number[] = [];
      for (let i = 0; i < p.count; i++) if (Math.hypot(p.xM[i]!, p.yM[i]!) <= radiusM) keep.push(i);
      const pick = (a: Float64Array) => Float64Array.from(keep, (i) => a[i]!);
      return {
        count: keep.length,
        xM: pick(p.xM),
        yM: pick(p.yM),
        diameterM: pick(p.diameterM),
        thresholdM: h.thresholdM,
      };
    },
    scanWhere: (scanId) => {
      const w = whereText(scanSource(db, scanId));
      return w ? `scan ${scanId} (${w})` : `scan ${scanId}`;
    },
    rowWhere: (s) => whereText(ledgerRowSource(db, s.rowId)) ?? `ledger row ${s.rowId}`,
    cleanFor: (toolId, recipe) => findCleanFor(db, toolId, recipe)?.cleanId ?? null,
    tools: readTools(db),
    cleans: readCleans(db),
  };
}

/**
 * The bonded lots with void inspections, loaded for calibration (src/engine/learn/calibration.ts):
 * each lot with its line data (the typed values, not an adopted parameter set) at the time of its
 * latest inspection (so every inspected pair is bonded by then), and every inspection of its pairs with the voids in the bond frame. `lotIds`
 * limits it to those lots; an unknown lot or one without inspections is named in `missing`.
 */
export function loadInspectedLots(
  db: Db,
  lotIds?: readonly string[],
): { lots: CalibrationLotInput[]; missing: string[] } {
  const inspected = listInspectedLots(db);
  const wanted = lotIds ? [...lotIds] : inspected;
  const missing = wanted.filter((id) => !inspected.includes(id));
  const lots: CalibrationLotInput[] = [];
  for (const lotId of wanted.filter((id) => inspected.includes(id))) {
    const headers = listVoidInspectionsOfLot(db, lotId);
    const asOfMs = Math.max(...headers.map((h) => h.timeMs));
    // The typed values: calibration measures against them, whatever set is adopted now.
    const loaded = loadLot(db, lotId, asOfMs, undefined, null);
    if (!loaded) {
      missing.push(lotId);
      continue;
    }
    const inspections: Record<string, InspectionInput[]> = {};
    for (const h of headers) {
      const insp = inspectionInput(db, h);
      if (!insp) continue;
      const list = inspections[h.pairId] ?? [];
      inspections[h.pairId] = list;
      list.push(insp);
    }
    lots.push({ lot: loaded.lot, line: loaded.line, asOfMs, inspections });
  }
  return { lots, missing };
}

/** One stored inspection as the calibration takes it (voids in the bond frame), or null. */
function inspectionInput(db: Db, h: VoidInspectionHeader): InspectionInput | null {
  const v = readVoids(db, h.inspectionId);
  if (!v) return null;
  return {
    inspectionId: h.inspectionId,
    pairId: h.pairId,
    method: h.method,
    stage: h.stage,
    toolId: h.toolId,
    smallestVoidM: h.smallestVoidM,
    positionSigmaM: h.positionSigmaM,
    timeMs: h.timeMs,
    voids: {
      count: v.count,
      xM: v.xM,
      yM: v.yM,
      diameterM: v.diameterM,
      classes: Array.from(v.classCode, (c) => VOID_CLASSES[c] ?? 'unknown'),
    },
  };
}

/** The void inspections of a pair (oldest first), for its page's observed-over-predicted map. */
export function loadPairInspections(db: Db, pairId: string): InspectionInput[] {
  return listVoidInspections(db, pairId)
    .map((h) => inspectionInput(db, h))
    .filter((x): x is InspectionInput => x !== null);
}
