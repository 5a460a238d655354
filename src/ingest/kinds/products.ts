/**
 * Import kind `products`: one JSON file per product — the wafer, the bonded stack, the surface
 * preparation and its interface energy, the die layout with its pad array, the spec (voids, unbonded
 * area, die yield, confidence, Q-times, re-clean limit) and the assumed surface of an unscanned wafer.
 *
 * The zod schema below is the single source of truth of the format (docs/formats.md "Products" is
 * checked against it by test/unit/ingest/docs-formats.test.ts). Units are in the key names
 * (`diameterMm`, `thicknessUm`, `maxHours`); the normaliser turns every value into SI and the
 * engine's ProductInput shape.
 *
 * Physics the checks rest on:
 * - Plate modulus of (100) silicon E' = E/(1 − ν²) = 155.4 GPa, the in-plane average from Hall's
 *   stiffnesses as tabulated by Hopcroft, Nix & Kenny, JMEMS 19 (2010) 229 — the one material preset.
 * - The void radius R⁴ = 8 D_eff h²/W takes one plate modulus for both plates (Tong & Gösele 1999);
 *   two plates of different moduli are refused rather than averaged silently.
 * - Interface energy: the file must say whether it gives the per-surface energy γ (razor-blade /
 *   Maszara convention) or the work of adhesion W = 2γ; the value is stored with its convention.
 */
import { z } from 'zod';
import { hToS, mmToM, umToM } from '../../model/units.ts';
import { type ProductDefinition, type StepKind, storeProduct } from '../../store/products.ts';
import type { ImportFlag, ImportKind, KindIssue } from '../types.ts';
import {
  formatField,
  num,
  obj,
  oneOf,
  powerLawLevelSchema,
  powerLawToSi,
  signedMmToM,
  text,
} from './config-fields.ts';
import { type ParsedConfig, parseConfigFile } from './json-source.ts';

export type { ParsedConfig } from './json-source.ts';

export const STEP_KINDS = [
  'process',
  'clean',
  'activation',
  'inspection',
  'wait',
  'transfer',
  'bond',
] as const;

/** Plate-modulus presets, Pa. */
export const MATERIAL_PRESETS: Readonly<Record<string, { plateModulusPa: number; source: string }>> =
  Object.freeze({
    // E' = E/(1 − ν²) averaged in the (100) plane from C11 = 165.7, C12 = 63.9, C44 = 79.6 GPa
    // (Hall 1967 as tabulated by Hopcroft, Nix & Kenny, JMEMS 19 (2010) 229).
    'Si(100)': { plateModulusPa: 155.4e9, source: 'Hopcroft, Nix & Kenny 2010' },
  });

const plateSchema = obj(
  {
    material: text('a material name, e.g. "Si(100)"'),
    thicknessUm: num('µm', { min: 0, minExclusive: true, max: 5000 }),
    plateModulusGPa: num('GPa', { min: 0, minExclusive: true, max: 2000 }).optional(),
  },
  'an object {material, thicknessUm, plateModulusGPa}',
);

const rectSchema = obj(
  {
    xMm: num('mm', { min: 0 }),
    yMm: num('mm', { min: 0 }),
    widthMm: num('mm', { min: 0, minExclusive: true }),
    heightMm: num('mm', { min: 0, minExclusive: true }),
  },
  'an object {xMm, yMm, widthMm, heightMm} or null',
);

const dieSchema = obj(
  {
    widthMm: num('mm', { min: 0, minExclusive: true }),
    heightMm: num('mm', { min: 0, minExclusive: true }),
    pitchXMm: num('mm', { min: 0, minExclusive: true }).optional(),
    pitchYMm: num('mm', { min: 0, minExclusive: true }).optional(),
    streetXMm: num('mm', { min: 0 }).optional(),
    streetYMm: num('mm', { min: 0 }).optional(),
    originXMm: num('mm').optional(),
    originYMm: num('mm').optional(),
    padArray: rectSchema.nullable(),
  },
  'an object {widthMm, heightMm, pitchXMm, pitchYMm, …} or null',
);

