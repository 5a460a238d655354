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
