/**
 * Per-product physics for the engine, built once per product (and reportable void size) from the
 * model library: void radius per size bin (and at each point of the Monte Carlo's small-gap grid),
 * the reportable particle size, critical areas, clean survival curves per bin, deposition
 * velocities per (air velocity, orientation), the die grid. Orchestration only: every formula is a
 * model function (src/model/*), called here with the product's parameters.
 */
import { depositionVelocity, type Orientation } from '../model/aerosol.ts';
import { cleanSurvival, fitRemovalCurve, type RemovalCurveParams } from '../model/clean.ts';
import { depositDuringExposure } from '../model/deposition.ts';
import { isoClassLimit } from '../model/iso14644.ts';
import {
  powerLawSpectrum,
  SPECTRUM_BIN_COUNT,
  SPECTRUM_CENTRES_M,
  SPECTRUM_EDGES_M,
  SPECTRUM_MAX_DIAMETER_M,
  SPECTRUM_MIN_DIAMETER_M,
  type Spectrum,
  zeroSpectrum,
} from '../model/spectrum.ts';
import { ISO_NOMINAL_SLOPE, spectrumFromChannels } from '../model/spectrum-channels.ts';
import { hillFromSums } from '../model/stats/hill.ts';
import {
  particleHeight,
  type VoidModel,
  type VoidRadiusInput,
  type VoidRadiusResult,
  voidRadius,
  workOfAdhesion,
} from '../model/void.ts';
import { criticalAreaRectangle, negativeBinomialYield, poissonYield } from '../model/yield.ts';
import type { VoidPhysics } from './evaluate.ts';
import { buildDieGrid, buildEdgeClip, type DieGridIndex, type EdgeClip } from './geometry.ts';
import { buildGridPhysics, type GridPhysics, smallGapGrid } from './montecarlo.ts';
import type { PropagationPhysics } from './propagate.ts';
import { binOf, type SizeIndex, sizeIndexOf, sizeTable } from './tables.ts';
import type { AssessConfig, CleanInput, FaceOrientation, ProductInput, StackModel } from './types.ts';

export interface ProductPhysics extends PropagationPhysics, VoidPhysics {
  /** Nominal void radii of particles with a cached size index, written into out from offset. */
  radiiInto(ix: SizeIndex, out: Float64Array, offset: number): void;
  radiiNominal: Float64Array;
  reportableNominalM: number;
  gridPhysics: GridPhysics;
  dieGrid: DieGridIndex | null;
}

const VOID_MODEL: Record<StackModel, VoidModel> = {
  'two-flexible-plates': 'two-plate',
  'textbook-one-flexible': 'textbook',
  'die-on-rigid-wafer': 'rigid-partner',
};

const ORIENTATION: Record<FaceOrientation, Orientation> = {
  'face-up': 'faceUp',
  'face-down': 'faceDown',
  vertical: 'vertical',
};

/**
 * Built physics by content (product, settings, reportable void size): the tables are deterministic,
 * so a later assessment of the same product reuses them. At most 32 kept.
 */
const memo = new Map<string, ProductPhysics>();

export function buildProductPhysics(
  product: ProductInput,
  cfg: AssessConfig,
  minVoidM: number,
): ProductPhysics {
  const key = JSON.stringify([product, cfg, minVoidM]);
  const hit = memo.get(key);
  if (hit) return hit;
  const built = buildUncached(product, cfg, minVoidM);
  if (memo.size >= 32) memo.delete(memo.keys().next().value!);
  memo.set(key, built);
  return built;
}

/** The product's work of adhesion W, J/m² (W = 2γ for a per-surface γ), from its surface preparation. */
export function productWorkOfAdhesion(product: ProductInput): number {
  return workOfAdhesion(
    product.surfacePrep.energyJm2,
    product.surfacePrep.convention === 'per-surface' ? 'per-surface-gamma' : 'work-of-adhesion',
  );
}

/**
 * The void around one particle between the product's plates (src/model/void.ts voidRadius with the
 * product's stack and height factor), at a work of adhesion W (J/m²) and small-gap factor f — the
 * function every void radius of the assessment comes from, exported so that a calibration can ask
 * it at other energies. Heights above the flexible plate's thickness are outside the plate model
 * and held at h = t.
 */
