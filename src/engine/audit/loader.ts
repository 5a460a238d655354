/**
 * The audit's database access (the rest of src/engine/audit/ is pure): which locations sample an
 * area's air, the hourly aggregates over a period, levels and acknowledgements.
 *
 * **Sampling locations of an area (Choice).** An area (a room, or a zone such as a
 * mini-environment) is sampled by the location itself and by its descendants in the same air —
 * those of the same environment type, found by walking down the hierarchy and stopping at a
 * location of another type (a mini-environment or EFEM inside a room is a clean zone of its own,
 * classified by asking for it) — of which those with counter samples are the sampling locations.
 */

import {
  appendLevel,
  currentStoredLevels,
  listLevelHistory,
  type StoredLevel,
} from '../../store/audit-levels.ts';
import {
  countShortSamples,
  type HourlyQuery,
  locationsWithSamples,
  readHourly,
  readHourlyTotals,
} from '../../store/counter-hourly.ts';
import type { Db } from '../../store/db.ts';
import { appendAck, latestAcks } from '../../store/excursion-acks.ts';
import { getLocation, type LocationRecord, listLocations } from '../../store/locations.ts';
import { type AreaInfo, classifyArea } from './classify.ts';
import { checkPeriod, mToNm, nmToM, periodWords, roomStateCodes, sizeWords } from './common.ts';
import { AuditInputError } from './errors.ts';
import { DEFAULT_RULES, findExcursions, seriesFromRows } from './excursions.ts';
import { type DerivedMethod, deriveLevels } from './levels.ts';
import type {
  AreaClassification,
  AuditPeriod,
  Excursion,
  ExcursionAck,
  ExcursionRules,
  LevelRecord,
  OccupancySelection,
} from './types.ts';

export interface AreaMembers {
  area: LocationRecord;
  /** Locations in the area's air (the area and same-environment descendants), with or without samples. */
  inAir: LocationRecord[];
  /** Of these, those with counter samples: the sampling locations. */
  sampling: LocationRecord[];
}

/** The area and its sampling locations; an unknown id is a not-found AuditInputError. */
export function loadAreaMembers(db: Db, areaId: string): AreaMembers {
  const area = getLocation(db, areaId);
  if (!area)
    throw new AuditInputError(`no location "${areaId}": import it in a locations file first`, 'not-found');
  const all = listLocations(db);
  const children = new Map<string, LocationRecord[]>();
  for (const l of all)
    if (l.parentId !== null) {
      const list = children.get(l.parentId) ?? [];
      list.push(l);
      children.set(l.parentId, list);
    }
  const inAir: LocationRecord[] = [];
  const seen = new Set<string>();
  const walk = (l: LocationRecord) => {
    if (seen.has(l.locationId)) return;
    seen.add(l.locationId);
    inAir.push(l);
    for (const c of children.get(l.locationId) ?? []) if (c.environment === area.environment) walk(c);
  };
  walk(area);
  const withSamples = locationsWithSamples(db);
  const sampling = inAir.filter((l) => withSamples.has(l.locationId));
  return { area, inAir, sampling };
}

export interface ClassifyOptions {
  period: AuditPeriod;
  occupancy?: OccupancySelection;
  edition?: 2015 | 1999;
  classN?: number | null;
  sizesNm?: readonly number[] | null;
}

/** Classification of an area from the stored aggregates. */
export function classifyAreaFromDb(db: Db, areaId: string, opts: ClassifyOptions): AreaClassification {
  const period = checkPeriod(opts.period);
  const occupancy = opts.occupancy ?? 'operational';
  const states = roomStateCodes(occupancy);
  const { area, sampling } = loadAreaMembers(db, areaId);
  const info: AreaInfo = {
    locationId: area.locationId,
    name: area.name,
    isoClass: area.isoClass,
    floorAreaM2: area.floorAreaM2,
  };
  const ids = sampling.map((l) => l.locationId);
  const totals = readHourlyTotals(db, {
    locationIds: ids,
    fromMs: period.fromMs,
    toMs: period.toMs,
    roomStates: states,
  });
  return classifyArea({
    area: info,
    locations: sampling.map((l) => ({ locationId: l.locationId, name: l.name, isoClass: l.isoClass })),
    totals,
    period,
    occupancy,
    edition: opts.edition,
    classN: opts.classN,
    sizesNm: opts.sizesNm,
    countShort: (loc, v, t) => countShortSamples(db, loc, period.fromMs, period.toMs, states, v, t),
  });
}

