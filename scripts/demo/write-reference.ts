/**
 * The demo's reference files: locations (CSV), tools and cleans (JSON), the product (JSON), and the
 * particle-counter samples (CSV, one file per area). Formats: docs/formats.md.
 */

import { type CounterRow, counterRows } from './air.ts';
import {
  CHANNELS_M,
  CLEANS,
  type LineLocation,
  LOCATIONS,
  PRODUCT,
  SITE_UTC_OFFSET_H,
  TOOLS,
} from './line.ts';
import { csvLine, json, localMinute, NL, num } from './text.ts';

const DEMO_NOTE =
  '# Demo data of voidcast: an invented pilot line (every name, number and event is fiction).';

// ───────────────────────────── locations ─────────────────────────────

export function locationsCsv(): string {
  let out = `# format: voidcast locations 1${NL}${DEMO_NOTE}${NL}# Tramontane pilot line: site > areas Zephyr, Levant, Boreas > bays > tool mini-environments.${NL}`;
  out += csvLine([
    'location_id',
    'parent_id',
    'level',
    'name',
    'environment',
    'iso_class',
    'floor_area_m2',
    'exposed_states',
    'air_velocity_m_s',
    'alert_ge_0.1um_per_m3',
    'action_ge_0.1um_per_m3',
    'alert_ge_0.5um_per_m3',
    'action_ge_0.5um_per_m3',
  ]);
  for (const l of LOCATIONS) {
    const at01 = l.levels?.atDiameterM === 0.1e-6 ? l.levels : null;
    const at05 = l.levels?.atDiameterM === 0.5e-6 ? l.levels : null;
    out += csvLine([
      l.id,
      l.parent,
      l.level,
      l.name,
      l.environment,
      l.isoClass,
      l.floorAreaM2,
      l.exposes.length ? l.exposes.join('|') : 'none',
      l.airVelocityMps,
      at01 ? num(at01.alertPerM3, 0) : null,
      at01 ? num(at01.actionPerM3, 0) : null,
      at05 ? num(at05.alertPerM3, 0) : null,
      at05 ? num(at05.actionPerM3, 0) : null,
    ]);
  }
  return out;
}

// ───────────────────────────── tools and cleans ─────────────────────────────

const TOOL_KIND: Record<string, string> = {
  process: 'process',
  clean: 'clean',
  inspection: 'inspection',
  activation: 'activation',
  bond: 'bonder',
  stocker: 'storage',
  anneal: 'process',
  'void-inspection': 'inspection',
};

function adders(a: (typeof TOOLS)[number]['adders']) {
  if (!a) return null;
  return {
    model: 'power-law',
    countAbove: a.countAbove,
    atDiameterNm: Math.round(a.atDiameterM * 1e9),
    slope: a.slope,
  };
}

export function toolsJson(): string {
  const ids = [...new Set(TOOLS.map((t) => t.id))];
  const tools = ids.map((id) => {
    const rows = TOOLS.filter((t) => t.id === id);
    const main = rows.find((t) => t.chamber === null);
    const chambers = rows.filter((t) => t.chamber !== null);
    const first = rows[0]!;
    const base = {
      id,
      name: chambers.length ? first.name.replace(/, chamber [A-Z]$/, '') : first.name,
      kind: TOOL_KIND[first.kind],
      adders: main ? adders(main.adders) : null,
      ...(main?.adders ? { adderUncertaintyFactor: main.adders.uncertaintyFactor } : {}),
    };
    if (!chambers.length) return base;
    return {
      ...base,
      chambers: chambers.map((c) => ({
        chamber: c.chamber,
        adders: adders(c.adders),
        ...(c.adders ? { adderUncertaintyFactor: c.adders.uncertaintyFactor } : {}),
      })),
    };
  });
  const cleans = CLEANS.map((c) => ({
    id: c.id,
    name: c.name,
    tool: c.toolId,
    recipe: c.id === 'CLN-PCMP' ? 'PCMP-BRUSH-MEG-3' : 'MEG-DIW-60S',
    removal: {
      model: 'logistic-log-d',
      maxEfficiency: c.maxEfficiency,
      d50Nm: Math.round(c.halfSizeM * 1e9 * 10) / 10,
      widthDecades: c.widthDecades,
    },
  }));
  return json({ format: 'voidcast tools 1', tools, cleans });
}

// ───────────────────────────── the product ─────────────────────────────

