/**
 * The engine's only database access: reads a lot or a pair with everything its assessment needs
 * through the store's helpers and hands plain inputs (src/engine/types.ts) to the pure engine; and
 * stores sign-offs. Everything else in src/engine is pure, but for parameter-sets.ts (storing, adopting
 * and reverting parameter sets) and parallel.ts (a lot's second thread opens its own connection).
 *
 * Every load applies the adopted parameter set (src/engine/parameters.ts) to the typed values it
 * read, or the set it is given (a lot's second thread gets the set the first one read, so both use
 * the same one even if someone adopts another in between).
 */

import {
  type LedgerStepRow,
  lotPairRows,
  pairCountsByLot,
  readLedgerRows,
  readPairRow,
} from '../store/assessment-rows.ts';
import { readCounterSeries } from '../store/counters.ts';
import type { Db } from '../store/db.ts';
import { insertDisposition, readDispositions } from '../store/dispositions.ts';
import { getLocation } from '../store/locations.ts';
import { listLots, readLot } from '../store/lots.ts';
import type { PairRow } from '../store/pairs.ts';
import { readProduct } from '../store/products.ts';
import { latestScanBefore, listScansOfLot, type ScanHeader, scanInputOf } from '../store/scans.ts';
import { installationClockMs } from '../store/settings.ts';
import { findCleanFor, readCleans, readTools, type StoredClean, type StoredTool } from '../store/tools.ts';
import { type AssessedInputs, describeInputsDiff } from './inputs-diff.ts';
import { assessLotInSession } from './lot.ts';
import { assessPairInSession, assessPairWithInputs, createSession } from './pair.ts';
import type { TypedCounterparts } from './parameter-entries.ts';
import type { ParameterSet, ParameterValues } from './parameter-set-types.ts';
import { readAdoptedParameterSet } from './parameter-sets.ts';
import { applyParameterSet } from './parameters.ts';
import {
  hashChangedMessage,
  prepareSignoff,
  type SignoffOutcome,
  type SignoffRecord,
  type SignoffRequest,
} from './signoff.ts';
import type {
  AssessOptions,
  CleanInput,
  CounterSeriesInput,
  LedgerStepInput,
  LineData,
  LocationInput,
  LotAssessment,
  LotInput,
  PairAssessment,
  PairInput,
  ProductInput,
  ToolInput,
  WaferInput,
} from './types.ts';

function toToolInput(t: StoredTool): ToolInput {
  return {
    toolId: t.toolId,
    chamber: t.chamber,
    name: t.name,
    adders:
      t.adders?.model === 'power-law'
        ? {
            countAbove: t.adders.countAbove,
            atDiameterM: t.adders.atDiameterM,
            slope: t.adders.slope,
            fromM: t.adders.fromM,
          }
        : null,
    adderBands: t.adders?.model === 'bands' ? t.adders.bands : null,
    adderUncertaintyFactor: t.adderUncertaintyFactor,
  };
}

function toCleanInput(c: StoredClean): CleanInput {
  const r = c.removal;
  if (r.model === 'logistic-log-d')
    return {
      cleanId: c.cleanId,
      name: c.name,
      toolId: c.toolId,
      maxEfficiency: r.maxEfficiency,
      halfSizeM: r.halfSizeM,
      widthDecades: r.widthDecades,
      removalBands: null,
    };
  return {
    cleanId: c.cleanId,
    name: c.name,
    toolId: c.toolId,
    maxEfficiency: 0,
    halfSizeM: 1e-7,
    widthDecades: 1,
    removalBands: r.bands,
  };
}

function readLocations(db: Db, ids: string[]): Record<string, LocationInput> {
  const out: Record<string, LocationInput> = {};
  for (const id of ids) {
    const r = getLocation(db, id);
    if (!r) continue;
    // The engine checks one action level per location: the smallest size that has one.
    const l =
      [...r.levels].filter((x) => x.actionPerM3 !== null).sort((x, y) => x.diameterM - y.diameterM)[0] ??
      r.levels[0];
    out[id] = {
      locationId: r.locationId,
      name: r.name,
      environment: r.environment,
      isoClass: r.isoClass,
      airVelocityMps: r.airVelocityMps,
      levels: l ? { atDiameterM: l.diameterM, alertPerM3: l.alertPerM3, actionPerM3: l.actionPerM3 } : null,
    };
  }
  return out;
}

