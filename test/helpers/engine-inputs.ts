/**
 * Engine inputs built in code for the engine's tests and the bench (invented data, no demo).
 */
import type {
  CleanInput,
  CounterSeriesInput,
  LedgerStepInput,
  LineData,
  LocationInput,
  PairInput,
  ProductInput,
  ScanInput,
  ToolInput,
  WaferInput,
} from '../../src/engine/types.ts';

export const H = 3_600_000;
export const MIN = 60_000;
/** An arbitrary fixed origin for test times: 2030-01-01T00:00:00Z. */
export const T0 = Date.UTC(2030, 0, 1);

export function product(
  over: Partial<ProductInput> = {},
  spec: Partial<ProductInput['spec']> = {},
): ProductInput {
  return {
    productId: 'HB-1',
    name: 'Test hybrid product',
    waferDiameterM: 0.3,
    edgeExclusionM: 3e-3,
    stack: {
      model: 'two-flexible-plates',
      topThicknessM: 775e-6,
      bottomThicknessM: 775e-6,
      plateModulusPa: 155.4e9,
    },
    surfacePrep: { name: 'hybrid-dielectric', energyJm2: 0.85, convention: 'per-surface' },
    heightFactor: 1,
    die: {
      widthM: 10e-3,
      heightM: 10e-3,
      pitchXM: 10.1e-3,
      pitchYM: 10.1e-3,
      originXM: -5e-3,
      originYM: -5e-3,
      pad: null,
    },
    clusterAlpha: 1,
    incoming: { countAbove: 20, atDiameterM: 45e-9, slope: 2, fromM: null },
    recleanCleanId: 'PBC',
    ...over,
    spec: {
      version: 'spec-1',
      maxVoids: 3,
      maxUnbondedFraction: 0.01,
      minDieYield: 0.95,
      yieldModel: 'negative-binomial',
      confidence: 0.95,
      smallestReportableVoidM: 0.5e-3,
      qTimes: [{ fromKind: 'activation', maxS: 8 * 3600, label: 'activation → bond' }],
      maxRecleans: 1,
      maxScanAgeS: null,
      scanRequired: false,
      ...spec,
    },
  };
}

export function tool(toolId: string, countAbove: number, over: Partial<ToolInput> = {}): ToolInput {
  return {
    toolId,
    chamber: null,
    name: `Tool ${toolId}`,
    adders: { countAbove, atDiameterM: 45e-9, slope: 2, fromM: null },
    adderUncertaintyFactor: 2,
    ...over,
  };
}

export function clean(cleanId: string, over: Partial<CleanInput> = {}): CleanInput {
  return {
    cleanId,
    name: `Clean ${cleanId}`,
    toolId: null,
    maxEfficiency: 0.99,
    halfSizeM: 40e-9,
    widthDecades: 0.15,
    ...over,
  };
}

export function location(locationId: string, over: Partial<LocationInput> = {}): LocationInput {
  return {
    locationId,
    name: `Bay ${locationId}`,
    environment: 'open room',
    isoClass: 5,
    airVelocityMps: 0.3,
    levels: null,
    ...over,
  };
}

/** One-minute samples at a location from `fromMs` to `toMs` with constant (or f(i)) cumulative concentrations. */
export function counterSeries(
  locationId: string,
  fromMs: number,
  toMs: number,
  channelsM: number[],
  conc: (i: number) => number[],
  flags: (i: number) => number = () => 0,
): CounterSeriesInput {
  const n = Math.round((toMs - fromMs) / MIN);
  const k = channelsM.length;
  const c = new Float64Array(n * k);
  for (let i = 0; i < n; i++) {
    const v = conc(i);
    for (let j = 0; j < k; j++) c[i * k + j] = v[j]!;
  }
  return {
    locationId,
    channelSizesM: Float64Array.from(channelsM),
    startMs: Float64Array.from({ length: n }, (_, i) => fromMs + i * MIN),
    endMs: Float64Array.from({ length: n }, (_, i) => fromMs + (i + 1) * MIN),
    cumulativePerM3: c,
    flags: Uint8Array.from({ length: n }, (_, i) => flags(i)),
  };
}

