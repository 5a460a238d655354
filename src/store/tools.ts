/**
 * Tools (with chambers) and cleans as the tools import stores them, and their readers.
 *
 * Adders per wafer pass are kept in the form the file states: a power law (count per wafer at or
 * above a diameter, cumulative slope) — the shape of the engine's PowerLawLevel — or counts per size
 * band. Cleans keep either the parameters of the removal curve (logistic in log d: the engine's
 * CleanInput) or measured before/after counts per size band.
 */
import type { Db } from './db.ts';

export interface PowerLawAdders {
  model: 'power-law';
  countAbove: number;
  atDiameterM: number;
  slope: number;
  fromM: number | null;
}

export interface BandAdders {
  model: 'bands';
  /** Expected adders per wafer pass in [fromM, toM), ascending, not overlapping. */
  bands: { fromM: number; toM: number; count: number }[];
}

export type AdderLevel = PowerLawAdders | BandAdders;

export interface StoredTool {
  toolId: string;
  /** null for the tool-level entry. */
  chamber: string | null;
  name: string;
  toolKind: string;
  adders: AdderLevel | null;
  adderUncertaintyFactor: number;
  importId: number;
}

export interface LogisticRemoval {
  model: 'logistic-log-d';
  /** PRE(d) = maxEfficiency / (1 + exp(−(log10 d − log10 halfSizeM) / widthDecades)). */
  maxEfficiency: number;
  halfSizeM: number;
  widthDecades: number;
}

export interface BandRemoval {
  model: 'bands';
  /** Counts before and after the clean per size band [fromM, toM); efficiency 1 − after/before. */
  bands: { fromM: number; toM: number; before: number; after: number }[];
}

export interface StoredClean {
  cleanId: string;
  name: string;
  toolId: string | null;
  chamber: string | null;
  recipe: string | null;
  removal: LogisticRemoval | BandRemoval;
  importId: number;
}

interface ToolRow {
  tool_id: string;
  chamber: string;
  name: string;
  tool_kind: string;
  adders_json: string | null;
  adder_uncertainty_factor: number;
  import_id: number;
}

function toolOf(r: ToolRow): StoredTool {
  return {
    toolId: r.tool_id,
    chamber: r.chamber === '' ? null : r.chamber,
    name: r.name,
    toolKind: r.tool_kind,
    adders: r.adders_json === null ? null : (JSON.parse(r.adders_json) as AdderLevel),
    adderUncertaintyFactor: r.adder_uncertainty_factor,
    importId: r.import_id,
  };
}

/** The key the engine's LineData.tools uses: `toolId`, or `toolId/chamber` for a chamber entry. */
export function toolKey(toolId: string, chamber: string | null): string {
  return chamber === null ? toolId : `${toolId}/${chamber}`;
}

/** Every tool and chamber entry, by tool then chamber (tool-level entry first). */
export function listTools(db: Db): StoredTool[] {
  return (db.prepare('SELECT * FROM tools ORDER BY tool_id, chamber').all() as ToolRow[]).map(toolOf);
}

/** Tools keyed as the engine's LineData.tools (`toolId` or `toolId/chamber`). */
export function readTools(db: Db): Record<string, StoredTool> {
  const out: Record<string, StoredTool> = {};
  for (const t of listTools(db)) out[toolKey(t.toolId, t.chamber)] = t;
  return out;
}

/**
 * The entry that applies to a step on `toolId`/`chamber`: the chamber's own entry when stored,
 * else the tool-level entry; null when the tool is unknown.
 */
export function readToolFor(db: Db, toolId: string, chamber: string | null): StoredTool | null {
  const rows = db
    .prepare("SELECT * FROM tools WHERE tool_id = ? AND chamber IN ('', ?) ORDER BY chamber DESC")
    .all(toolId, chamber ?? '') as ToolRow[];
  const r = rows[0];
  return r ? toolOf(r) : null;
}

interface CleanRow {
  id: string;
  name: string;
  tool_id: string | null;
  chamber: string | null;
  recipe: string | null;
  curve: 'logistic-log-d' | 'bands';
  max_efficiency: number | null;
  half_size_m: number | null;
  width_decades: number | null;
  bands_json: string | null;
  import_id: number;
}

function cleanOf(r: CleanRow): StoredClean {
  const removal: LogisticRemoval | BandRemoval =
    r.curve === 'logistic-log-d'
      ? {
          model: 'logistic-log-d',
          maxEfficiency: r.max_efficiency!,
          halfSizeM: r.half_size_m!,
          widthDecades: r.width_decades!,
        }
      : { model: 'bands', bands: JSON.parse(r.bands_json!) as BandRemoval['bands'] };
  return {
    cleanId: r.id,
    name: r.name,
    toolId: r.tool_id,
    chamber: r.chamber,
    recipe: r.recipe,
    removal,
    importId: r.import_id,
  };
}

