/**
 * The demo line: the "Tramontane pilot line", an invented hybrid-bonding pilot line.
 *
 * Everything here is fiction made for voidcast's demo — the site, its three areas (named after
 * winds: Zephyr, Levant, Boreas), bays, mini-environments, tools and chambers, cleans, the product
 * "Gale-7" and its lots. No real company's names, data or labels.
 *
 * This file is the scenario's *truth*: what the line really is and does. The generators draw the
 * files from it (counter samples, scans, ledgers, void inspections) through the model library, and
 * the reference files (locations, tools, products) state the same numbers, so that what voidcast
 * infers from the files is what was planted. docs/demo.md tells the story.
 *
 * Units: SI inside (m, s, m/s, particles/m³), as in src/model; the writers convert at the edge.
 */

import { isoClassLimit, minimumSampleVolumeM3 } from '../../src/model/iso14644.ts';

// ───────────────────────────── calendar ─────────────────────────────

/** The counter window: two weeks, Monday 5 October 2026 00:00 UTC to Monday 19 October 00:00 UTC. */
export const WINDOW_START_MS = Date.UTC(2026, 9, 5, 0, 0, 0);
export const WINDOW_DAYS = 14;
export const WINDOW_END_MS = WINDOW_START_MS + WINDOW_DAYS * 86_400_000;
/** One-minute counter samples. */
export const SAMPLE_S = 60;
/** Site local time is UTC+01:00 (no daylight-saving change falls in the window); shifts run on local time. */
export const SITE_UTC_OFFSET_H = 1;
/** The moment the waiting lots are assessed in the demo (Sunday 18 October 2026, 19:00 UTC). */
export const DEMO_AS_OF_MS = Date.UTC(2026, 9, 18, 19, 0, 0);

/** The root seed; every generator derives its own stream from it and a key (see rng.ts of the demo). */
export const DEMO_SEED = 20261005;

export const h = (hours: number): number => hours * 3_600_000;
export const at = (iso: string): number => {
  const t = Date.parse(iso);
  if (!Number.isFinite(t)) throw new Error(`bad instant ${iso}`);
  return t;
};

// ───────────────────────────── site, areas, locations ─────────────────────────────

/** Environment types as the locations file names them. */
export type Environment =
  | 'open-room'
  | 'mini-environment'
  | 'efem'
  | 'load-port'
  | 'purged-carrier'
  | 'process-module';
/** Wafer states open to a location's air, as the locations file names them. */
export type ExposedState = 'post-cmp' | 'cleaned' | 'activated' | 'bonded';

export interface LineLocation {
  id: string;
  name: string;
  /** Parent location id (null for the site). */
  parent: string | null;
  level: 'site' | 'area' | 'bay' | 'tool' | 'point';
  environment: Environment;
  /** Target ISO 14644-1 class (null: not classified, e.g. the site). */
  isoClass: number | null;
  /** Floor area of the classified room, m² (bays and areas; null for tool points). */
  floorAreaM2: number | null;
  /** Downflow speed over a horizontal wafer, m/s. */
  airVelocityMps: number | null;
  /** Alert and action levels at ≥ 0.5 µm, particles/m³ (50 % and 100 % of the class limit). */
  levels: { atDiameterM: number; alertPerM3: number; actionPerM3: number } | null;
  /** Wafer states open to this air (empty: none). */
  exposes: ExposedState[];
  /** The counter that samples this location (null: none). */
  counter: CounterSpec | null;
}

/** How the air of a location behaves (the truth behind its counter's samples). */
export interface AirSpec {
  /** Median concentration ≥ 0.1 µm at full activity, particles/m³. */
  c01PerM3: number;
  /** Cumulative power-law slope α in C(≥ d) ∝ d^(−α) up to 0.5 µm (ISO 14644-1's nominal is 2.08). */
  slope: number;
  /**
   * Slope above 0.5 µm. Mini-environments behind ULPA filters hold few large particles (they settle
   * and are not re-entrained), so their spectrum steepens there; open rooms keep one slope.
   */
  slopeLarge: number;
  /** How much of the concentration follows people's activity (0: none, 1: all). */
  activityCoupling: number;
  /** Amplitude of the log-normal minute-to-minute variation (σ of ln C). */
  sigmaLn: number;
  /** People passing: extra bursts per hour at full activity (open rooms only). */
  burstsPerHour: number;
}

