/**
 * ISO 14644-1:2015 classification of an area (room or zone) over a period, from the hourly
 * aggregates. Pure over its inputs (the loader reads them). Uses the model's classifyLocations,
 * bestClassAchieved, iso1999Ucl95 (through classifyLocations, edition 1999), samplingLocations
 * (Table A.1) and minimumSampleVolumeM3 (A.4.4).
 *
 * - **Sampling locations**: the locations of the area's air with counter samples (loader.ts says
 *   which). Their number is compared with Table A.1's minimum for the area's floor area; without a
 *   floor area the count is "not judged" and the area cannot pass.
 * - **Considered sizes** (Choice): every Table 1 size the counters report at which the class has a
 *   value (a blank cell — "not applicable" or "classification inappropriate" — is left out and said
 *   so) and which Table 1 does not mark with note b (large sample volumes: sequential sampling,
 *   Annex D — left out by default and said so), unless sizes are given.
 * - **Location mean** (Choice): Σ counts / Σ sampled volume of the usable samples (the volume-weighted
 *   mean; the plain mean of sample concentrations when every sample has the same volume, as with one
 *   counter at a fixed flow). Fault and sentinel samples are left out and counted.
 * - **Sample volume**: every usable sample must have at least V_s = 20 / C_n,m m³ (≥ 2 L) at the
 *   largest considered size and last at least 1 minute.
 * - **Verdict**: pass only when every sampling location has data and meets the class at every
 *   considered size, the number of locations is enough (floor area registered) and every sample's
 *   volume is adequate; "no data" when no location has a usable sample in the period; "not judged"
 *   when there is no class to test, no floor area, or a location has no data.
 */
import {
  bestClassAchieved,
  classifyLocations,
  ISO_TABLE1_SIZES_NM,
  isoClassLimit,
  isoTable1Cell,
  minimumSampleVolumeM3,
  roundIsoLimit,
  samplingLocations,
} from '../../model/index.ts';
import type { HourlyTotals } from '../../store/counter-hourly.ts';
import { nmToM, sizeWords } from './common.ts';
import { AuditInputError } from './errors.ts';
import type {
  AreaClassification,
  AuditPeriod,
  ClassifiedLocation,
  ClassifiedSize,
  LocationCountCheck,
  OccupancySelection,
  SampleVolumeCheck,
  VerdictStatus,
} from './types.ts';

export const MIN_SAMPLE_DURATION_MS = 60_000;

export interface AreaInfo {
  locationId: string;
  name: string;
  isoClass: number | null;
  floorAreaM2: number | null;
}

export interface ClassifyInput {
  area: AreaInfo;
  /** The area's sampling locations (registered: in its air, with a counter). */
  locations: readonly { locationId: string; name: string; isoClass: number | null }[];
  /** Totals per location and channel over the period and occupancy state (readHourlyTotals). */
  totals: readonly HourlyTotals[];
  period: AuditPeriod;
  occupancy: OccupancySelection;
  edition?: 2015 | 1999;
  /** The class to test; default the area's target class. */
  classN?: number | null;
  /** Considered sizes in whole nm (Table 1 sizes); default every applicable size the counters report. */
  sizesNm?: readonly number[] | null;
  /** Usable samples of a location below a volume or a time (countShortSamples of the store). */
  countShort: (locationId: string, minVolumeM3: number, minDurationMs: number) => number;
}

function cellOf(classN: number, nm: number) {
  return isoTable1Cell(Math.min(9, Math.max(1, Math.floor(classN))), nm);
}
function applicable(classN: number, nm: number): boolean {
  const c = cellOf(classN, nm);
  return !c.blank && !c.notes.includes('b');
}

