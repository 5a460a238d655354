/**
 * Surface scans: the writer the scans import uses and the read helpers the engine and pages use.
 *
 * A scan's defects are packed column-wise (one BLOB per column, see migration 0013_scans.sql):
 * x, y and LSE diameter as little-endian IEEE 754 binary64 (8 bytes per defect each) in the internal
 * wafer frame (origin at the centre, x right, y up, notch down, seen from the front; metres), and one
 * class code byte per defect (DEFECT_CLASSES). Reading turns each BLOB into a typed-array view
 * without copying when the buffer is 8-byte aligned on a little-endian machine (every platform
 * Node.js ships for today); otherwise it copies value by value through a DataView, so the stored
 * bytes mean the same on any machine.
 */
import { endianness } from 'node:os';
import type { Db } from './db.ts';

// ——— packed columns (shared with void inspections) ———

const LITTLE_ENDIAN = endianness() === 'LE';

/** Packs a Float64Array as little-endian binary64 bytes (a view when the machine is little-endian). */
export function packFloat64(values: Float64Array): Buffer {
  if (LITTLE_ENDIAN) return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
  const out = Buffer.allocUnsafe(values.length * 8);
  for (let i = 0; i < values.length; i++) out.writeDoubleLE(values[i]!, i * 8);
  return out;
}

/** Unpacks little-endian binary64 bytes (a BLOB as better-sqlite3 returns it). */
export function unpackFloat64(blob: Uint8Array): Float64Array {
  if (blob.byteLength % 8 !== 0)
    throw new Error(`packed Float64 column of ${blob.byteLength} bytes is not a multiple of 8`);
  const n = blob.byteLength / 8;
  if (LITTLE_ENDIAN && blob.byteOffset % 8 === 0) return new Float64Array(blob.buffer, blob.byteOffset, n);
  const out = new Float64Array(n);
  const view = new DataView(blob.buffer, blob.byteOffset, blob.byteLength);
  for (let i = 0; i < n; i++) out[i] = view.getFloat64(i * 8, true);
  return out;
}

/** Packs class codes (one byte each). */
export function packUint8(values: Uint8Array): Buffer {
  return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
}

/** Unpacks class codes (a view on the BLOB, no copy). */
export function unpackUint8(blob: Uint8Array): Uint8Array {
  return new Uint8Array(blob.buffer, blob.byteOffset, blob.byteLength);
}

// ——— defect classes ———

/** Defect classes of a surface scan; the stored code is the index (never reorder: append only). */
export const DEFECT_CLASSES = ['particle', 'pit', 'scratch', 'residue', 'cluster', 'unknown'] as const;
export type DefectClass = (typeof DEFECT_CLASSES)[number];
export const DEFECT_CLASS_CODE: Readonly<Record<DefectClass, number>> = Object.freeze({
  particle: 0,
  pit: 1,
  scratch: 2,
  residue: 3,
  cluster: 4,
  unknown: 5,
});

/**
 * Classes that can hold a bond gap open like a particle: particles, cluster members (particles in
 * a cluster) and unclassified defects (counted as particles: the conservative side). Pits and
 * scratches are holes, not bumps; residue is left out because its height is not a particle's
 * (common practice, no source). The engine may pass its own set.
 */
export const PARTICLE_LIKE_CLASSES: readonly DefectClass[] = ['particle', 'cluster', 'unknown'];

// ——— rows ———

/**
 * Particle positions and sizes, columnar: the same shape as the engine's DetectedParticles
 * (src/engine/types.ts; the store does not import the engine, the loader passes these through).
 */
export interface ParticleColumns {
  count: number;
  xM: Float64Array;
  yM: Float64Array;
  diameterM: Float64Array;
}

/** The engine's view of a scan (the same shape as its ScanInput). */
export interface StoredScanInput {
  scanId: string;
  timeMs: number;
  toolId: string | null;
  recipe: string | null;
  thresholdM: number;
  edgeExclusionM: number;
  particles: ParticleColumns;
}

