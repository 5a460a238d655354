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
  countShortSamples,
  type HourlyQuery,
  locationsWithSamples,
  readHourly,
  readHourlyTotals,
} from '../../store/counter-hourly.ts';
import type { Db } from '../../store/db.ts';
import { getLocation, type LocationRecord, listLocations } from '../../store/locations.ts';
import { type AreaInfo, classifyArea } from './classify.ts';
import { checkPeriod, roomStateCodes } from './common.ts';
import { AuditInputError } from './errors.ts';
import type { AreaClassification, AuditPeriod, OccupancySelection } from './types.ts';

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