export function classifyArea(input: ClassifyInput): AreaClassification {
  const { area, period, occupancy } = input;
  const edition = input.edition ?? 2015;
  if (input.locations.length === 0)
    throw new AuditInputError(
      `area ${area.locationId} has no sampling locations: no location in its air has counter samples`,
    );
  const notes: string[] = [];
  const classN = input.classN ?? area.isoClass;
  if (classN !== null && !(classN >= 1 && classN <= 9))
    throw new AuditInputError(`class ${classN} is not an ISO 14644-1 class (1 to 9)`);
  const byLoc = new Map<string, Map<number, HourlyTotals>>();
  for (const t of input.totals) {
    let m = byLoc.get(t.locationId);
    if (!m) {
      m = new Map();
      byLoc.set(t.locationId, m);
    }
    m.set(t.diameterNm, t);
  }
  // Sizes the counters report at every location with data (Table 1 sizes only).
  const reported = new Set<number>();
  for (const m of byLoc.values())
    for (const nm of m.keys()) if (ISO_TABLE1_SIZES_NM.includes(nm)) reported.add(nm);
  let sizesNm: number[];
  if (input.sizesNm && input.sizesNm.length > 0) {
    for (const nm of input.sizesNm)
      if (!ISO_TABLE1_SIZES_NM.includes(nm))
        throw new AuditInputError(
          `${nm / 1000} µm is not a size of ISO 14644-1 Table 1 (0.1, 0.2, 0.3, 0.5, 1, 5 µm)`,
        );
    sizesNm = [...input.sizesNm].sort((a, b) => a - b);
  } else {
    sizesNm = [...reported].sort((a, b) => a - b);
    if (classN !== null) {
      const left = sizesNm.filter((nm) => !applicable(classN, nm));
      sizesNm = sizesNm.filter((nm) => applicable(classN, nm));
      for (const nm of left) {
        const cell = cellOf(classN, nm);
        notes.push(
          `${sizeWords(nmToM(nm))} left out: ${cell.blank ? cell.words : 'its class limit needs large sample volumes (Table 1 note b); ask for it by name to consider it'}`,
        );
      }
    }
  }
  const sizesM = sizesNm.map(nmToM);
  const largest = sizesM.at(-1);
  const requiredM3 = classN !== null && largest !== undefined ? minimumSampleVolumeM3(classN, largest) : 0;

  // Per location.
  const locations: ClassifiedLocation[] = input.locations.map((loc) => {
    const m = byLoc.get(loc.locationId);
    const all = m ? [...m.values()] : [];
    // Channels of one sample share its counts; with several channel sets, the widest tally holds.
    const samples = Math.max(0, ...all.map((t) => t.n));
    const usable = Math.max(0, ...all.map((t) => t.nUsable));
    const vols = all.map((t) => t.minVolumeM3).filter((v): v is number => v !== null);
    const durs = all.map((t) => t.minDurationMs).filter((v): v is number => v !== null);
    const first =
      all.length > 0
        ? {
            minVolumeM3: vols.length ? Math.min(...vols) : null,
            minDurationMs: durs.length ? Math.min(...durs) : null,
          }
        : undefined;
    const means = sizesNm.map((nm) => {
      const t = m?.get(nm);
      return t && t.volumeM3 > 0 ? t.countSum / t.volumeM3 : null;
    });
    const limits = classN !== null ? sizesM.map((d) => roundIsoLimit(isoClassLimit(classN, d))) : null;
    const passBySize = means.map((v, j) => (v === null || limits === null ? null : v <= limits[j]!));
    let volume: SampleVolumeCheck;
    if (usable === 0 || classN === null || largest === undefined)
      volume = {
        requiredM3,
        requiredDurationMs: MIN_SAMPLE_DURATION_MS,
        samples: usable,
        samplesBelow: 0,
        smallestM3: first?.minVolumeM3 ?? null,
        shortestMs: first?.minDurationMs ?? null,
        status: usable === 0 ? 'no data' : 'not judged',
      };
    else {
      const smallest = first!.minVolumeM3!;
      const shortest = first!.minDurationMs!;
      const below =
        smallest < requiredM3 || shortest < MIN_SAMPLE_DURATION_MS
          ? input.countShort(loc.locationId, requiredM3, MIN_SAMPLE_DURATION_MS)
          : 0;
      volume = {
        requiredM3,
        requiredDurationMs: MIN_SAMPLE_DURATION_MS,
        samples: usable,
        samplesBelow: below,
        smallestM3: smallest,
        shortestMs: shortest,
        status: below === 0 ? 'pass' : 'fail',
      };
    }
    let status: VerdictStatus;
    if (usable === 0 || means.some((v) => v === null)) status = 'no data';
    else if (classN === null) status = 'not judged';
    else status = passBySize.every((p) => p === true) ? 'pass' : 'fail';
    return {
      locationId: loc.locationId,
      name: loc.name,
      targetClass: loc.isoClass,
      samples,
      usableSamples: usable,
      excludedSamples: samples - usable,
      meansPerM3: means,
      passBySize,
      status,
      volume,
    };
  });

  // Location count (Table A.1).
  const withData = locations.filter((l) => l.status !== 'no data').length;
  let locationCount: LocationCountCheck;
  if (area.floorAreaM2 === null)
    locationCount = {
      floorAreaM2: null,
      required: null,
      registered: locations.length,
      withData,
      status: 'not judged',
      words: 'floor area not registered: the minimum number of sampling locations (Table A.1) is unknown',
    };
  else {
    const required = samplingLocations(area.floorAreaM2);
    const ok = locations.length >= required;
    locationCount = {
      floorAreaM2: area.floorAreaM2,
      required,
      registered: locations.length,
      withData,
      status: ok ? 'pass' : 'fail',
      words: ok
        ? `${locations.length} sampling locations registered; Table A.1 asks at least ${required} for ${area.floorAreaM2} m²`
        : `too few sampling locations: ${locations.length} registered, Table A.1 asks at least ${required} for ${area.floorAreaM2} m²`,
    };
  }

  // Per size and overall, through the model.
  const judged = locations.filter((l) => l.status !== 'no data');
  let sizes: ClassifiedSize[] = sizesM.map((d, j) => ({
    diameterM: d,
    limitPerM3: classN !== null ? roundIsoLimit(isoClassLimit(classN, d)) : 0,
    meanOfMeansPerM3: judged.length ? judged.reduce((a, l) => a + l.meansPerM3[j]!, 0) / judged.length : null,
    ucl95PerM3: null,
    status: judged.length === 0 ? 'no data' : 'not judged',
  }));
  let classAchieved: number | null = null;
  let status: VerdictStatus;
  if (locations.every((l) => l.usableSamples === 0)) {
    notes.push(`no data: no sampling location has a usable sample in the period (occupancy: ${occupancy})`);
    status = 'no data';
  } else if (sizesM.length === 0) {
    notes.push('the counters report no size of ISO 14644-1 Table 1 that applies to this class');
    status = 'no data';
  } else if (judged.length === 0) {
    notes.push('no data: no sampling location has usable samples at every considered size');
    status = 'no data';
  } else {
    const data = {
      sizesM,
      locationMeansPerM3: judged.map((l) => l.meansPerM3 as number[]),
      edition,
    };
    classAchieved = bestClassAchieved(data);
    if (classN === null) {
      notes.push(`no target class registered for ${area.locationId}: give the class to test`);
      status = 'not judged';
    } else {
      const r = classifyLocations({ ...data, classN });
      sizes = sizes.map((s, j) => ({
        ...s,
        limitPerM3: r.sizes[j]!.limitPerM3,
        meanOfMeansPerM3: r.sizes[j]!.meanOfMeansPerM3,
        ucl95PerM3: r.sizes[j]!.ucl95PerM3,
        status: r.sizes[j]!.pass ? 'pass' : 'fail',
      }));
      const failed =
        !r.pass || locationCount.status === 'fail' || locations.some((l) => l.volume.status === 'fail');
      if (failed) status = 'fail';
      else if (judged.length < locations.length || locationCount.status === 'not judged')
        status = 'not judged';
      else status = 'pass';
      if (!r.pass)
        notes.push(
          `ISO class ${classN} not met at ${sizes
            .filter((s) => s.status === 'fail')
            .map((s) => sizeWords(s.diameterM))
            .join(', ')}`,
        );
      if (edition === 1999 && (judged.length < 2 || judged.length > 9))
        notes.push(
          `the 1999 UCL applies to 2–9 locations; ${judged.length} here, so only the location means were tested`,
        );
    }
    for (const l of locations)
      if (l.status === 'no data')
        notes.push(`${l.locationId}: no data in the period (occupancy: ${occupancy})`);
    for (const l of locations)
      if (l.volume.status === 'fail')
        notes.push(
          `${l.locationId}: ${l.volume.samplesBelow} samples below ${(requiredM3 * 1000).toFixed(2)} L or 1 minute (ISO 14644-1 A.4.4)`,
        );
  }
  if (locationCount.status !== 'pass') notes.push(locationCount.words);
  return {
    areaId: area.locationId,
    areaName: area.name,
    period,
    occupancy,
    edition,
    classN,
    sizesM,
    locationCount,
    sizes,
    locations,
    status,
    classAchieved,
    notes,
  };
}