export interface CounterSpec {
  id: string;
  /** Sample flow, m³/s (every counter on the line is a 1 CFM = 28.3168 L/min, 0.1 µm counter). */
  flowM3PerS: number;
  air: AirSpec;
}

/** Channel lower sizes of every counter on the line, m (cumulative "≥ d" reporting). */
export const CHANNELS_M = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1.0e-6, 5.0e-6] as const;

const CFM = 28.316846592e-3 / 60; // m³/s
/** Sampled volume of one one-minute sample of a 1 CFM counter, m³. */
const MINUTE_SAMPLE_M3 = 28.316846592e-3;

/**
 * Per-sample alert and action levels at 50 % and 100 % of a class limit (one of the two common
 * conventions; practice of the trade, no single source). The size: 0.5 µm in ISO 4 and dirtier air,
 * 0.1 µm in ISO 1–3 air, where 0.5 µm counts are too sparse to act on. The class: the target, unless
 * a one-minute 28.3 L sample is smaller than ISO 14644-1:2015's minimum single-sample volume
 * (20 / C_n × 1000 L) at that size — then the first class above whose limit one sample can resolve
 * (ISO 4 at 0.5 µm needs 57 L, so ISO 4 bays act at the ISO 5 limit; ISO 2 at 0.1 µm needs 200 L,
 * so ISO 2 mini-environments act at the ISO 3 limit). Below that volume a single count already
 * reads above the limit, and per-minute levels would alarm on noise.
 */
function levelsFor(isoClass: number) {
  const atDiameterM = isoClass <= 3 ? 0.1e-6 : 0.5e-6;
  let n = isoClass;
  while (minimumSampleVolumeM3(n, atDiameterM) > MINUTE_SAMPLE_M3) n++;
  const lim = isoClassLimit(n, atDiameterM);
  return { atDiameterM, alertPerM3: Math.round(lim / 2), actionPerM3: Math.round(lim) };
}

function openRoom(c01: number, slope: number, bursts: number): AirSpec {
  return {
    c01PerM3: c01,
    slope,
    slopeLarge: slope,
    activityCoupling: 0.65,
    sigmaLn: 0.22,
    burstsPerHour: bursts,
  };
}
function mini(c01: number, slope: number): AirSpec {
  return { c01PerM3: c01, slope, slopeLarge: 3, activityCoupling: 0.25, sigmaLn: 0.25, burstsPerHour: 0 };
}