export function productJson(): string {
  const P = PRODUCT;
  const mm = (m: number) => Math.round(m * 1e6) / 1e3;
  return json({
    format: 'voidcast products 1',
    id: P.id,
    name: P.name,
    bonding: 'wafer-to-wafer',
    wafer: {
      diameterMm: mm(P.waferDiameterM),
      orientationMark: 'notch',
      edgeExclusionMm: mm(P.edgeExclusionM),
    },
    stack: {
      model: P.stack.model,
      top: { material: 'Si(100)', thicknessUm: Math.round(P.stack.topThicknessM * 1e6) },
      bottom: { material: 'Si(100)', thicknessUm: Math.round(P.stack.bottomThicknessM * 1e6) },
    },
    surface: {
      preparation: P.surfacePrep.name,
      energyJm2: P.surfacePrep.energyJm2,
      energyConvention: P.surfacePrep.convention,
    },
    particleHeightFactor: P.heightFactor,
    die: {
      widthMm: mm(P.die.widthM),
      heightMm: mm(P.die.heightM),
      pitchXMm: mm(P.die.pitchXM),
      pitchYMm: mm(P.die.pitchYM),
      originXMm: mm(P.die.originXM),
      originYMm: mm(P.die.originYM),
      padArray: {
        xMm: mm(P.die.pad.xM),
        yMm: mm(P.die.pad.yM),
        widthMm: mm(P.die.pad.widthM),
        heightMm: mm(P.die.pad.heightM),
      },
    },
    clusterAlpha: P.clusterAlpha,
    incoming: {
      countAbove: P.incoming.countAbove,
      atDiameterNm: Math.round(P.incoming.atDiameterM * 1e9),
      slope: P.incoming.slope,
    },
    recleanClean: P.recleanCleanId,
    spec: {
      version: P.spec.version,
      maxVoids: P.spec.maxVoids,
      maxUnbondedFraction: P.spec.maxUnbondedFraction,
      minDieYield: P.spec.minDieYield,
      yieldModel: P.spec.yieldModel,
      confidence: P.spec.confidence,
      smallestReportableVoidMm: mm(P.spec.smallestReportableVoidM),
      qTimes: P.spec.qTimes.map((q) => ({ fromKind: q.fromKind, maxHours: q.maxS / 3600, label: q.label })),
      maxRecleans: P.spec.maxRecleans,
      maxScanAgeHours: P.spec.maxScanAgeS === null ? null : P.spec.maxScanAgeS / 3600,
      scanRequired: P.spec.scanRequired,
    },
  });
}

// ───────────────────────────── counter samples ─────────────────────────────

export const AREAS = ['ZEPHYR', 'LEVANT', 'BOREAS'] as const;

/** Locations (with a counter) of an area, in file order. */
function areaLocations(areaId: string): LineLocation[] {
  const inArea = (l: LineLocation): boolean => {
    let p: string | null = l.parent;
    while (p) {
      if (p === areaId) return true;
      p = LOCATIONS.find((x) => x.id === p)?.parent ?? null;
    }
    return false;
  };
  return LOCATIONS.filter((l) => l.counter && inArea(l));
}

const channelHeader = (d: number) => `ge_${num(d * 1e6, 1)}um`;

/**
 * One area's counter samples as the facility monitoring system exports them: local site time
 * (declared zone +01:00), raw counts with the sampled volume, minute by minute, the area's counters
 * interleaved. Returns the file text.
 */
export function countersCsv(areaId: string): string {
  const locs = areaLocations(areaId);
  const series = locs.map((l) => counterRows(l));
  let out = `# format: voidcast counter-samples 1${NL}${DEMO_NOTE}${NL}# ${areaId[0]}${areaId.slice(1).toLowerCase()} area, ${locs.length} counters (1 CFM, 0.1 µm), one-minute samples, cumulative channels.${NL}`;
  out += `# zone: +0${SITE_UTC_OFFSET_H}:00${NL}# units: counts=raw${NL}# room_state: operational${NL}# rated_max: 1000000 per_ft3${NL}`;
  out += csvLine([
    'counter_id',
    'location_id',
    'start',
    'duration_s',
    'volume_L',
    ...CHANNELS_M.map(channelHeader),
    'status',
  ]);
  // Merge the series by start time (stable: location order within a minute); each series is already
  // in its own file order (including the re-sent burst, which keeps its place after its anchor row).
  const idx = series.map(() => 0);
  const lines: string[] = [];
  const write = (r: CounterRow) => {
    lines.push(
      `${r.counterId},${r.locationId},${localMinute(r.startMs, SITE_UTC_OFFSET_H)},${r.durationS},${num(r.volumeM3 * 1000, 3)},${r.counts.join(',')},ok${NL}`,
    );
  };
  for (;;) {
    let best = -1;
    let bestKey = Number.POSITIVE_INFINITY;
    for (let s = 0; s < series.length; s++) {
      const r = series[s]![idx[s]!];
      if (!r) continue;
      // A re-sent row sorts with the row before it (its position in its own series), so a burst stays together.
      const key =
        idx[s]! > 0 && r.startMs < series[s]![idx[s]! - 1]!.startMs
          ? series[s]![idx[s]! - 1]!.startMs
          : r.startMs;
      if (key < bestKey) {
        bestKey = key;
        best = s;
      }
    }
    if (best < 0) break;
    write(series[best]![idx[best]!]!);
    idx[best]!++;
  }
  return out + lines.join('');
}
