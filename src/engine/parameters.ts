/**
 * Parameter sets in the assessment: checking a set's values, their hash, and applying them to the
 * line's typed values (pure; the loader reads the adopted set and calls applyParameterSet).
 *
 * What a set replaces, and nothing else (a value the set leaves out keeps its typed value):
 * - adders[key] → tools[key].adders: the fitted power law (countAbove ≥ atDiameterM, slope). fromM
 *   stays what the typed level stated (a site that states where its level starts keeps that start);
 *   a typed level without one, or counts per size band, take the engine's tail floor (fromM null),
 *   as every power-law level without a stated start does. The bands are dropped: the fit replaces
 *   them. The adder uncertainty factor becomes the one the fitted interval states (see
 *   adderUncertaintyFromInterval). A key with no typed entry (a chamber fitted on its own, a tool the
 *   tools file does not list) becomes an entry of its own, named after the tool.
 * - removal[cleanId] → cleans[cleanId]: E_max, d50 and the width in decades; measured bands dropped.
 *   A clean the tools file does not list becomes an entry of its own (no tool).
 * - voidSize[productId] → products[productId].surfacePrep.energyJm2 (in the product's convention).
 * - unexplainedVoids[productId] → a source of its own in the assessment (pair.ts, evaluate.ts,
 *   montecarlo.ts): it has no typed counterpart.
 * Values for products the line does not know are not applied (nothing to replace).
 */
import { z } from 'zod';
import { canonicalHash } from './hash.ts';
import type {
  AppliedParameters,
  FittedAdders,
  FittedRemoval,
  ParameterSet,
  ParameterSetRef,
  ParameterValues,
} from './parameter-set-types.ts';
import type { CleanInput, LineData, ProductInput, ToolInput } from './types.ts';

/** The reference of an assessment made with the typed values (no set adopted). */
export const TYPED_VALUES: ParameterSetRef = Object.freeze({
  id: null,
  version: null,
  label: 'typed values',
  valuesHash: null,
}) as ParameterSetRef;

/** 97.5 % point of the standard normal: a 95 % two-sided interval is ±1.96 σ. */
const Z975 = 1.959963984540054;

export function emptyParameterValues(): ParameterValues {
  return { adders: {}, removal: {}, voidSize: {}, unexplainedVoids: {} };
}

/** How many fitted values a set holds, per kind. */
export function parameterCounts(v: ParameterValues): {
  adders: number;
  removal: number;
  voidSize: number;
  unexplainedVoids: number;
} {
  return {
    adders: Object.keys(v.adders).length,
    removal: Object.keys(v.removal).length,
    voidSize: Object.keys(v.voidSize).length,
    unexplainedVoids: Object.keys(v.unexplainedVoids).length,
  };
}

/** sha256 of the canonical serialisation of a set's values (sorted keys; see hash.ts). */
export function parameterValuesHash(values: ParameterValues): string {
  return canonicalHash(values);
}

/** What an assessment says of the set it used. */
export function parameterSetRef(set: ParameterSet | null): ParameterSetRef {
  if (!set) return TYPED_VALUES;
  return { id: set.id, version: set.version, label: set.label, valuesHash: set.valuesHash };
}

/** Plain words for a set reference: "parameter set 3 “October monitors”" or "typed values". */
export function parameterSetWords(ref: ParameterSetRef): string {
  return ref.id === null
    ? 'typed values (no parameter set adopted)'
    : `parameter set ${ref.version} “${ref.label}”`;
}

// ── validation ────────────────────────────────────────────────────────────────────────────────

const finite = z.number(); // zod 4: NaN and ±Infinity are refused by z.number() itself
const nonNegative = finite.min(0);
const positive = finite.gt(0);

const provenance = {
  method: z.string().trim().min(1, 'a method is required'),
  data: z.array(z.string()),
  n: finite.int().min(0),
  fittedAtMs: finite,
};

const addersSchema = z
  .looseObject({
    ...provenance,
    toolId: z.string().trim().min(1),
    chamber: z.string().min(1).nullable(),
    countAbove: nonNegative,
    countLow: nonNegative,
    countHigh: nonNegative,
    atDiameterM: positive.max(1e-4),
    slope: positive.max(10),
    slopeSe: nonNegative,
    passes: finite.int().min(1),
    dispersionIndex: nonNegative.nullable(),
  })
  .refine((a) => a.countLow <= a.countAbove && a.countAbove <= a.countHigh, {
    message: 'the interval must hold the count: countLow ≤ countAbove ≤ countHigh',
  });