/** Hourly rows of locations over a period and occupancy state (the audit's one read of counter data). */
export function loadHourly(
  db: Db,
  locationIds: readonly string[],
  period: AuditPeriod,
  occupancy: OccupancySelection,
  diametersNm?: readonly number[],
) {
  const q: HourlyQuery = {
    locationIds,
    fromMs: period.fromMs,
    toMs: period.toMs,
    roomStates: roomStateCodes(occupancy),
    diametersNm,
  };
  return readHourly(db, q);
}

// ───────────────────────────── levels ─────────────────────────────

function toRecord(l: StoredLevel): LevelRecord {
  return {
    locationId: l.locationId,
    diameterM: nmToM(l.diameterNm),
    alertPerM3: l.alertPerM3,
    actionPerM3: l.actionPerM3,
    method: l.method,
    name: l.name,
    window:
      l.windowFromMs !== null && l.windowToMs !== null
        ? { fromMs: l.windowFromMs, toMs: l.windowToMs }
        : null,
    parameters: l.parameters,
    version: l.version,
    setBy: l.setBy,
    setAtMs: l.setAtMs,
    basis: l.basis,
  };
}

function typedRecords(loc: LocationRecord): LevelRecord[] {
  return loc.levels.map((t) => ({
    locationId: loc.locationId,
    diameterM: t.diameterM,
    alertPerM3: t.alertPerM3,
    actionPerM3: t.actionPerM3,
    method: 'typed' as const,
    name: 'typed',
    window: null,
    parameters: {},
    version: 0,
    setBy: 'locations import',
    setAtMs: null,
    basis: 'typed in the locations file',
  }));
}

/**
 * The levels in force per location and channel: the latest derived version, else the level typed in
 * the locations file (method "typed"). Ordered by location and size.
 */
export function loadCurrentLevels(db: Db, locations: readonly LocationRecord[]): LevelRecord[] {
  const stored = currentStoredLevels(
    db,
    locations.map((l) => l.locationId),
  ).map(toRecord);
  const have = new Set(stored.map((l) => `${l.locationId}|${mToNm(l.diameterM)}`));
  const typed = locations
    .flatMap(typedRecords)
    .filter((t) => !have.has(`${t.locationId}|${mToNm(t.diameterM)}`));
  return [...stored, ...typed].sort(
    (a, b) => a.locationId.localeCompare(b.locationId) || a.diameterM - b.diameterM,
  );
}

/** Every version ever set for the locations (derived), plus the typed ones, for the report's history. */
export function loadLevelHistory(db: Db, locations: readonly LocationRecord[]): LevelRecord[] {
  return [
    ...listLevelHistory(
      db,
      locations.map((l) => l.locationId),
    ).map(toRecord),
    ...locations.flatMap(typedRecords),
  ];
}

export interface DeriveRequest {
  locationId: string;
  diameterM: number;
  method: DerivedMethod;
  window: AuditPeriod | null;
  occupancy?: OccupancySelection;
  parameters?: Record<string, number>;
  name: string;
  setBy: string;
  nowMs: number;
}

/**
 * Derives levels for one location and channel from its baseline window and stores them as a new
 * version. The window is required except for class-fraction levels.
 *
 * @throws AuditInputError for an unknown location, a channel its counters do not report, a missing
 *   or too-short window, or bad parameters
 */