export function scan(
  scanId: string,
  timeMs: number,
  xs: number[],
  ys: number[],
  ds: number[],
  thresholdM = 45e-9,
): ScanInput {
  return {
    scanId,
    timeMs,
    toolId: 'SCAN-1',
    recipe: null,
    thresholdM,
    edgeExclusionM: 3e-3,
    particles: {
      count: xs.length,
      xM: Float64Array.from(xs),
      yM: Float64Array.from(ys),
      diameterM: Float64Array.from(ds),
    },
  };
}

export function step(
  seq: number,
  kind: LedgerStepInput['kind'],
  startMs: number,
  endMs: number | null,
  over: Partial<LedgerStepInput> = {},
): LedgerStepInput {
  return {
    seq,
    step: `${kind} ${seq}`,
    kind,
    toolId: null,
    chamber: null,
    cleanId: null,
    startMs,
    endMs,
    locationId: null,
    carrier: 'open',
    orientation: 'face-up',
    ...over,
  };
}

export function wafer(
  waferId: string,
  latestScan: ScanInput | null,
  ledger: LedgerStepInput[],
  recleanCount = 0,
): WaferInput {
  return { waferId, lotId: 'LOT-1', latestScan, ledger, recleanCount };
}

export function pair(
  pairId: string,
  top: WaferInput,
  bottom: WaferInput,
  over: Partial<PairInput> = {},
): PairInput {
  return {
    pairId,
    lotId: 'LOT-1',
    productId: 'HB-1',
    top,
    bottom,
    flipAxis: 'y',
    rotationRad: 0,
    offsetXM: 0,
    offsetYM: 0,
    bonderToolId: 'BONDER',
    bondTimeMs: null,
    smallestReportableVoidM: null,
    ...over,
  };
}

export function line(over: Partial<LineData> = {}): LineData {
  return {
    products: { 'HB-1': product() },
    tools: { ACT: tool('ACT', 1), BONDER: tool('BONDER', 0.5) },
    cleans: { PBC: clean('PBC') },
    locations: { BAY: location('BAY') },
    counters: {},
    ...over,
  };
}

/**
 * A standard route: scan at T0, pre-bond clean (PBC) at T0+1h, activation (ACT) at T0+2h,
 * wait at BAY from T0+2.5h to T0+5.5h, bond at T0+6h (bonder from the pair).
 */
export function standardWafer(
  waferId: string,
  particles: { x: number[]; y: number[]; d: number[] },
  recleanCount = 0,
): WaferInput {
  return wafer(
    waferId,
    scan(`S-${waferId}`, T0, particles.x, particles.y, particles.d),
    [
      step(0, 'clean', T0 + 1 * H, T0 + 1.2 * H, { cleanId: 'PBC', toolId: 'CLN' }),
      step(1, 'activation', T0 + 2 * H, T0 + 2.1 * H, { toolId: 'ACT' }),
      step(2, 'wait', T0 + 2.5 * H, T0 + 5.5 * H, { locationId: 'BAY' }),
    ],
    recleanCount,
  );
}

/** Particles on a ring and spiral (deterministic, invented), sizes from 45 nm up. */
export function someParticles(n: number, seedShift = 0): { x: number[]; y: number[]; d: number[] } {
  const x: number[] = [];
  const y: number[] = [];
  const d: number[] = [];
  for (let i = 0; i < n; i++) {
    const t = (i + 1 + seedShift) * 2.399963; // golden angle
    const r = 0.14 * Math.sqrt((i + 0.5) / n);
    x.push(r * Math.cos(t));
    y.push(r * Math.sin(t));
    // Pareto-like sizes: 45 nm · u^(−1/2) with u stepping through (0, 1)
    d.push(45e-9 * ((i + 0.5) / n) ** -0.5);
  }
  return { x, y, d };
}