const removalSchema = z
  .looseObject({
    ...provenance,
    cleanId: z.string().trim().min(1),
    maxEfficiency: finite.min(0).max(1),
    halfSizeM: positive.max(1e-4),
    widthDecades: positive.max(10),
    halfSizeLowM: positive,
    halfSizeHighM: positive,
    widthLowDecades: positive,
    widthHighDecades: positive,
  })
  .refine((r) => r.halfSizeLowM <= r.halfSizeM && r.halfSizeM <= r.halfSizeHighM, {
    message: 'the interval must hold d50: halfSizeLowM ≤ halfSizeM ≤ halfSizeHighM',
  })
  .refine((r) => r.widthLowDecades <= r.widthDecades && r.widthDecades <= r.widthHighDecades, {
    message: 'the interval must hold the width: widthLowDecades ≤ widthDecades ≤ widthHighDecades',
  });

const voidSizeSchema = z
  .looseObject({
    ...provenance,
    productId: z.string().trim().min(1),
    energyJm2: positive.max(100),
    energyLowJm2: positive,
    energyHighJm2: positive,
    radiusMultiplier: positive,
  })
  .refine((v) => v.energyLowJm2 <= v.energyJm2 && v.energyJm2 <= v.energyHighJm2, {
    message: 'the interval must hold the energy: energyLowJm2 ≤ energyJm2 ≤ energyHighJm2',
  });

const unexplainedSchema = z
  .looseObject({
    ...provenance,
    productId: z.string().trim().min(1),
    ratePerPair: nonNegative,
    rateLowPerPair: nonNegative,
    rateHighPerPair: nonNegative,
    meanAreaM2: positive.max(0.1),
    meanDiameterM: positive.max(0.5),
  })
  .refine((u) => u.rateLowPerPair <= u.ratePerPair && u.ratePerPair <= u.rateHighPerPair, {
    message: 'the interval must hold the rate: rateLowPerPair ≤ ratePerPair ≤ rateHighPerPair',
  });

const valuesSchema = z
  .object({
    adders: z.record(z.string(), addersSchema).default({}),
    removal: z.record(z.string(), removalSchema).default({}),
    voidSize: z.record(z.string(), voidSizeSchema).default({}),
    unexplainedVoids: z.record(z.string(), unexplainedSchema).default({}),
  })
  .strict();

/**
 * Checks a set's values: every number finite and in range, every interval holding its value, and
 * every key the id its value names (adders by toolKeyOf(toolId, chamber)). Returns the values (maps
 * left out become empty) or every problem, each naming its path. Fields a fit adds beyond the
 * contract (its data points, say) are kept with the value, and hashed with it; a map other than the
 * four is refused.
 */
export function checkParameterValues(
  input: unknown,
): { ok: true; values: ParameterValues } | { ok: false; issues: string[] } {
  const r = valuesSchema.safeParse(input);
  if (!r.success)
    return {
      ok: false,
      issues: r.error.issues.map((i) => `${i.path.map(String).join('.') || '(values)'}: ${i.message}`),
    };
  const v = r.data as ParameterValues;
  const issues: string[] = [];
  for (const [k, a] of Object.entries(v.adders)) {
    const want = a.chamber ? `${a.toolId}/${a.chamber}` : a.toolId;
    if (k !== want) issues.push(`adders.${k}: the key must be "${want}" (toolId[/chamber] of the value)`);
  }
  for (const [k, x] of Object.entries(v.removal))
    if (k !== x.cleanId) issues.push(`removal.${k}: the key must be the value's cleanId "${x.cleanId}"`);
  for (const [k, x] of Object.entries(v.voidSize))
    if (k !== x.productId)
      issues.push(`voidSize.${k}: the key must be the value's productId "${x.productId}"`);
  for (const [k, x] of Object.entries(v.unexplainedVoids))
    if (k !== x.productId)
      issues.push(`unexplainedVoids.${k}: the key must be the value's productId "${x.productId}"`);
  return issues.length ? { ok: false, issues } : { ok: true, values: v };
}

// ── applying ──────────────────────────────────────────────────────────────────────────────────

/**
 * The adder uncertainty factor of a fitted count: the engine draws a tool's mean level as a
 * lognormal with 95 % within ×/÷ the factor (montecarlo.ts), so the factor is the wider side of the
 * fitted 95 % interval in ratio, max(countHigh/countAbove, countAbove/countLow), at least 1. With no
 * lower limit (countLow = 0) the upper side alone decides. A count of 0 adds nothing, and its factor
 * is not used: 1.
 *
 * @example adderUncertaintyFromInterval({ countAbove: 2, countLow: 1, countHigh: 5 }) // 2.5
 */