export const LOCATIONS: LineLocation[] = [
  {
    id: 'TRAM',
    name: 'Tramontane pilot line',
    parent: null,
    level: 'site',
    environment: 'open-room',
    isoClass: null,
    floorAreaM2: null,
    airVelocityMps: null,
    levels: null,
    exposes: [],
    counter: null,
  },
  area('ZEPHYR', 'Zephyr area — CMP and post-CMP clean', 5, 420),
  area('LEVANT', 'Levant area — inspection, activation and rinse', 4, 260),
  area('BOREAS', 'Boreas area — queue, bonding, anneal', 4, 300),
  bay('ZEP-B1', 'Zephyr bay 1 (polishers)', 'ZEPHYR', 5, 210, [], {
    id: 'PC-Z1',
    flowM3PerS: CFM,
    air: openRoom(9000, 2.15, 3),
  }),
  bay('ZEP-B2', 'Zephyr bay 2 (post-CMP cleaners, post-clean scanner)', 'ZEPHYR', 5, 210, [], {
    id: 'PC-Z2',
    flowM3PerS: CFM,
    air: openRoom(6500, 2.1, 2.5),
  }),
  point('ZEP-STK', 'Zephyr stocker interior', 'ZEP-B1', 'mini-environment', 4, [], {
    id: 'PC-Z3',
    flowM3PerS: CFM,
    air: mini(900, 2.0),
  }),
  point(
    'ZEP-CLN-ME',
    'ZCLN-1 output mini-environment and post-clean scanner',
    'ZEP-B2',
    'mini-environment',
    3,
    ['cleaned'],
    {
      id: 'PC-Z4',
      flowM3PerS: CFM,
      air: mini(160, 1.9),
    },
  ),
  bay('LEV-B1', 'Levant bay 1 (scanners, activation, rinse tools)', 'LEVANT', 4, 260, [], {
    id: 'PC-L1',
    flowM3PerS: CFM,
    air: openRoom(1400, 2.1, 2),
  }),
  point('LEV-SCN-ME', 'LSCN-1 pre-bond scanner EFEM', 'LEV-B1', 'efem', 2, ['cleaned'], {
    id: 'PC-L2',
    flowM3PerS: CFM,
    air: mini(25, 1.4),
  }),
  point('LEV-ACT-ME', 'LACT-1 activation tool EFEM', 'LEV-B1', 'efem', 2, ['cleaned', 'activated'], {
    id: 'PC-L3',
    flowM3PerS: CFM,
    air: mini(25, 1.4),
  }),
  point(
    'LEV-RIN-ME',
    'LRIN-1/LRIN-2 rinse-dry mini-environment',
    'LEV-B1',
    'mini-environment',
    2,
    ['activated'],
    {
      id: 'PC-L4',
      flowM3PerS: CFM,
      air: mini(28, 1.4),
    },
  ),
  bay('BOR-B1', 'Boreas bay 1 (bonder, anneal, void inspection)', 'BOREAS', 4, 180, [], {
    id: 'PC-B1',
    flowM3PerS: CFM,
    air: openRoom(1200, 2.1, 2),
  }),
  // The dirty bay: an older buffer bay with carts, under the same ISO 5 target but running far
  // closer to its limit, and home of the genuine excursion (fan-filter unit failure, see air.ts).
  bay('BOR-B2', 'Boreas bay 2 (buffer carts and spare load ports)', 'BOREAS', 5, 120, ['activated'], {
    id: 'PC-B2',
    flowM3PerS: CFM,
    air: openRoom(9000, 1.95, 4),
  }),
  point(
    'BOR-QUE-ME',
    'Bond queue mini-environment (open-cassette shelves)',
    'BOR-B1',
    'mini-environment',
    2,
    ['activated'],
    {
      id: 'PC-B3',
      flowM3PerS: CFM,
      air: mini(16, 1.3),
    },
  ),
  point('BOR-BND-EFEM', 'BBND-1 bonder EFEM and aligner', 'BOR-B1', 'efem', 2, ['activated', 'bonded'], {
    id: 'PC-B4',
    flowM3PerS: CFM,
    air: mini(14, 1.3),
  }),
];

function area(id: string, name: string, isoClass: number, floorAreaM2: number): LineLocation {
  return {
    id,
    name,
    parent: 'TRAM',
    level: 'area',
    environment: 'open-room',
    isoClass,
    floorAreaM2,
    airVelocityMps: null,
    levels: null,
    exposes: [],
    counter: null,
  };
}
function bay(
  id: string,
  name: string,
  parent: string,
  isoClass: number,
  floorAreaM2: number,
  exposes: ExposedState[],
  counter: CounterSpec,
): LineLocation {
  return {
    id,
    name,
    parent,
    level: 'bay',
    environment: 'open-room',
    isoClass,
    floorAreaM2,
    airVelocityMps: 0.35,
    levels: levelsFor(isoClass),
    exposes,
    counter,
  };
}
function point(
  id: string,
  name: string,
  parent: string,
  environment: Environment,
  isoClass: number,
  exposes: ExposedState[],
  counter: CounterSpec,
): LineLocation {
  return {
    id,
    name,
    parent,
    level: 'tool',
    environment,
    isoClass,
    floorAreaM2: null,
    airVelocityMps: 0.4,
    levels: levelsFor(isoClass),
    exposes,
    counter,
  };
}

export const COUNTED_LOCATIONS = LOCATIONS.filter((l) => l.counter !== null);
export function location(id: string): LineLocation {
  const l = LOCATIONS.find((x) => x.id === id);
  if (!l) throw new Error(`unknown demo location ${id}`);
  return l;
}