/**
 * Longest Q-time or scan age accepted, hours (about 11 years): anything longer is a typo, and a
 * number near the largest double would overflow to infinity when converted to seconds (the
 * property test of test/unit/properties/import-json.test.ts found 1e308 h crashing the import).
 */
export const MAX_HOURS = 100_000;

const qTimeSchema = obj(
  {
    fromKind: oneOf(STEP_KINDS),
    maxHours: num('h', { min: 0, minExclusive: true, max: MAX_HOURS }),
    label: text('a label').optional(),
  },
  'an object {fromKind, maxHours, label}',
);

const specSchema = obj(
  {
    version: text('a version label'),
    maxVoids: num('voids', { min: 0, integer: true }).nullable(),
    maxUnbondedFraction: num('', { min: 0, max: 1 }).nullable(),
    minDieYield: num('', { min: 0, max: 1 }).nullable(),
    yieldModel: oneOf(['poisson', 'negative-binomial']),
    confidence: num('', { min: 0.5, max: 0.9999 }),
    smallestReportableVoidMm: num('mm', { min: 0, minExclusive: true }),
    qTimes: z.array(qTimeSchema, { error: 'must be a list of {fromKind, maxHours, label}' }),
    maxRecleans: num('', { min: 0, integer: true }),
    maxScanAgeHours: num('h', { min: 0, minExclusive: true, max: MAX_HOURS }).nullable(),
    scanRequired: z.boolean({
      error: (i) => (i.input === undefined ? 'is required' : 'must be true or false'),
    }),
  },
  'an object {version, maxVoids, maxUnbondedFraction, minDieYield, …}',
);