export function adderUncertaintyFromInterval(
  f: Pick<FittedAdders, 'countAbove' | 'countLow' | 'countHigh'>,
): number {
  if (!(f.countAbove > 0)) return 1;
  const up = f.countHigh / f.countAbove;
  const down = f.countLow > 0 ? f.countAbove / f.countLow : 1;
  return Math.max(up, down, 1);
}

function applyAdders(tools: Record<string, ToolInput>, key: string, f: FittedAdders): void {
  const typed = tools[key];
  const base = typed ?? tools[f.toolId];
  const fromM = typed?.adders?.fromM ?? null;
  tools[key] = {
    toolId: f.toolId,
    chamber: f.chamber,
    name: base?.name ?? f.toolId,
    adders: { countAbove: f.countAbove, atDiameterM: f.atDiameterM, slope: f.slope, fromM },
    adderBands: null,
    adderUncertaintyFactor: adderUncertaintyFromInterval(f),
  };
}

function applyRemoval(cleans: Record<string, CleanInput>, f: FittedRemoval): void {
  const typed = cleans[f.cleanId];
  cleans[f.cleanId] = {
    cleanId: f.cleanId,
    name: typed?.name ?? f.cleanId,
    toolId: typed?.toolId ?? null,
    maxEfficiency: f.maxEfficiency,
    halfSizeM: f.halfSizeM,
    widthDecades: f.widthDecades,
    removalBands: null,
  };
}

/**
 * The line with a set's values in place of the typed ones (a new LineData; the given one is not
 * changed). Objects the set does not touch are the same objects as before.
 */
export function applyParameterValues(line: LineData, values: ParameterValues): LineData {
  const tools = { ...line.tools };
  for (const [k, f] of Object.entries(values.adders)) applyAdders(tools, k, f);
  const cleans = { ...line.cleans };
  for (const f of Object.values(values.removal)) applyRemoval(cleans, f);
  const products: Record<string, ProductInput> = { ...line.products };
  for (const f of Object.values(values.voidSize)) {
    const p = products[f.productId];
    if (!p) continue;
    products[f.productId] = { ...p, surfacePrep: { ...p.surfacePrep, energyJm2: f.energyJm2 } };
  }
  return { ...line, tools, cleans, products };
}

/**
 * The line as an assessment with this set sees it: the values applied and `parameters` naming the
 * set (with the unexplained-void rates). A null set: the line as it is, typed values.
 */
export function applyParameterSet(line: LineData, set: ParameterSet | null): LineData {
  if (!set) return line;
  const applied = applyParameterValues(line, set.values);
  const parameters: AppliedParameters = {
    ref: parameterSetRef(set),
    unexplainedVoids: { ...set.values.unexplainedVoids },
  };
  return { ...applied, parameters };
}

/** The reference of the set a line was prepared with. */
export function lineParameters(line: LineData): ParameterSetRef {
  return line.parameters?.ref ?? TYPED_VALUES;
}

// ── the unexplained-void rate in the Monte Carlo ──────────────────────────────────────────────

/** −ln 0.025: the Garwood 95 % upper limit of a Poisson mean after a count of 0 (½ χ²(0.975; 2)). */
export const GARWOOD_UPPER_ZERO_95 = -Math.log(0.025);

/**
 * One draw of the unexplained-void rate per pair from its fitted value and 95 % interval, given two
 * independent standard normals z1, z2 [Choice]:
 * - a rate above 0: a two-piece lognormal through the three values — median the fitted rate,
 *   2.5 % of draws below the lower limit and 2.5 % above the upper one (σ₊ = ln(high/rate)/1.96
 *   above the median, σ₋ = ln(rate/low)/1.96 below; with a lower limit of 0, σ₋ = σ₊);
 * - a rate of 0 (no unexplained void seen): the rate whose Garwood upper limit is the one stated —
 *   exponential with its 97.5 % point at the upper limit (after a count of 0 the Garwood limits are
 *   the quantiles of Gamma(1)/n; Garwood 1936), drawn as (high/−ln 0.025)·(z1² + z2²)/2, since
 *   (z1² + z2²)/2 ~ Exp(1).
 *
 * @example drawUnexplainedRate(1, 0.5, 2, 0, 0) // 1 (the median)
 */
export function drawUnexplainedRate(rate: number, low: number, high: number, z1: number, z2: number): number {
  if (rate > 0) {
    const up = Math.log(Math.max(high, rate) / rate) / Z975;
    const down = low > 0 ? Math.log(rate / Math.min(low, rate)) / Z975 : up;
    return rate * Math.exp(z1 * (z1 > 0 ? up : down));
  }
  if (!(high > 0)) return 0;
  return (high / GARWOOD_UPPER_ZERO_95) * 0.5 * (z1 * z1 + z2 * z2);
}