export function deriveAndStoreLevels(db: Db, req: DeriveRequest): LevelRecord {
  const loc = getLocation(db, req.locationId);
  if (!loc)
    throw new AuditInputError(
      `no location "${req.locationId}": import it in a locations file first`,
      'not-found',
    );
  const occupancy = req.occupancy ?? 'operational';
  const nm = mToNm(req.diameterM);
  if (!req.name.trim()) throw new AuditInputError('the levels need a name (--as NAME)');
  let points: { count: number; volumeM3: number }[] = [];
  let windowWords = 'no window';
  if (req.method !== 'class-fraction') {
    if (!req.window) throw new AuditInputError(`${req.method} needs a baseline window (--from and --to)`);
    const w = checkPeriod(req.window);
    windowWords = `baseline ${periodWords(w)}`;
    const rows = loadHourly(db, [req.locationId], w, occupancy, [nm]);
    if (rows.length === 0) {
      const any = loadHourly(db, [req.locationId], { fromMs: -8.64e15, toMs: 8.64e15 }, 'any');
      const sizes = [...new Set(any.map((r) => r.diameterNm))].sort((a, b) => a - b);
      if (any.length > 0 && !sizes.includes(nm))
        throw new AuditInputError(
          `${req.locationId} has no channel ≥ ${sizeWords(req.diameterM)}; its counters report ${sizes.map((s) => sizeWords(nmToM(s))).join(', ')}`,
        );
    }
    // One point per hour (states summed when 'any').
    const byHour = new Map<number, { count: number; volumeM3: number }>();
    for (const r of rows) {
      const p = byHour.get(r.hourMs) ?? { count: 0, volumeM3: 0 };
      p.count += r.countSum;
      p.volumeM3 += r.volumeM3;
      byHour.set(r.hourMs, p);
    }
    points = [...byHour.values()];
  }
  const d = deriveLevels({
    method: req.method,
    points,
    parameters: req.parameters,
    diameterM: req.diameterM,
    classN: loc.isoClass,
    windowWords,
  });
  const stored = appendLevel(db, {
    locationId: req.locationId,
    diameterNm: nm,
    alertPerM3: d.alertPerM3,
    actionPerM3: d.actionPerM3,
    method: req.method,
    name: req.name,
    windowFromMs: req.window && req.method !== 'class-fraction' ? req.window.fromMs : null,
    windowToMs: req.window && req.method !== 'class-fraction' ? req.window.toMs : null,
    occupancy,
    parameters: d.parameters,
    basis: d.basis,
    setBy: req.setBy,
    setAtMs: req.nowMs,
  });
  return toRecord(stored);
}

// ───────────────────────────── excursions ─────────────────────────────

export interface ExcursionOptions {
  period: AuditPeriod;
  occupancy?: OccupancySelection;
  rules?: ExcursionRules;
}

/** The inputs of an area's excursions, charts and costs: members, levels and hourly series. */
export function loadAreaSeries(db: Db, areaId: string, period: AuditPeriod, occupancy: OccupancySelection) {
  const members = loadAreaMembers(db, areaId);
  const ids = members.sampling.map((l) => l.locationId);
  const rows = loadHourly(db, ids, period, occupancy);
  return {
    members,
    levels: loadCurrentLevels(db, members.sampling),
    series: seriesFromRows(rows),
  };
}

/** Excursions of an area over a period, with their acknowledgements. */
export function findExcursionsInDb(db: Db, areaId: string, opts: ExcursionOptions): Excursion[] {
  const period = checkPeriod(opts.period);
  const occupancy = opts.occupancy ?? 'operational';
  const { members, levels, series } = loadAreaSeries(db, areaId, period, occupancy);
  if (members.sampling.length === 0)
    throw new AuditInputError(
      `area ${areaId} has no sampling locations: no location in its air has counter samples`,
    );
  const found = findExcursions({ areaId, series, levels, rules: opts.rules ?? DEFAULT_RULES, period });
  const acks = latestAcks(
    db,
    found.map((e) => e.id),
  );
  return found.map((e) => ({ ...e, acknowledgement: acks.get(e.id) ?? null }));
}

/**
 * Acknowledges an excursion with a comment (append-only; the latest holds).
 *
 * @throws AuditInputError for an empty comment or one over 4000 characters, or a malformed id
 */
export function acknowledgeExcursion(
  db: Db,
  excursionId: string,
  comment: string,
  account: string,
  nowMs: number,
): ExcursionAck {
  const text = comment.trim();
  if (
    !/^(action-point|alert-run|area-alert|ratio-shift|data-quality):[^:]{1,200}:\d+:-?\d+$/.test(excursionId)
  )
    throw new AuditInputError(`"${excursionId}" is not an excursion id (rule:location:size-nm:start-ms)`);
  if (text.length === 0) throw new AuditInputError('an acknowledgement needs a comment');
  if (text.length > 4000) throw new AuditInputError('the comment is longer than 4000 characters');
  return appendAck(db, { excursionId, comment: text, account, atMs: nowMs });
}
