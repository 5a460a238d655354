/**
 * Post-bond void inspections: header rows and their voids, packed like scan defects (little-endian
 * Float64 x, y, equivalent diameter in metres, in the bond frame — the bottom wafer's frame — and one
 * class byte per void; see src/store/scans.ts for the packing).
 */
import type { Db } from './db.ts';
import { packFloat64, packUint8, unpackFloat64, unpackUint8 } from './scans.ts';

/** Void classes; the stored code is the index (never reorder: append only). */
export const VOID_CLASSES = ['particle', 'bubble', 'edge', 'unknown'] as const;
export type VoidClass = (typeof VOID_CLASSES)[number];
export const VOID_CLASS_CODE: Readonly<Record<VoidClass, number>> = Object.freeze({
  particle: 0,
  bubble: 1,
  edge: 2,
  unknown: 3,
});

export interface VoidInspectionHeader {
  rowId: number;
  inspectionId: string;
  pairId: string;
  method: 'infrared' | 'acoustic';
  stage: 'after-contact' | 'after-anneal';
  toolId: string | null;
  /** Smallest void the inspection reports, equivalent diameter, m. */
  smallestVoidM: number;
  /** Position error the inspection states, one standard deviation per axis, m (null: not stated). */
  positionSigmaM: number | null;
  timeMs: number;
  timeText: string;
  convention: string;
  voidCount: number;
  importId: number;
}

export interface InspectionVoids {
  count: number;
  /** Void centre, bond frame, m. */
  xM: Float64Array;
  yM: Float64Array;
  /** Equivalent diameter, m. */
  diameterM: Float64Array;
  /** Index into VOID_CLASSES. */
  classCode: Uint8Array;
}

const COLUMNS = `id AS rowId, inspection_key AS inspectionId, pair_id AS pairId, method, stage, tool_id AS toolId,
  smallest_void_m AS smallestVoidM, position_sigma_m AS positionSigmaM, time_ms AS timeMs, time_text AS timeText, convention, void_count AS voidCount,
  import_id AS importId`;

export function readVoidInspection(db: Db, inspectionId: string): VoidInspectionHeader | null {
  const r = db
    .prepare(`SELECT ${COLUMNS} FROM void_inspections WHERE inspection_key = ?`)
    .get(inspectionId) as VoidInspectionHeader | undefined;
  return r ?? null;
}

/** The inspections of a pair, oldest first. */
export function listVoidInspections(db: Db, pairId: string): VoidInspectionHeader[] {
  return db
    .prepare(`SELECT ${COLUMNS} FROM void_inspections WHERE pair_id = ? ORDER BY time_ms, id`)
    .all(pairId) as VoidInspectionHeader[];
}

/** The voids of an inspection (typed-array views: treat as read-only), or null. */
export function readVoids(db: Db, inspectionId: string): InspectionVoids | null {
  const r = db
    .prepare(
      'SELECT void_count AS n, x_m AS x, y_m AS y, diameter_m AS d, class_codes AS c FROM void_inspections WHERE inspection_key = ?',
    )
    .get(inspectionId) as { n: number; x: Buffer; y: Buffer; d: Buffer; c: Buffer } | undefined;
  if (!r) return null;
  return {
    count: r.n,
    xM: unpackFloat64(r.x),
    yM: unpackFloat64(r.y),
    diameterM: unpackFloat64(r.d),
    classCode: unpackUint8(r.c),
  };
}

export interface NewVoidInspection extends Omit<VoidInspectionHeader, 'rowId' | 'voidCount' | 'importId'> {
  voids: InspectionVoids;
  contentSha256: string;
  importId: number;
  line: number;
}

export function voidInspectionContentOf(
  db: Db,
  inspectionId: string,
): { contentSha256: string; importId: number } | null {
  const r = db
    .prepare(
      'SELECT content_sha256 AS contentSha256, import_id AS importId FROM void_inspections WHERE inspection_key = ?',
    )
    .get(inspectionId) as { contentSha256: string; importId: number } | undefined;
  return r ?? null;
}

export function insertVoidInspection(db: Db, v: NewVoidInspection): void {
  db.prepare(
    `INSERT INTO void_inspections (inspection_key, pair_id, method, stage, tool_id, smallest_void_m, position_sigma_m,
       time_ms, time_text, convention, void_count, x_m, y_m, diameter_m, class_codes, content_sha256, import_id, line)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  ).run(
    v.inspectionId,
    v.pairId,
    v.method,
    v.stage,
    v.toolId,
    v.smallestVoidM,
    v.positionSigmaM,
    v.timeMs,
    v.timeText,
    v.convention,
    v.voids.count,
    packFloat64(v.voids.xM),
    packFloat64(v.voids.yM),
    packFloat64(v.voids.diameterM),
    packUint8(v.voids.classCode),
    v.contentSha256,
    v.importId,
    v.line,
  );
}

/** The lots with at least one void-inspected pair, by id. */
export function listInspectedLots(db: Db): string[] {
  return db
    .prepare(
      `SELECT DISTINCT p.lot_id AS lotId FROM void_inspections vi JOIN pairs p ON p.id = vi.pair_id ORDER BY p.lot_id`,
    )
    .pluck()
    .all() as string[];
}

/** The inspections of a lot's pairs, by pair then time. */
export function listVoidInspectionsOfLot(db: Db, lotId: string): VoidInspectionHeader[] {
  return db
    .prepare(
      `SELECT ${COLUMNS} FROM void_inspections WHERE pair_id IN (SELECT id FROM pairs WHERE lot_id = ?)
        ORDER BY pair_id, time_ms, id`,
    )
    .all(lotId) as VoidInspectionHeader[];
}