// ───────────────────────────── planted data-quality problems and the excursion ─────────────────────────────

/**
 * The genuine excursion: a fan-filter unit above the Boreas bay 2 buffer carts stops at night; a
 * technician restores it in the morning. Concentration rises over `riseMin`, holds at `factor` × the
 * baseline at ≥ 0.5 µm with a flatter spectrum (large particles from the unfiltered return air), and
 * decays over `decayMin` after the fix.
 */
export const EXCURSION = {
  locationId: 'BOR-B2',
  startMs: at('2026-10-18T00:40:00Z'),
  endMs: at('2026-10-18T04:55:00Z'),
  riseMin: 18,
  decayMin: 45,
  /** Multiplier at ≥ 0.5 µm on the plateau. */
  factor: 22,
  /** Slope of the excess particles (flatter than the room's). */
  slope: 1.45,
  /** The neighbouring bay sees a weak echo through the open passage. */
  echo: { locationId: 'BOR-B1', factor: 1.8 },
};

/** The counter fault: PC-L1's inlet is blocked; it reports all-zero rows with no flow flag. */
export const ZERO_RUN = {
  locationId: 'LEV-B1',
  startMs: at('2026-10-13T09:12:00Z'),
  endMs: at('2026-10-13T17:48:00Z'), // exclusive: 516 one-minute rows
};

/**
 * The burst of duplicated rows: PC-B1's network link drops; its buffer re-sends two hours of samples
 * that had already arrived, appended after the samples of 14:00–14:59 (so out of time order as well).
 */
export const DUPLICATE_BURST = {
  locationId: 'BOR-B1',
  fromMs: at('2026-10-14T10:00:00Z'),
  toMs: at('2026-10-14T12:00:00Z'), // 120 rows re-sent
  /** The re-sent rows appear in the file after the row that starts at this instant. */
  afterMs: at('2026-10-14T14:59:00Z'),
};

// ───────────────────────────── tools, chambers, cleans ─────────────────────────────

/** Adders per wafer pass as fabs state them: N(≥ d) = countAbove · (d / atDiameterM)^(−slope). */
export interface AdderSpec {
  countAbove: number;
  atDiameterM: number;
  slope: number;
  /** 95 % of passes within ×/÷ this factor of the level. */
  uncertaintyFactor: number;
  /** Smallest size the level applies to, m (null: carried down to the engine's tail floor). */
  fromM?: number;
}

export interface LineTool {
  id: string;
  chamber: string | null;
  name: string;
  kind: 'process' | 'clean' | 'inspection' | 'activation' | 'bond' | 'stocker' | 'anneal' | 'void-inspection';
  locationId: string;
  /** Adders per pass (null: nothing measurable; inspection tools are taken as adding nothing). */
  adders: AdderSpec | null;
  /** How the adder level was established (words for the tools file). */
  basis: string;
}

const ADDER_SIZE_M = 45e-9;

