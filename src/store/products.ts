/**
 * Products: the normalised definition (SI units) as the products import stores it, and its readers.
 *
 * `ProductDefinition` has the shape of the engine's ProductInput (src/engine/types.ts; the store does
 * not import the engine — test/unit/ingest/kinds-products.test.ts proves the two stay assignable)
 * plus what the file states beyond it (bonding mode, per-plate materials, the orientation mark).
 */
import type { Db } from './db.ts';

export type StepKind = 'process' | 'clean' | 'activation' | 'inspection' | 'wait' | 'transfer' | 'bond';

export interface ProductDefinition {
  productId: string;
  name: string;
  waferDiameterM: number;
  edgeExclusionM: number;
  stack: {
    model: 'two-flexible-plates' | 'textbook-one-flexible' | 'die-on-rigid-wafer';
    topThicknessM: number;
    bottomThicknessM: number;
    plateModulusPa: number;
  };
  surfacePrep: { name: string; energyJm2: number; convention: 'per-surface' | 'work-of-adhesion' };
  heightFactor: number;
  die: {
    widthM: number;
    heightM: number;
    pitchXM: number;
    pitchYM: number;
    originXM: number;
    originYM: number;
    pad: { xM: number; yM: number; widthM: number; heightM: number } | null;
  } | null;
  clusterAlpha: number;
  incoming: { countAbove: number; atDiameterM: number; slope: number; fromM: number | null };
  recleanCleanId: string | null;
  spec: {
    version: string;
    maxVoids: number | null;
    maxUnbondedFraction: number | null;
    minDieYield: number | null;
    yieldModel: 'poisson' | 'negative-binomial';
    confidence: number;
    smallestReportableVoidM: number;
    qTimes: { fromKind: StepKind; maxS: number; label: string }[];
    maxRecleans: number;
    maxScanAgeS: number | null;
    scanRequired: boolean;
  };
  /** What the file states beyond the engine's inputs. */
  bondingMode: 'wafer-to-wafer' | 'die-to-wafer';
  orientationMark: 'notch' | 'flat';
  plates: {
    top: { material: string; thicknessM: number; plateModulusPa: number };
    bottom: { material: string; thicknessM: number; plateModulusPa: number };
  };
}

export interface ProductSummary {
  productId: string;
  name: string;
  specVersion: string;
  bondingMode: 'wafer-to-wafer' | 'die-to-wafer';
  waferDiameterM: number;
  edgeExclusionM: number;
  importId: number;
}

/** A product's definition, or null when unknown. */
export function readProduct(db: Db, productId: string): ProductDefinition | null {
  const row = db.prepare('SELECT definition_json AS j FROM products WHERE id = ?').get(productId) as
    | { j: string }
    | undefined;
  return row ? (JSON.parse(row.j) as ProductDefinition) : null;
}

/** The file text a product was imported from (audit trail), or null. */
export function readProductSource(db: Db, productId: string): string | null {
  const row = db.prepare('SELECT source_json AS s FROM products WHERE id = ?').get(productId) as
    | { s: string }
    | undefined;
  return row?.s ?? null;
}

/** Every product, by id. */
export function listProducts(db: Db): ProductSummary[] {
  return db
    .prepare(
      `SELECT id AS productId, name, spec_version AS specVersion, bonding_mode AS bondingMode,
              wafer_diameter_m AS waferDiameterM, edge_exclusion_m AS edgeExclusionM, import_id AS importId
         FROM products ORDER BY id`,
    )
    .all() as ProductSummary[];
}

/**
 * Stores a product (inside the import's transaction). The same id with the same content is a
 * duplicate (nothing changes); with new content the row is replaced and 'updated' returned.
 */
export function storeProduct(
  db: Db,
  def: ProductDefinition,
  sourceText: string,
  contentSha256: string,
  importId: number,
): 'stored' | 'updated' | 'duplicate' {
  const old = db.prepare('SELECT content_sha256 AS h FROM products WHERE id = ?').get(def.productId) as
    | { h: string }
    | undefined;
  if (old && old.h === contentSha256) return 'duplicate';
  const values = [
    def.name,
    def.spec.version,
    def.bondingMode,
    def.waferDiameterM,
    def.edgeExclusionM,
    contentSha256,
    JSON.stringify(def),
    sourceText,
    importId,
  ];
  if (old) {
    db.prepare(
      `UPDATE products SET name = ?, spec_version = ?, bonding_mode = ?, wafer_diameter_m = ?, edge_exclusion_m = ?,
         content_sha256 = ?, definition_json = ?, source_json = ?, import_id = ? WHERE id = ?`,
    ).run(...values, def.productId);
    return 'updated';
  }
  db.prepare(
    `INSERT INTO products (name, spec_version, bonding_mode, wafer_diameter_m, edge_exclusion_m, content_sha256,
       definition_json, source_json, import_id, id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
  ).run(...values, def.productId);
  return 'stored';
}