/** Every clean, keyed by id. */
export function readCleans(db: Db): Record<string, StoredClean> {
  const out: Record<string, StoredClean> = {};
  for (const r of db.prepare('SELECT * FROM cleans ORDER BY id').all() as CleanRow[]) out[r.id] = cleanOf(r);
  return out;
}

/** One clean, or null. */
export function readClean(db: Db, cleanId: string): StoredClean | null {
  const r = db.prepare('SELECT * FROM cleans WHERE id = ?').get(cleanId) as CleanRow | undefined;
  return r ? cleanOf(r) : null;
}

/**
 * The clean a ledger step ran, found from its tool and recipe: the clean on that tool with that
 * recipe, else the only clean on that tool when just one is stored; null otherwise.
 */
export function findCleanFor(db: Db, toolId: string, recipe: string | null): StoredClean | null {
  const rows = db.prepare('SELECT * FROM cleans WHERE tool_id = ? ORDER BY id').all(toolId) as CleanRow[];
  if (recipe !== null) {
    const hit = rows.find((r) => r.recipe === recipe);
    if (hit) return cleanOf(hit);
  }
  return rows.length === 1 ? cleanOf(rows[0]!) : null;
}

// ——— writer (used by src/ingest/kinds/tools.ts inside the import transaction) ———

export interface ToolWriter {
  /**
   * Replaces a tool's entries (tool level and chambers) with these: 'new', 'updated', or 'same' when
   * the stored entries are equal (then nothing is written and the earlier import stays recorded).
   */
  replaceTool: (entries: Omit<StoredTool, 'importId'>[]) => 'new' | 'updated' | 'same';
  /** Inserts or replaces a clean: 'new', 'updated', or 'same' (nothing written). */
  upsertClean: (c: Omit<StoredClean, 'importId'>) => 'new' | 'updated' | 'same';
}

export function toolWriter(db: Db, importId: number): ToolWriter {
  const storedOf = db.prepare('SELECT * FROM tools WHERE tool_id = ? ORDER BY chamber');
  const drop = db.prepare('DELETE FROM tools WHERE tool_id = ?');
  const ins = db.prepare(
    `INSERT INTO tools (tool_id, chamber, name, tool_kind, adders_json, adder_uncertainty_factor, import_id)
     VALUES (?, ?, ?, ?, ?, ?, ?)`,
  );
  const cleanOfId = db.prepare('SELECT * FROM cleans WHERE id = ?');
  const strip = <T extends { importId: number }>(v: T): Omit<T, 'importId'> => {
    const { importId: _, ...rest } = v;
    return rest;
  };
  const upClean = db.prepare(
    `INSERT INTO cleans (id, name, tool_id, chamber, recipe, curve, max_efficiency, half_size_m, width_decades, bands_json,
       import_id) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)
     ON CONFLICT (id) DO UPDATE SET name = excluded.name, tool_id = excluded.tool_id, chamber = excluded.chamber,
       recipe = excluded.recipe, curve = excluded.curve, max_efficiency = excluded.max_efficiency,
       half_size_m = excluded.half_size_m, width_decades = excluded.width_decades, bands_json = excluded.bands_json,
       import_id = excluded.import_id`,
  );
  return {
    replaceTool: (entries) => {
      const id = entries[0]!.toolId;
      const old = (storedOf.all(id) as ToolRow[]).map((r) => strip(toolOf(r)));
      const key = (e: { chamber: string | null }) => e.chamber ?? '';
      // The order SQLite's ORDER BY chamber gives (binary comparison of the text).
      const sorted = [...entries].sort((a, b) => (key(a) < key(b) ? -1 : key(a) > key(b) ? 1 : 0));
      if (old.length > 0 && JSON.stringify(old) === JSON.stringify(sorted)) return 'same';
      drop.run(id);
      for (const e of entries)
        ins.run(
          e.toolId,
          e.chamber ?? '',
          e.name,
          e.toolKind,
          e.adders === null ? null : JSON.stringify(e.adders),
          e.adderUncertaintyFactor,
          importId,
        );
      return old.length > 0 ? 'updated' : 'new';
    },
    upsertClean: (c) => {
      const oldRow = cleanOfId.get(c.cleanId) as CleanRow | undefined;
      if (oldRow && JSON.stringify(strip(cleanOf(oldRow))) === JSON.stringify(c)) return 'same';
      const r = c.removal;
      upClean.run(
        c.cleanId,
        c.name,
        c.toolId,
        c.chamber,
        c.recipe,
        r.model,
        r.model === 'logistic-log-d' ? r.maxEfficiency : null,
        r.model === 'logistic-log-d' ? r.halfSizeM : null,
        r.model === 'logistic-log-d' ? r.widthDecades : null,
        r.model === 'bands' ? JSON.stringify(r.bands) : null,
        importId,
      );
      return oldRow ? 'updated' : 'new';
    },
  };
}