/** The products file, as written (the format's single source of truth). */
export const productFileSchema = obj(
  {
    format: formatField('products'),
    id: text('a product id'),
    name: text(),
    bonding: oneOf(['wafer-to-wafer', 'die-to-wafer']),
    wafer: obj(
      {
        diameterMm: num('mm', { min: 25, max: 450 }),
        orientationMark: oneOf(['notch', 'flat']),
        edgeExclusionMm: num('mm', { min: 0 }),
      },
      'an object {diameterMm, orientationMark, edgeExclusionMm}',
    ),
    stack: obj(
      {
        model: oneOf(['two-flexible-plates', 'textbook-one-flexible', 'die-on-rigid-wafer']).optional(),
        top: plateSchema,
        bottom: plateSchema,
      },
      'an object {model, top, bottom}',
    ),
    surface: obj(
      {
        preparation: oneOf(['hydrophilic', 'hydrophobic', 'plasma-activated', 'hybrid-dielectric']),
        energyJm2: num('J/m²', { min: 0, minExclusive: true, max: 10 }),
        energyConvention: oneOf(['per-surface', 'work-of-adhesion']),
      },
      'an object {preparation, energyJm2, energyConvention}',
    ),
    particleHeightFactor: num('', { min: 0, minExclusive: true, max: 1 }).optional(),
    die: dieSchema.nullable(),
    clusterAlpha: num('', { min: 0, minExclusive: true, max: 1000 }).optional(),
    incoming: powerLawLevelSchema,
    recleanClean: text('a clean id').nullable(),
    spec: specSchema,
  },
  'a JSON object',
).superRefine((p, ctx) => {
  const add = (path: (string | number)[], message: string) => ctx.addIssue({ code: 'custom', path, message });
  const radiusMm = p.wafer.diameterMm / 2;
  if (p.wafer.edgeExclusionMm >= radiusMm)
    add(['wafer', 'edgeExclusionMm'], `must be less than the wafer radius (${radiusMm} mm)`);
  // Plates: a preset or a stated modulus; both the same (one modulus in the void model).
  const moduli: number[] = [];
  for (const side of ['top', 'bottom'] as const) {
    const pl = p.stack[side];
    const preset = MATERIAL_PRESETS[pl.material];
    if (pl.plateModulusGPa === undefined && !preset)
      add(
        ['stack', side, 'material'],
        `material "${pl.material}" has no preset: state plateModulusGPa (presets: ${Object.keys(
          MATERIAL_PRESETS,
        )
          .map((k) => `${k} E' = ${MATERIAL_PRESETS[k]!.plateModulusPa / 1e9} GPa`)
          .join(', ')})`,
      );
    moduli.push(pl.plateModulusGPa ?? (preset ? preset.plateModulusPa / 1e9 : Number.NaN));
  }
  if (Number.isFinite(moduli[0]) && Number.isFinite(moduli[1]) && moduli[0] !== moduli[1])
    add(
      ['stack', 'bottom', 'plateModulusGPa'],
      `top and bottom plate moduli differ (${moduli[0]} and ${moduli[1]} GPa); the void model takes one plate modulus for both plates`,
    );
  if (p.bonding === 'die-to-wafer' && p.die === null)
    add(['die'], 'die-to-wafer bonding needs the die layout (the die is the top plate)');
  if (p.die) {
    const d = p.die;
    for (const ax of ['X', 'Y'] as const) {
      const pitch = d[`pitch${ax}Mm`];
      const street = d[`street${ax}Mm`];
      const size = ax === 'X' ? d.widthMm : d.heightMm;
      if (pitch === undefined && street === undefined)
        add(['die'], `needs pitch${ax}Mm or street${ax}Mm (die ${ax === 'X' ? 'width' : 'height'} + street)`);
      else if (pitch !== undefined && street !== undefined)
        add(['die', `street${ax}Mm`], `give pitch${ax}Mm or street${ax}Mm, not both`);
      else if (pitch !== undefined && pitch < size)
        add(
          ['die', `pitch${ax}Mm`],
          `must be at least the die ${ax === 'X' ? 'width' : 'height'} (${size} mm)`,
        );
    }
    const usableMm = 2 * (radiusMm - p.wafer.edgeExclusionMm);
    if (Math.hypot(d.widthMm, d.heightMm) > usableMm)
      add(
        ['die', 'widthMm'],
        `a ${d.widthMm} × ${d.heightMm} mm die does not fit on the wafer: its diagonal exceeds the ${usableMm} mm usable diameter (wafer diameter minus twice the edge exclusion)`,
      );
    if (d.padArray) {
      const r = d.padArray;
      if (r.xMm + r.widthMm > d.widthMm || r.yMm + r.heightMm > d.heightMm)
        add(
          ['die', 'padArray'],
          `the pad array (x ${r.xMm} + width ${r.widthMm} mm, y ${r.yMm} + height ${r.heightMm} mm) must lie inside the ${d.widthMm} × ${d.heightMm} mm die`,
        );
    }
  }
  if (p.spec.maxVoids === null && p.spec.maxUnbondedFraction === null && p.spec.minDieYield === null)
    add(['spec'], 'states no limit: give at least one of maxVoids, maxUnbondedFraction, minDieYield');
  if (p.spec.minDieYield !== null && p.die === null)
    add(['spec', 'minDieYield'], 'a die-yield limit needs a die layout ("die" is null)');
});

export type ProductFile = z.infer<typeof productFileSchema>;

const DEFAULT_STACK_MODEL = {
  'wafer-to-wafer': 'two-flexible-plates',
  'die-to-wafer': 'die-on-rigid-wafer',
} as const;

/** Normalises a validated products file to SI (the engine's ProductInput shape plus file extras). */
export function normaliseProduct(p: ProductFile): ProductDefinition {
  const plate = (side: 'top' | 'bottom') => {
    const pl = p.stack[side];
    const modulusPa =
      pl.plateModulusGPa !== undefined
        ? pl.plateModulusGPa * 1e9
        : MATERIAL_PRESETS[pl.material]!.plateModulusPa;
    return { material: pl.material, thicknessM: umToM(pl.thicknessUm), plateModulusPa: modulusPa };
  };
  const top = plate('top');
  const bottom = plate('bottom');
  const d = p.die;
  const die = d
    ? {
        widthM: mmToM(d.widthMm),
        heightM: mmToM(d.heightMm),
        pitchXM: mmToM(d.pitchXMm ?? d.widthMm + (d.streetXMm ?? 0)),
        pitchYM: mmToM(d.pitchYMm ?? d.heightMm + (d.streetYMm ?? 0)),
        // Default: the die of grid index (0, 0) centred on the wafer centre.
        originXM: signedMmToM(d.originXMm ?? -d.widthMm / 2),
        originYM: signedMmToM(d.originYMm ?? -d.heightMm / 2),
        pad: d.padArray
          ? {
              xM: mmToM(d.padArray.xMm),
              yM: mmToM(d.padArray.yMm),
              widthM: mmToM(d.padArray.widthMm),
              heightM: mmToM(d.padArray.heightMm),
            }
          : null,
      }
    : null;
  return {
    productId: p.id,
    name: p.name,
    waferDiameterM: mmToM(p.wafer.diameterMm),
    edgeExclusionM: mmToM(p.wafer.edgeExclusionMm),
    stack: {
      model: p.stack.model ?? DEFAULT_STACK_MODEL[p.bonding],
      topThicknessM: top.thicknessM,
      bottomThicknessM: bottom.thicknessM,
      plateModulusPa: top.plateModulusPa,
    },
    surfacePrep: {
      name: p.surface.preparation,
      energyJm2: p.surface.energyJm2,
      convention: p.surface.energyConvention,
    },
    heightFactor: p.particleHeightFactor ?? 1,
    die,
    // Stapper's cluster parameter α: 1 when the file states none (memory value within the 0.5–2 seen in fabs).
    clusterAlpha: p.clusterAlpha ?? 1,
    incoming: powerLawToSi(p.incoming),
    recleanCleanId: p.recleanClean,
    spec: {
      version: p.spec.version,
      maxVoids: p.spec.maxVoids,
      maxUnbondedFraction: p.spec.maxUnbondedFraction,
      minDieYield: p.spec.minDieYield,
      yieldModel: p.spec.yieldModel,
      confidence: p.spec.confidence,
      smallestReportableVoidM: mmToM(p.spec.smallestReportableVoidMm),
      qTimes: p.spec.qTimes.map((q) => ({
        fromKind: q.fromKind as StepKind,
        maxS: hToS(q.maxHours),
        label: q.label ?? `${q.fromKind} → bond`,
      })),
      maxRecleans: p.spec.maxRecleans,
      maxScanAgeS: p.spec.maxScanAgeHours === null ? null : hToS(p.spec.maxScanAgeHours),
      scanRequired: p.spec.scanRequired,
    },
    bondingMode: p.bonding,
    orientationMark: p.wafer.orientationMark,
    plates: { top, bottom },
  };
}

/** Parses and validates a products file: the normalised definition, or the issues. */
export function parseProductFile(textIn: string): ParsedConfig<ProductDefinition> | { issues: KindIssue[] } {
  return parseConfigFile(textIn, productFileSchema, normaliseProduct);
}

/** The `products` import kind (a configuration kind: one JSON file per product). */
export const products: ImportKind = {
  name: 'products',
  summary: 'a product: wafer, bonded stack, surface preparation and energy, die layout, spec, Q-times (JSON)',
  columns: [],
  begin: () => [{ line: 0, column: null, value: null, rule: 'products files are JSON (read whole)' }],
  config: {
    apply(ctx, textIn) {
      const parsed = parseProductFile(textIn);
      if ('issues' in parsed) return { issues: parsed.issues };
      const def = parsed.value;
      const flags: ImportFlag[] = [];
      if (def.recleanCleanId !== null) {
        const known = ctx.db.prepare('SELECT 1 FROM cleans WHERE id = ?').get(def.recleanCleanId);
        if (known === undefined)
          flags.push({
            code: 'clean-unknown',
            count: 1,
            detail: `recleanClean "${def.recleanCleanId}" is not among the stored cleans yet (import the tools file that defines it)`,
          });
      }
      const r = storeProduct(ctx.db, def, textIn, parsed.contentSha256, ctx.importId);
      return {
        rowsRead: 1,
        rowsStored: r === 'duplicate' ? 0 : 1,
        duplicates: r === 'duplicate' ? 1 : 0,
        updated: r === 'updated' ? 1 : 0,
        flags,
        notes:
          r === 'duplicate' ? [`product "${def.productId}" is stored with the same content already`] : [],
      };
    },
  },
};