/**
 * Builds inputs for a set of pair rows of one lot (shared line data). With `only`, inputs are built
 * for those pairs alone, but the counter windows still span every row given — so the line data (and
 * with it every figure) is the same whichever subset a thread assesses.
 */
function loadPairs(
  db: Db,
  rows: PairRow[],
  asOfMs: number,
  only: ReadonlySet<string> | undefined,
  set: ParameterSet | null,
): { pairs: PairInput[]; line: LineData } {
  const toolsStored = readTools(db);
  const cleansStored = readCleans(db);
  const tools: Record<string, ToolInput> = {};
  for (const [k, t] of Object.entries(toolsStored)) tools[k] = toToolInput(t);
  const cleans: Record<string, CleanInput> = {};
  for (const [k, c] of Object.entries(cleansStored)) cleans[k] = toCleanInput(c);
  const products: Record<string, ProductInput> = {};
  const ledgerByLot = new Map<string, LedgerStepRow[]>();
  const windows = new Map<string, [number, number]>();
  // The scan headers of each lot's wafers, read once per lot (by wafer, oldest first).
  const scansByLot = new Map<string, Map<string, ScanHeader[]>>();
  /**
   * The latest scan of a wafer before endMs (the last imported of two at the same instant), as
   * latestScanBefore finds it; a wafer of another lot than its pair's is looked up on its own.
   */
  const latestScan = (waferId: string, lotId: string, endMs: number): ScanHeader | null => {
    let byWafer = scansByLot.get(lotId);
    if (!byWafer) {
      byWafer = new Map();
      for (const h of listScansOfLot(db, lotId)) {
        const list = byWafer.get(h.waferId);
        if (list) list.push(h);
        else byWafer.set(h.waferId, [h]);
      }
      scansByLot.set(lotId, byWafer);
    }
    const list = byWafer.get(waferId);
    if (!list) return latestScanBefore(db, waferId, endMs);
    let best: ScanHeader | null = null;
    for (const h of list) if (h.timeMs < endMs) best = h; // oldest first: the last one before endMs
    return best;
  };

  const wafer = (waferId: string, lotId: string, endMs: number, withScan = true): WaferInput => {
    let rows = ledgerByLot.get(lotId);
    if (!rows) {
      rows = readLedgerRows(db, lotId);
      ledgerByLot.set(lotId, rows);
    }
    const mine = rows.filter((r) => r.wafer_id === waferId || r.wafer_id === null);
    let recleanCount = 0;
    const ledger: LedgerStepInput[] = mine.map((r, i) => {
      recleanCount = Math.max(recleanCount, r.reclean_count);
      let cleanId = r.clean_id;
      if (r.kind === 'clean' && !cleanId && r.tool_id)
        cleanId = findCleanFor(db, r.tool_id, r.recipe)?.cleanId ?? null;
      if (r.location_id && (r.kind === 'wait' || r.kind === 'transfer') && r.start_ms < endMs) {
        const to = Math.min(r.end_ms ?? endMs, endMs);
        const w = windows.get(r.location_id);
        windows.set(r.location_id, w ? [Math.min(w[0], r.start_ms), Math.max(w[1], to)] : [r.start_ms, to]);
      }
      return {
        seq: i,
        step: r.step,
        kind: r.kind,
        toolId: r.tool_id,
        chamber: r.chamber,
        cleanId,
        startMs: r.start_ms,
        endMs: r.end_ms,
        locationId: r.location_id,
        carrier: r.carrier,
        orientation: r.orientation,
      };
    });
    const head = withScan ? latestScan(waferId, lotId, endMs) : null;
    const scan = head ? scanInputOf(db, head) : null;
    return { waferId, lotId, latestScan: scan, ledger, recleanCount };
  };

  // Rows outside `only`: their ledgers still widen the counter windows; nothing else is read.
  for (const r of rows) {
    if (!only || only.has(r.id)) continue;
    const endMs = r.planned_bond_ms !== null && r.planned_bond_ms <= asOfMs ? r.planned_bond_ms : asOfMs;
    wafer(r.top_wafer_id, r.lot_id, endMs, false);
    wafer(r.bottom_wafer_id, r.lot_id, endMs, false);
  }
  const pairs: PairInput[] = rows
    .filter((r) => !only || only.has(r.id))
    .map((r) => {
      if (!products[r.product_id]) {
        const p = readProduct(db, r.product_id);
        if (p) products[r.product_id] = p;
      }
      const endMs = r.planned_bond_ms !== null && r.planned_bond_ms <= asOfMs ? r.planned_bond_ms : asOfMs;
      const bonded = r.planned_bond_ms !== null && r.planned_bond_ms <= asOfMs;
      return {
        pairId: r.id,
        lotId: r.lot_id,
        productId: r.product_id,
        top: wafer(r.top_wafer_id, r.lot_id, endMs),
        bottom: wafer(r.bottom_wafer_id, r.lot_id, endMs),
        flipAxis: r.flip_axis,
        rotationRad: r.rotation_rad,
        offsetXM: r.offset_x_m,
        offsetYM: r.offset_y_m,
        bonderToolId: r.bonder_tool_id,
        bondTimeMs: bonded ? r.planned_bond_ms : null,
        smallestReportableVoidM: null,
      };
    });
  const counters: Record<string, CounterSeriesInput> = {};
  for (const [loc, [from, to]] of windows) counters[loc] = readCounterSeries(db, loc, from, to);
  const locations = readLocations(db, [...windows.keys()]);
  return { pairs, line: applyParameterSet({ products, tools, cleans, locations, counters }, set) };
}