/** A scan's header as stored (SI units, UTC ms). */
export interface ScanHeader {
  /** Row id (internal). */
  rowId: number;
  /** The scan's id as the file gave it. */
  scanId: string;
  waferId: string;
  lotId: string;
  step: string | null;
  toolId: string | null;
  chamber: string | null;
  recipe: string | null;
  film: string | null;
  timeMs: number;
  /** The time as written (with its offset). */
  timeText: string;
  waferDiameterM: number;
  edgeExclusionM: number;
  thresholdM: number;
  /** The file's convention as declared. */
  convention: string;
  defectCount: number;
  importId: number;
}

/** All defects of a scan, columnar, in the internal frame (m). */
export interface ScanDefects {
  count: number;
  xM: Float64Array;
  yM: Float64Array;
  diameterM: Float64Array;
  /** Index into DEFECT_CLASSES per defect. */
  classCode: Uint8Array;
}

const HEADER_COLUMNS = `s.id AS rowId, s.scan_key AS scanId, s.wafer_id AS waferId, w.lot_id AS lotId, s.step, s.tool_id AS toolId,
  s.chamber, s.recipe, s.film, s.time_ms AS timeMs, s.time_text AS timeText, s.wafer_diameter_m AS waferDiameterM,
  s.edge_exclusion_m AS edgeExclusionM, s.threshold_m AS thresholdM, s.convention, s.defect_count AS defectCount,
  s.import_id AS importId`;

/** A scan's header, or null when no scan has that id. */
export function readScanHeader(db: Db, scanId: string): ScanHeader | null {
  const row = db
    .prepare(`SELECT ${HEADER_COLUMNS} FROM scans s JOIN wafers w ON w.id = s.wafer_id WHERE s.scan_key = ?`)
    .get(scanId) as ScanHeader | undefined;
  return row ?? null;
}

/** The scans of a wafer, oldest first. */
export function listScansOfWafer(db: Db, waferId: string): ScanHeader[] {
  return db
    .prepare(
      `SELECT ${HEADER_COLUMNS} FROM scans s JOIN wafers w ON w.id = s.wafer_id
        WHERE s.wafer_id = ? ORDER BY s.time_ms, s.id`,
    )
    .all(waferId) as ScanHeader[];
}

/** The scans of a lot's wafers, by wafer then time. */
export function listScansOfLot(db: Db, lotId: string): ScanHeader[] {
  return db
    .prepare(
      `SELECT ${HEADER_COLUMNS} FROM scans s JOIN wafers w ON w.id = s.wafer_id
        WHERE w.lot_id = ? ORDER BY s.wafer_id, s.time_ms, s.id`,
    )
    .all(lotId) as ScanHeader[];
}

/**
 * The latest scan of a wafer taken strictly before `beforeUtcMs` (UTC ms), or null when none.
 * Two scans at the same instant: the one imported last wins.
 */
export function latestScanBefore(db: Db, waferId: string, beforeUtcMs: number): ScanHeader | null {
  const row = db
    .prepare(
      `SELECT ${HEADER_COLUMNS} FROM scans s JOIN wafers w ON w.id = s.wafer_id
        WHERE s.wafer_id = ? AND s.time_ms < ? ORDER BY s.time_ms DESC, s.id DESC LIMIT 1`,
    )
    .get(waferId, beforeUtcMs) as ScanHeader | undefined;
  return row ?? null;
}

/**
 * Every defect of a scan as typed arrays (views on the stored bytes where possible: treat them as
 * read-only). Null when no scan has that id.
 */
export function readScanDefects(db: Db, scanId: string): ScanDefects | null {
  const row = db
    .prepare(
      'SELECT defect_count AS n, x_m AS x, y_m AS y, diameter_m AS d, class_codes AS c FROM scans WHERE scan_key = ?',
    )
    .get(scanId) as { n: number; x: Buffer; y: Buffer; d: Buffer; c: Buffer } | undefined;
  if (!row) return null;
  return {
    count: row.n,
    xM: unpackFloat64(row.x),
    yM: unpackFloat64(row.y),
    diameterM: unpackFloat64(row.d),
    classCode: unpackUint8(row.c),
  };
}