export const TOOLS: LineTool[] = [
  tool(
    'ZCMP-1',
    null,
    'Zephyr polisher 1 (dielectric/Cu CMP)',
    'process',
    'ZEP-B1',
    null,
    'not measured (upstream of the post-CMP clean)',
  ),
  tool(
    'ZCLN-1',
    null,
    'Zephyr post-CMP cleaner 1 (brush, megasonic, dilute chemistry)',
    'clean',
    'ZEP-B2',
    { countAbove: 0.8, atDiameterM: ADDER_SIZE_M, slope: 1.8, uncertaintyFactor: 2 },
    'monitor wafers, September qualification',
  ),
  tool(
    'ZSCN-1',
    null,
    'Zephyr post-clean surface scanner',
    'inspection',
    'ZEP-CLN-ME',
    null,
    'inspection tool',
  ),
  tool(
    'ZSTK-1',
    null,
    'Zephyr stocker',
    'stocker',
    'ZEP-STK',
    { countAbove: 0.2, atDiameterM: ADDER_SIZE_M, slope: 1.8, uncertaintyFactor: 2.5 },
    'monitor wafers, handling only',
  ),
  tool(
    'LSCN-1',
    null,
    'Levant pre-bond surface scanner',
    'inspection',
    'LEV-SCN-ME',
    null,
    'inspection tool',
  ),
  tool(
    'LACT-1',
    'A',
    'Levant plasma activation 1, chamber A',
    'activation',
    'LEV-ACT-ME',
    { countAbove: 0.5, atDiameterM: ADDER_SIZE_M, slope: 1.8, uncertaintyFactor: 2 },
    'monitor wafers 12 October (TRMON1-01, -02)',
  ),
  // Chamber B sheds flakes from a liner past its cleaning interval: many adders, flat spectrum.
  tool(
    'LACT-1',
    'B',
    'Levant plasma activation 1, chamber B',
    'activation',
    'LEV-ACT-ME',
    { countAbove: 25, atDiameterM: ADDER_SIZE_M, slope: 1.0, uncertaintyFactor: 1.8, fromM: 40e-9 },
    'monitor wafers 12 October (TRMON1-03, -04)',
  ),
  tool(
    'LRIN-1',
    null,
    'Levant megasonic rinse-dry 1',
    'clean',
    'LEV-RIN-ME',
    { countAbove: 0.3, atDiameterM: ADDER_SIZE_M, slope: 1.8, uncertaintyFactor: 2 },
    'monitor wafers 12 October (TRMON1-05, -06)',
  ),
  tool(
    'LRIN-2',
    null,
    'Levant megasonic rinse-dry 2',
    'clean',
    'LEV-RIN-ME',
    { countAbove: 0.3, atDiameterM: ADDER_SIZE_M, slope: 1.8, uncertaintyFactor: 2 },
    'monitor wafers 12 October (TRMON1-07, -08)',
  ),
  tool(
    'BBND-1',
    null,
    'Boreas wafer bonder 1 (alignment and room-temperature contact)',
    'bond',
    'BOR-BND-EFEM',
    { countAbove: 0.4, atDiameterM: ADDER_SIZE_M, slope: 1.7, uncertaintyFactor: 2 },
    'monitor wafers, September qualification',
  ),
  tool(
    'BIRI-1',
    null,
    'Boreas infrared void inspection',
    'void-inspection',
    'BOR-B1',
    null,
    'inspection tool',
  ),
  tool('BANL-1', null, 'Boreas anneal furnace 1 (300 °C)', 'anneal', 'BOR-B1', null, 'bonded pairs only'),
  tool(
    'BSAM-1',
    null,
    'Boreas acoustic void inspection',
    'void-inspection',
    'BOR-B1',
    null,
    'inspection tool',
  ),
];

function tool(
  id: string,
  chamber: string | null,
  name: string,
  kind: LineTool['kind'],
  locationId: string,
  adders: AdderSpec | null,
  basis: string,
): LineTool {
  return { id, chamber, name, kind, locationId, adders, basis };
}

export function lineTool(id: string, chamber: string | null = null): LineTool {
  const t = TOOLS.find((x) => x.id === id && x.chamber === chamber);
  if (!t) throw new Error(`unknown demo tool ${id}${chamber ? `/${chamber}` : ''}`);
  return t;
}

/**
 * A clean's particle removal efficiency, a logistic in log d (voidcast's modelling choice; the shape
 * follows the data of Rooney, Pui & Grant 1990: > 97 % at ≥ 0.3 µm, falling at smaller sizes):
 *   PRE(d) = maxEfficiency / (1 + exp(−(log10 d − log10 halfSizeM) / widthDecades))
 * LRIN-1: 56 % at 30 nm, 78 % at 50 nm, 98 % at 300 nm. LRIN-2: 28 % at 40 nm, 73 % at 100 nm, 94 % at 300 nm.
 */
export interface LineClean {
  id: string;
  name: string;
  toolId: string;
  maxEfficiency: number;
  halfSizeM: number;
  widthDecades: number;
  basis: string;
}