/**
 * The typed values a set's values would replace (tools file, products), for showing them side by
 * side: per adders key the chamber's entry, else the tool's — the one the engine used.
 */
export function typedCounterparts(db: Db, values: ParameterValues): TypedCounterparts {
  const stored = readTools(db);
  const tools: TypedCounterparts['tools'] = {};
  for (const [k, f] of Object.entries(values.adders)) {
    const t = stored[k] ?? stored[f.toolId];
    tools[k] = t ? toToolInput(t) : null;
  }
  const storedCleans = readCleans(db);
  const cleans: TypedCounterparts['cleans'] = {};
  for (const k of Object.keys(values.removal)) {
    const c = storedCleans[k];
    cleans[k] = c ? toCleanInput(c) : null;
  }
  const products: TypedCounterparts['products'] = {};
  for (const k of [...Object.keys(values.voidSize), ...Object.keys(values.unexplainedVoids)])
    products[k] = readProduct(db, k) ?? null;
  return { tools, cleans, products };
}

/** A stored product as the engine's input, or null. */
export function readProductInput(db: Db, productId: string): ProductInput | null {
  return readProduct(db, productId) ?? null;
}

/**
 * A pair with its line data, or null when the pair is unknown. `set`: the parameter set to apply
 * (default: the adopted one; null: the typed values).
 */
export function loadPair(
  db: Db,
  pairId: string,
  asOfMs: number,
  set: ParameterSet | null = readAdoptedParameterSet(db),
): { pair: PairInput; line: LineData } | null {
  const row = readPairRow(db, pairId);
  if (!row) return null;
  const { pairs, line } = loadPairs(db, [row], asOfMs, undefined, set);
  return { pair: pairs[0]!, line };
}

/** The ids of a lot's pairs in assessment order, or null when the lot is unknown. */
export function lotPairIds(db: Db, lotId: string): string[] | null {
  if (!readLot(db, lotId)) return null;
  return lotPairRows(db, lotId).map((r) => r.id);
}

/**
 * A lot with its pairs (all, or those in `only`) and line data, or null when the lot is unknown.
 * The line data covers the whole lot either way. `set`: the parameter set to apply (default: the
 * adopted one; null: the typed values).
 */
export function loadLot(
  db: Db,
  lotId: string,
  asOfMs: number,
  only?: ReadonlySet<string>,
  set: ParameterSet | null = readAdoptedParameterSet(db),
): { lot: LotInput; line: LineData } | null {
  const lot = readLot(db, lotId);
  if (!lot) return null;
  const rows = lotPairRows(db, lotId);
  const { pairs, line } = loadPairs(db, rows, asOfMs, only, set);
  const productId = lot.productId ?? rows[0]?.product_id ?? '';
  return { lot: { lotId, productId, pairs }, line };
}

export function assessPairFromDb(db: Db, pairId: string, opts: AssessOptions): PairAssessment | null {
  const loaded = loadPair(db, pairId, opts.asOfMs);
  if (!loaded) return null;
  return assessPairInSession(loaded.pair, createSession(loaded.line, opts.config), opts);
}

export function assessLotFromDb(db: Db, lotId: string, opts: AssessOptions): LotAssessment | null {
  const loaded = loadLot(db, lotId, opts.asOfMs);
  if (!loaded) return null;
  return assessLotInSession(loaded.lot, createSession(loaded.line, opts.config), opts);
}