/**
 * Keeps the defects whose class is in `classes`: a new, compact set of arrays, or the defects' own
 * arrays when every defect is kept (read-only views, as readScanDefects says).
 */
export function selectDefects(defects: ScanDefects, classes: readonly DefectClass[]): ParticleColumns {
  const keep = new Uint8Array(DEFECT_CLASSES.length);
  for (const c of classes) keep[DEFECT_CLASS_CODE[c]] = 1;
  let n = 0;
  for (let i = 0; i < defects.count; i++) if (keep[defects.classCode[i]!]) n++;
  if (n === defects.count) return { count: n, xM: defects.xM, yM: defects.yM, diameterM: defects.diameterM };
  const xM = new Float64Array(n);
  const yM = new Float64Array(n);
  const diameterM = new Float64Array(n);
  let j = 0;
  for (let i = 0; i < defects.count; i++) {
    if (!keep[defects.classCode[i]!]) continue;
    xM[j] = defects.xM[i]!;
    yM[j] = defects.yM[i]!;
    diameterM[j] = defects.diameterM[i]!;
    j++;
  }
  return { count: n, xM, yM, diameterM };
}

/**
 * The engine's view of a scan: header fields and the particle-like defects (PARTICLE_LIKE_CLASSES
 * unless `classes` says otherwise). Null when no scan has that id.
 */
export function readScanInput(
  db: Db,
  scanId: string,
  classes: readonly DefectClass[] = PARTICLE_LIKE_CLASSES,
): StoredScanInput | null {
  const h = readScanHeader(db, scanId);
  return h ? scanInputOf(db, h, classes) : null;
}

/** readScanInput for a header already read (latestScanBefore's), without reading it again. */
export function scanInputOf(
  db: Db,
  h: ScanHeader,
  classes: readonly DefectClass[] = PARTICLE_LIKE_CLASSES,
): StoredScanInput | null {
  const d = readScanDefects(db, h.scanId);
  if (!d) return null;
  return {
    scanId: h.scanId,
    timeMs: h.timeMs,
    toolId: h.toolId,
    recipe: h.recipe,
    thresholdM: h.thresholdM,
    edgeExclusionM: h.edgeExclusionM,
    particles: selectDefects(d, classes),
  };
}

// ——— writer (used by src/ingest/kinds/scans.ts inside the import transaction) ———

export interface NewScan {
  scanId: string;
  waferId: string;
  step: string | null;
  toolId: string | null;
  chamber: string | null;
  recipe: string | null;
  film: string | null;
  timeMs: number;
  timeText: string;
  waferDiameterM: number;
  edgeExclusionM: number;
  thresholdM: number;
  convention: string;
  defects: ScanDefects;
  contentSha256: string;
  importId: number;
  line: number;
}

/** The stored content hash and import of a scan id, or null (for the duplicate check). */
export function scanContentOf(db: Db, scanId: string): { contentSha256: string; importId: number } | null {
  const row = db
    .prepare('SELECT content_sha256 AS contentSha256, import_id AS importId FROM scans WHERE scan_key = ?')
    .get(scanId) as { contentSha256: string; importId: number } | undefined;
  return row ?? null;
}

/** Prepares the insert of scans (one statement per import). */
export function scanInserter(db: Db): (s: NewScan) => void {
  const ins = db.prepare(
    `INSERT INTO scans (scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms, time_text, wafer_diameter_m,
       edge_exclusion_m, threshold_m, convention, defect_count, x_m, y_m, diameter_m, class_codes, content_sha256,
       import_id, line)
     VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  );
  return (s) => {
    ins.run(
      s.scanId,
      s.waferId,
      s.step,
      s.toolId,
      s.chamber,
      s.recipe,
      s.film,
      s.timeMs,
      s.timeText,
      s.waferDiameterM,
      s.edgeExclusionM,
      s.thresholdM,
      s.convention,
      s.defects.count,
      packFloat64(s.defects.xM),
      packFloat64(s.defects.yM),
      packFloat64(s.defects.diameterM),
      packUint8(s.defects.classCode),
      s.contentSha256,
      s.importId,
      s.line,
    );
  };
}