export function particleVoidRadius(
  product: ProductInput,
): (diameterM: number, workOfAdhesionJm2: number, smallGapFactor: number) => VoidRadiusResult {
  const model = VOID_MODEL[product.stack.model];
  const E = product.stack.plateModulusPa;
  const tMax =
    model === 'two-plate'
      ? Math.min(product.stack.topThicknessM, product.stack.bottomThicknessM)
      : product.stack.topThicknessM;
  return (diameterM, W, f) => {
    const h = Math.min(particleHeight(Math.min(diameterM, 0.01), product.heightFactor), tMax);
    const input: VoidRadiusInput = {
      heightM: h,
      workOfAdhesionJm2: W,
      model,
      top: { thicknessM: product.stack.topThicknessM, plateModulusPa: E },
      smallGapFactor: f,
    };
    if (model === 'two-plate')
      input.bottom = { thicknessM: product.stack.bottomThicknessM, plateModulusPa: E };
    return voidRadius(input);
  };
}

function buildUncached(product: ProductInput, cfg: AssessConfig, minVoidM: number): ProductPhysics {
  const radiusW = product.waferDiameterM / 2;
  const waferAreaM2 = Math.PI * radiusW * radiusW;
  const rb = radiusW - product.edgeExclusionM;
  const bondedAreaM2 = Math.PI * rb * rb;
  const W = productWorkOfAdhesion(product);
  const particleVoid = particleVoidRadius(product);
  const radiusFor = (diameterM: number, f: number): number => particleVoid(diameterM, W, f).radiusM;
  const binRadii = (f: number): Float64Array => {
    const out = new Float64Array(SPECTRUM_BIN_COUNT);
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) out[k] = radiusFor(SPECTRUM_CENTRES_M[k]!, f);
    return out;
  };
  // R(d) rises with d, so the reportable particle size is found by bisection in log d.
  const reportableParticleM = (f: number): number => {
    const target = minVoidM / 2;
    let lo = Math.log(SPECTRUM_MIN_DIAMETER_M);
    let hi = Math.log(SPECTRUM_MAX_DIAMETER_M);
    if (radiusFor(Math.exp(lo), f) >= target) return SPECTRUM_MIN_DIAMETER_M;
    if (radiusFor(Math.exp(hi), f) < target) return SPECTRUM_MAX_DIAMETER_M;
    for (let i = 0; i < 60; i++) {
      const mid = (lo + hi) / 2;
      if (radiusFor(Math.exp(mid), f) >= target) hi = mid;
      else lo = mid;
    }
    return Math.exp(hi);
  };
  const die = product.die;
  const dieGrid = die ? buildDieGrid(die, rb) : null;
  // Edge cuts per radii table (the nominal radii in practice), made when first asked for.
  const edgeClips = new WeakMap<Float64Array, EdgeClip>();
  const critW = dieGrid ? dieGrid.critW : 0;
  const critH = dieGrid ? dieGrid.critH : 0;
  const floor = cfg.tailFloorM;

  // Clean and tool caches are keyed by content (sessions bring new objects with the same values).
  const survivalCache = new Map<string, Float64Array>();
  const survivalTables = new Map<string, Float64Array>();
  const survivalTable = (clean: CleanInput): Float64Array => {
    const key = JSON.stringify(clean);
    let t = survivalTables.get(key);
    if (!t) {
      const params = cleanParams(clean);
      t = sizeTable((d) => cleanSurvival(d, params));
      survivalTables.set(key, t);
    }
    return t;
  };

  const velocityCache = new Map<string, Float64Array>();
  const adderCache = new Map<string, Spectrum>();
  const nominalF = cfg.smallGapFactor;
  const radiusTable = sizeTable((d) => radiusFor(d, nominalF));

  const level = (l: { countAbove: number; atDiameterM: number; slope: number; fromM: number | null }) =>
    l.countAbove > 0
      ? powerLawSpectrum({
          countAbove: l.countAbove,
          atDiameterM: l.atDiameterM,
          slope: l.slope,
          fromM: Math.max(l.fromM ?? floor, SPECTRUM_MIN_DIAMETER_M),
        })
      : zeroSpectrum();

  // Counts per size band spread uniformly in log d over the bins the band covers.
  const bands = (bs: { fromM: number; toM: number; count: number }[]): Spectrum => {
    const out = zeroSpectrum();
    for (const b of bs) {
      const lo = Math.max(b.fromM, SPECTRUM_MIN_DIAMETER_M);
      const hi = Math.min(b.toM, SPECTRUM_MAX_DIAMETER_M);
      if (!(hi > lo) || !(b.count > 0)) continue;
      const span = Math.log(hi / lo);
      for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
        const a = Math.max(SPECTRUM_EDGES_M[k]!, lo);
        const z = Math.min(SPECTRUM_EDGES_M[k + 1]!, hi);
        if (z > a) out[k]! += (b.count * Math.log(z / a)) / span;
      }
    }
    return out;
  };

  const classLimitCache = new WeakMap<Float64Array, Map<number, Float64Array>>();
  const depositionCache = new WeakMap<
    Float64Array,
    { key: string; channels: Float64Array; spectrum: Spectrum }[]
  >();
  const depositionOf = ({
    channelSizesM,
    dosePerChannel,
    airVelocityMps,
    orientation,
    isolation,
  }: Parameters<PropagationPhysics['deposition']>[0]): Spectrum => {
    const n = channelSizesM.length;
    if (n === 0) return zeroSpectrum();
    const values: number[] = [];
    for (let c = 0; c < n; c++)
      values.push(Math.min(dosePerChannel[c]!, c > 0 ? values[c - 1]! : Number.POSITIVE_INFINITY));
    if (!(values[0]! > 0)) return zeroSpectrum();
    // Below the smallest channel: the first channel pair's slope, else ISO 14644-1's nominal 2.08.
    const belowSlope =
      n >= 2 && values[1]! > 0
        ? Math.min(
            Math.max(Math.log(values[0]! / values[1]!) / Math.log(channelSizesM[1]! / channelSizesM[0]!), 0),
            10,
          )
        : ISO_NOMINAL_SLOPE;
    const d0 = channelSizesM[0]!;
    const dose = spectrumFromChannels({
      channelsM: Array.from(channelSizesM),
      values,
      mode: 'cumulative',
      ...(floor < d0 ? { belowSlope, floorM: floor } : {}),
    }).spectrum;
    const vkey = `${airVelocityMps}|${orientation}`;
    let v = velocityCache.get(vkey);
    if (!v) {
      v = new Float64Array(SPECTRUM_BIN_COUNT);
      const fixed = cfg.fixedDepositionVelocityMps;
      for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
        v[k] =
          fixed !== null
            ? fixed
            : depositionVelocity(SPECTRUM_CENTRES_M[k]!, {
                orientation: ORIENTATION[orientation],
                downflowMps: airVelocityMps,
                waferDiameterM: product.waferDiameterM,
                densityKgM3: cfg.particleDensityKgM3,
                electrostaticFactor: cfg.depositionFactor,
              });
      velocityCache.set(vkey, v);
    }
    const vel = v;
    return depositDuringExposure({
      airborneDoseM3s: dose,
      areaM2: waferAreaM2,
      isolationFactor: Math.max(isolation, 1),
      velocity: (d) => vel[binOf(d)]!,
    });
  };

  const physics: Omit<ProductPhysics, 'radiiNominal' | 'reportableNominalM' | 'gridPhysics'> = {
    waferAreaM2,
    bondedAreaM2,
    smallestReportableVoidM: minVoidM,
    dieGrid,
    scanAreaM2: (ee) => Math.PI * (radiusW - ee) ** 2,
    binRadii,
    radiiInto(ix, out, offset) {
      // linear in log d from the cached cells (tables.ts: relative error ≤ (pΔ)²/8 ≈ 10⁻⁵ for R ∝ d^p, p ≤ 1)
      const { cell, weight } = ix;
      const t = radiusTable;
      for (let j = 0; j < cell.length; j++) {
        const i = cell[j]!;
        out[offset + j] = t[i]! + (t[i + 1]! - t[i]!) * weight[j]!;
      }
    },
    reportableParticleM,
    criticalArea: (r) => (dieGrid ? criticalAreaRectangle(critW, critH, r) : 0),
    dieEdgeClip(radii) {
      if (!dieGrid) return null;
      let c = edgeClips.get(radii);
      if (!c) {
        c = buildEdgeClip(dieGrid, radii, radiusW);
        edgeClips.set(radii, c);
      }
      return c;
    },
    poissonYield: (m) => poissonYield(m),
    negativeBinomialYield: (m, a) => negativeBinomialYield(m, a),
    cleanSurvivalBins(clean) {
      const key = JSON.stringify(clean);
      const hit = survivalCache.get(key);
      if (hit) return hit;
      const s = new Float64Array(SPECTRUM_BIN_COUNT);
      for (let k = 0; k < SPECTRUM_BIN_COUNT; k++)
        s[k] = cleanSurvival(SPECTRUM_CENTRES_M[k]!, cleanParams(clean));
      survivalCache.set(key, s);
      return s;
    },
    applySurvival(clean, d, survival) {
      const t = survivalTable(clean);
      const { cell, weight, bin } = sizeIndexOf(d);
      const out = zeroSpectrum();
      for (let j = 0; j < d.length; j++) {
        const i = cell[j]!;
        const s = survival[j]! * (t[i]! + (t[i + 1]! - t[i]!) * weight[j]!);
        survival[j] = s;
        out[bin[j]!]! += s;
      }
      return out;
    },
    adderSpectrum(tool) {
      const key = JSON.stringify([tool.adders, tool.adderBands ?? null]);
      const hit = adderCache.get(key);
      if (hit) return hit;
      const s = tool.adders
        ? level(tool.adders)
        : tool.adderBands?.length
          ? bands(tool.adderBands)
          : zeroSpectrum();
      adderCache.set(key, s);
      return s;
    },
    tailSpectrum: (n, alpha, xm, fl) =>
      powerLawSpectrum({
        countAbove: n,
        atDiameterM: xm,
        slope: Math.min(Math.max(alpha, 0), 10),
        fromM: fl,
        toM: xm,
      }),
    incomingSpectrum: (p) => level(p.incoming),
    binCounts: (d) => Float64Array.from(sizeIndexOf(d).counts),
    deposition(args) {
      // The same dose (one object: pair.ts hands both wafers of a pair that waited together the
      // same one) under the same conditions deposits the same spectrum; a copy of it is returned.
      const { channelSizesM, dosePerChannel, airVelocityMps, orientation, isolation } = args;
      const key = `${airVelocityMps}|${orientation}|${isolation}`;
      let kept = depositionCache.get(dosePerChannel);
      if (!kept) {
        kept = [];
        depositionCache.set(dosePerChannel, kept);
      }
      const hit = kept.find((e) => e.key === key && e.channels === channelSizesM);
      if (hit) return Float64Array.from(hit.spectrum);
      const spectrum = depositionOf(args);
      kept.push({ key, channels: channelSizesM, spectrum });
      return Float64Array.from(spectrum);
    },
    hill(sizes, thresholdM, confidence) {
      // The fit depends on the sizes only through n and S = Σ (ln x − ln x_m), summed from the
      // logarithms the size index holds already (a size at the threshold adds exactly 0).
      const { lnD } = sizeIndexOf(sizes);
      const lnXm = Math.log(thresholdM);
      let n = 0;
      let sum = 0;
      for (let j = 0; j < sizes.length; j++)
        if (sizes[j]! >= thresholdM) {
          n++;
          sum += lnD[j]! - lnXm;
        }
      if (n < 1) return null;
      if (!(sum > 0)) return null; // every size at the threshold: no slope to fit
      const h = hillFromSums(n, sum, confidence);
      return { alpha: h.alpha, lower: h.lower, upper: h.upper, n: h.n, sumLog: h.sumLogExcess };
    },
    classLimits(isoClass, channels) {
      if (isoClass === null) return null;
      // kept per channel-size array (a location's exposure index) and class; callers only read it
      let byClass = classLimitCache.get(channels);
      if (!byClass) {
        byClass = new Map();
        classLimitCache.set(channels, byClass);
      }
      const hit = byClass.get(isoClass);
      if (hit) return hit;
      const out = new Float64Array(channels.length);
      // ISO 14644-1 defines limits for 0.1–5 µm; outside, the nearest defined size (5 µm over-states larger sizes).
      for (let c = 0; c < channels.length; c++)
        out[c] = isoClassLimit(isoClass, Math.min(Math.max(channels[c]!, 0.1e-6), 5e-6));
      byClass.set(isoClass, out);
      return out;
    },
  };
  const grid = smallGapGrid(cfg);
  const full = physics as ProductPhysics;
  full.radiiNominal = binRadii(nominalF);
  full.reportableNominalM = reportableParticleM(nominalF);
  full.gridPhysics = buildGridPhysics(full, grid, dieGrid !== null);
  return full;
}

const fittedCurves = new WeakMap<CleanInput, RemovalCurveParams>();

/**
 * The model's removal-curve parameters of a clean: the logistic in log10 d with width w decades is
 * the model's logistic in ln d with steepness k = 1/(w·ln 10); measured bands are fitted first.
 */
function cleanParams(c: CleanInput): RemovalCurveParams {
  const hit = fittedCurves.get(c);
  if (hit) return hit;
  const p: RemovalCurveParams = c.removalBands?.length
    ? fitRemovalCurve(
        c.removalBands.map((b) => ({ lowerM: b.fromM, upperM: b.toM, before: b.before, after: b.after })),
      ).params
    : {
        d50M: c.halfSizeM,
        maxEfficiency: c.maxEfficiency,
        steepness: Math.min(1 / (c.widthDecades * Math.LN10), 50),
      };
  fittedCurves.set(c, p);
  return p;
}