/**
 * Some pairs of a lot, assessed with the whole lot's line data (what one thread of a parallel lot
 * assessment does), or null when the lot is unknown.
 */
export function assessLotPairsFromDb(
  db: Db,
  lotId: string,
  pairIds: readonly string[],
  opts: AssessOptions,
  set: ParameterSet | null = readAdoptedParameterSet(db),
): { productId: string; pairs: PairAssessment[] } | null {
  const loaded = loadLot(db, lotId, opts.asOfMs, new Set(pairIds), set);
  if (!loaded) return null;
  const session = createSession(loaded.line, opts.config);
  const detail = opts.detail ?? 'summary';
  return {
    productId: loaded.lot.productId,
    pairs: loaded.lot.pairs.map((p) => assessPairInSession(p, session, { ...opts, detail })),
  };
}

/** Lots for the API's list: id, product, wafer and pair counts. */
export function listLotsForApi(
  db: Db,
): { lotId: string; productId: string | null; waferCount: number; pairCount: number }[] {
  const counts = pairCountsByLot(db);
  return listLots(db).map((l) => ({
    lotId: l.lotId,
    productId: l.productId,
    waferCount: l.waferCount,
    pairCount: counts.get(l.lotId) ?? 0,
  }));
}

/**
 * Signs a pair's call off: re-runs the assessment at the time the signer saw (same seed → the same
 * figures) and stores the record unless the inputs' hash changed since. Null when the pair is unknown.
 */
export function signOffPairInDb(
  db: Db,
  pairId: string,
  req: SignoffRequest,
  nowMs: number = Date.now(),
): { ok: true; record: SignoffRecord; id: number } | Extract<SignoffOutcome, { ok: false }> | null {
  const current = assessPairWithInputsFromDb(db, pairId, req.asOfMs);
  if (!current) return null;
  const out = prepareSignoff(current.assessment, req, nowMs);
  if (!out.ok) return out.code === 'hash-changed' ? explainHashChange(db, pairId, req, current, out) : out;
  const id = insertDisposition(db, out.record);
  return { ok: true, record: out.record, id };
}

/** A pair assessed (summary detail) with the record its inputs' hash is computed over, or null. */
export function assessPairWithInputsFromDb(db: Db, pairId: string, asOfMs: number): AssessedInputs | null {
  const loaded = loadPair(db, pairId, asOfMs);
  if (!loaded) return null;
  return assessPairWithInputs(loaded.pair, createSession(loaded.line), { asOfMs, detail: 'summary' });
}

/**
 * Why a sign-off's hash does not match, computed: the pair is assessed on the current data at the
 * other times an assessment shown to the signer is likely to have used — the installation clock
 * (the default of `voidcast assess` and of the pages) and the times of the pair's earlier
 * sign-offs. When one of them has the hash given, the refusal names that time and what differs
 * between it and the time given (src/engine/inputs-diff.ts); when none does, it says so.
 */
function explainHashChange(
  db: Db,
  pairId: string,
  req: SignoffRequest,
  current: AssessedInputs,
  out: Extract<SignoffOutcome, { ok: false }>,
): Extract<SignoffOutcome, { ok: false }> {
  const tried: { asOfMs: number; what: string }[] = [];
  const clock = installationClockMs(db);
  if (clock !== null) tried.push({ asOfMs: clock, what: 'the installation clock' });
  for (const d of readDispositions(db, 'pair', pairId).reverse())
    if (!tried.some((t) => t.asOfMs === d.assessedAtMs))
      tried.push({ asOfMs: d.assessedAtMs, what: `the sign-off #${d.id}` });
  for (const t of tried.slice(0, 4)) {
    if (t.asOfMs === req.asOfMs) continue;
    const other = assessPairWithInputsFromDb(db, pairId, t.asOfMs);
    if (other?.assessment.inputsHash !== req.inputsHash) continue;
    const differences = describeInputsDiff(other, current);
    return {
      ...out,
      matchedAsOfMs: t.asOfMs,
      differences,
      message: hashChangedMessage(
        req.asOfMs,
        current.assessment.inputsHash,
        { asOfMs: t.asOfMs, differences },
        tried,
      ),
    };
  }
  return {
    ...out,
    matchedAsOfMs: null,
    differences: [],
    message: hashChangedMessage(req.asOfMs, current.assessment.inputsHash, null, tried.slice(0, 4)),
  };
}