export const CLEANS: LineClean[] = [
  {
    id: 'CLN-PCMP',
    name: 'Post-CMP brush and megasonic clean (dilute chemistry)',
    toolId: 'ZCLN-1',
    maxEfficiency: 0.995,
    halfSizeM: 24e-9,
    widthDecades: 0.23,
    basis: 'qualification with deposited spheres, September',
  },
  {
    id: 'CLN-RIN1',
    name: 'Megasonic DI rinse and spin dry, LRIN-1',
    toolId: 'LRIN-1',
    maxEfficiency: 0.99,
    halfSizeM: 26e-9,
    widthDecades: 0.22,
    basis: 'monitor wafers 12 October (TRMON1-05, -06)',
  },
  // LRIN-2's megasonic transducer has lost power: large particles still come off, small ones stay.
  {
    id: 'CLN-RIN2',
    name: 'Megasonic DI rinse and spin dry, LRIN-2',
    toolId: 'LRIN-2',
    maxEfficiency: 0.97,
    halfSizeM: 60e-9,
    widthDecades: 0.2,
    basis: 'monitor wafers 12 October (TRMON1-07, -08)',
  },
];

export function lineClean(id: string): LineClean {
  const c = CLEANS.find((x) => x.id === id);
  if (!c) throw new Error(`unknown demo clean ${id}`);
  return c;
}

// ───────────────────────────── the product ─────────────────────────────

/**
 * The interface energy the line's voids really follow (the truth behind the void inspections), per
 * surface, J/m². The product file states the typed 0.8 J/m² (the middle of the hybrid-dielectric
 * range); the line's bonds at contact are weaker, 0.5 J/m² (the low end of that range, Tong & Gösele
 * 1999 as quoted in docs/models.md), so its particle voids are larger than the typed value predicts —
 * in the small-gap regime R ∝ 1/W, 1.6 × larger. Calibration from the inspections should recover it
 * (docs/demo.md, "What calibration recovers").
 */
export const TRUE_INTERFACE_ENERGY_JM2 = 0.5;

export const PRODUCT = {
  id: 'GALE-7',
  name: 'Gale-7 logic-on-memory hybrid stack (wafer-to-wafer)',
  waferDiameterM: 0.3,
  edgeExclusionM: 3e-3,
  stack: {
    model: 'two-flexible-plates' as const,
    // SEMI M1: 300 mm wafers are 775 µm thick; both wafers bond at full thickness.
    topThicknessM: 775e-6,
    bottomThicknessM: 775e-6,
    // In-plane average of E/(1 − ν²) of (100) Si from Hall's stiffnesses (Hopcroft, Nix & Kenny 2010).
    plateModulusPa: 155.4e9,
  },
  surfacePrep: {
    name: 'hybrid-dielectric',
    // SiCN/SiO₂ hybrid dielectric at room-temperature contact, per-surface γ ≈ 0.5–1.2 J/m² (memory
    // value, Tong & Gösele 1999 range); 0.8 is the middle.
    energyJm2: 0.8,
    convention: 'per-surface' as const,
  },
  heightFactor: 1,
  die: {
    widthM: 8e-3,
    heightM: 6e-3,
    pitchXM: 8.1e-3,
    pitchYM: 6.1e-3,
    // Die (0, 0) is centred on the wafer centre.
    originXM: -4e-3,
    originYM: -3e-3,
    pad: { xM: 1.0e-3, yM: 1.0e-3, widthM: 6e-3, heightM: 4e-3 },
  },
  clusterAlpha: 1.5,
  incoming: { countAbove: 20, atDiameterM: 45e-9, slope: 1.5 },
  recleanCleanId: 'CLN-RIN1',
  spec: {
    version: 'GALE-7 pre-bond spec rev C',
    maxVoids: 12,
    maxUnbondedFraction: 0.002,
    minDieYield: 0.9,
    yieldModel: 'negative-binomial' as const,
    confidence: 0.95,
    // Acoustic inspection after anneal reports voids from 0.1 mm equivalent diameter.
    smallestReportableVoidM: 0.1e-3,
    qTimes: [
      { fromKind: 'activation' as const, maxS: 8 * 3600, label: 'activation → bond' },
      { fromKind: 'clean' as const, maxS: 24 * 3600, label: 'last clean → bond' },
    ],
    maxRecleans: 2,
    maxScanAgeS: 48 * 3600,
    scanRequired: true,
  },
};
