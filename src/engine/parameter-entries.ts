/**
 * A parameter set's values as entries to read: each fitted value with its interval, the method and
 * the data it rests on, and the typed value it replaces beside it (what the tools file or the
 * product states). Pure; the CLI (`voidcast params show`) and the Parameters page format them.
 * Numbers stay SI with a unit tag; the caller shows them in µm, nm, mm², J/m².
 */
import type { FitProvenance, ParameterValues } from './parameter-set-types.ts';
import { adderUncertaintyFromInterval } from './parameters.ts';
import type { CleanInput, ProductInput, ToolInput } from './types.ts';

/** What the typed values state for each key of a set (null: nothing typed there). */
export interface TypedCounterparts {
  /** By the set's adders key: the chamber's entry, else the tool's (what the engine used). */
  tools: Record<string, ToolInput | null>;
  cleans: Record<string, CleanInput | null>;
  products: Record<string, ProductInput | null>;
}

export type QuantityUnit = 'count' | 'length' | 'area' | 'fraction' | 'number' | 'energy' | 'decades';

export interface ParameterQuantity {
  name: string;
  unit: QuantityUnit;
  value: number;
  /** 95 % interval (null: the fit states none for this quantity). */
  low: number | null;
  high: number | null;
  /** The typed value it replaces (null: none typed). */
  typed: number | null;
}

export interface ParameterEntry {
  kind: keyof ParameterValues;
  key: string;
  /** What the value is of, in words ("Tool ACT-1 chamber B: adders per wafer pass"). */
  subject: string;
  quantities: ParameterQuantity[];
  /** Further words of the fit (passes, dispersion) or of the typed value ("typed as size bands"). */
  remarks: string[];
  provenance: FitProvenance;
}

function prov(f: FitProvenance): FitProvenance {
  return { method: f.method, data: f.data, n: f.n, fittedAtMs: f.fittedAtMs };
}

/** The entries of a set, in the order adders, removal, void size, unexplained voids, each by key. */
export function parameterEntries(values: ParameterValues, typed: TypedCounterparts): ParameterEntry[] {
  const out: ParameterEntry[] = [];
  const sortedKeys = (o: object) => Object.keys(o).sort();
  for (const k of sortedKeys(values.adders)) {
    const f = values.adders[k]!;
    const t = typed.tools[k] ?? null;
    const level = t?.adders ?? null;
    const remarks = [
      `${f.passes} pass(es)`,
      f.dispersionIndex === null
        ? 'dispersion between passes: too few passes to say'
        : `dispersion between passes (variance / mean): ${f.dispersionIndex.toFixed(2)}`,
    ];
    if (level && level.atDiameterM !== f.atDiameterM)
      remarks.push('the typed level is stated at another reference size (beside the fitted one)');
    if (!t) remarks.push('no typed entry: the tools file states nothing for it');
    else if (!level && t.adderBands?.length) remarks.push('typed as counts per size band');
    else if (t.chamber !== f.chamber) remarks.push(`typed for the whole tool ${t.toolId}`);
    out.push({
      kind: 'adders',
      key: k,
      subject: `${t?.name ?? f.toolId}${f.chamber ? ` chamber ${f.chamber}` : ''}: adders per wafer pass`,
      quantities: [
        {
          name: 'adders per pass at or above the reference size',
          unit: 'count',
          value: f.countAbove,
          low: f.countLow,
          high: f.countHigh,
          // at the typed level's own reference size, shown on the next line
          typed: level?.countAbove ?? null,
        },
        {
          name: 'reference size',
          unit: 'length',
          value: f.atDiameterM,
          low: null,
          high: null,
          typed: level?.atDiameterM ?? null,
        },
        {
          name: 'size slope α',
          unit: 'number',
          value: f.slope,
          low: f.slope - 1.959963984540054 * f.slopeSe,
          high: f.slope + 1.959963984540054 * f.slopeSe,
          typed: level?.slope ?? null,
        },
        {
          name: 'uncertainty factor of the level (×/÷, 95 %)',
          unit: 'number',
          value: adderUncertaintyFromInterval(f),
          low: null,
          high: null,
          typed: t ? t.adderUncertaintyFactor : null,
        },
      ],
      remarks,
      provenance: prov(f),
    });
  }
  for (const k of sortedKeys(values.removal)) {
    const f = values.removal[k]!;
    const t = typed.cleans[k] ?? null;
    const bands = Boolean(t?.removalBands?.length);
    const typedOf = (x: number | undefined) => (t && !bands ? (x ?? null) : null);
    out.push({
      kind: 'removal',
      key: k,
      subject: `${t?.name ?? f.cleanId}: removal efficiency by size`,
      quantities: [
        {
          name: 'maximum efficiency',
          unit: 'fraction',
          value: f.maxEfficiency,
          low: null,
          high: null,
          typed: typedOf(t?.maxEfficiency),
        },
        {
          name: 'half-efficiency size d50',
          unit: 'length',
          value: f.halfSizeM,
          low: f.halfSizeLowM,
          high: f.halfSizeHighM,
          typed: typedOf(t?.halfSizeM),
        },
        {
          name: 'width of the transition',
          unit: 'decades',
          value: f.widthDecades,
          low: f.widthLowDecades,
          high: f.widthHighDecades,
          typed: typedOf(t?.widthDecades),
        },
      ],
      remarks: !t
        ? ['no typed entry: the tools file states nothing for it']
        : bands
          ? ['typed as measured size bands']
          : [],
      provenance: prov(f),
    });
  }
  for (const k of sortedKeys(values.voidSize)) {
    const f = values.voidSize[k]!;
    const p = typed.products[k] ?? null;
    out.push({
      kind: 'voidSize',
      key: k,
      subject: `Product ${p?.name ?? f.productId}: effective interface energy`,
      quantities: [
        {
          name: `interface energy${p ? ` (${p.surfacePrep.convention})` : ''}`,
          unit: 'energy',
          value: f.energyJm2,
          low: f.energyLowJm2,
          high: f.energyHighJm2,
          typed: p?.surfacePrep.energyJm2 ?? null,
        },
        {
          name: 'the same as a multiplier on the void radius',
          unit: 'number',
          value: f.radiusMultiplier,
          low: null,
          high: null,
          typed: 1,
        },
      ],
      remarks: p ? [] : ['no such product in the line: not applied'],
      provenance: prov(f),
    });
  }
  for (const k of sortedKeys(values.unexplainedVoids)) {
    const f = values.unexplainedVoids[k]!;
    const p = typed.products[k] ?? null;
    out.push({
      kind: 'unexplainedVoids',
      key: k,
      subject: `Product ${p?.name ?? f.productId}: voids no scanned particle explains`,
      quantities: [
        {
          name: 'reportable voids per pair',
          unit: 'count',
          value: f.ratePerPair,
          low: f.rateLowPerPair,
          high: f.rateHighPerPair,
          typed: null,
        },
        { name: 'mean void area', unit: 'area', value: f.meanAreaM2, low: null, high: null, typed: null },
        {
          name: 'mean void diameter',
          unit: 'length',
          value: f.meanDiameterM,
          low: null,
          high: null,
          typed: null,
        },
      ],
      remarks: [
        p
          ? 'no typed counterpart: with the typed values these voids are not a source'
          : 'no such product in the line: not applied',
      ],
      provenance: prov(f),
    });
  }
  return out;
}
