/**
 * Import kind `tools`: one JSON file listing tools (with their chambers) and cleans.
 *
 * - A tool (or one of its chambers) states its adders per wafer pass — the particles one pass adds
 *   to a wafer, measured as post-scan minus pre-scan on monitor wafers (common practice) — either as
 *   a power law (count per wafer at or above a size, with the cumulative slope) or as counts per
 *   size band, and how uncertain that level is (95 % of passes within ×/÷ a factor).
 * - A clean states its particle removal efficiency PRE(d) either as the parameters of a logistic
 *   curve in log d (a modelling choice of voidcast, shaped after the measured fall of removal at
 *   small sizes in Rooney, Pui & Grant 1990):
 *       PRE(d) = E_max / (1 + exp(−(log10 d − log10 d50) / w))
 *   with E_max the efficiency at large sizes, d50 the diameter at half of E_max, w the width in
 *   decades of diameter — or, instead of w, the steepness k of the same curve in ln d
 *   (PRE = E_max / (1 + (d50/d)^k), src/model/clean.ts), w = 1/(k·ln 10); or as counts per size
 *   band before and after the clean
 *   on the same wafers, PRE = 1 − after/before in each band (matched-particle practice).
 *
 * A tool in the file replaces what was stored for it (tool level and chambers); a clean replaces the
 * stored clean of the same id. The zod schema is the single source of truth of the format.
 */
import { z } from 'zod';
import { nmToM } from '../../model/units.ts';
import { type AdderLevel, type StoredClean, type StoredTool, toolWriter } from '../../store/tools.ts';
import type { ImportFlag, ImportKind, KindIssue } from '../types.ts';
import { formatField, num, obj, oneOf, powerLawToSi, text } from './config-fields.ts';
import type { ParsedConfig } from './json-source.ts';
import { jsonIssue, parseConfigFile } from './json-source.ts';

export const TOOL_KINDS = [
  'process',
  'clean',
  'activation',
  'inspection',
  'handling',
  'bonder',
  'storage',
] as const;

const powerLawAdders = obj(
  {
    model: z.literal('power-law'),
    countAbove: num('particles per wafer pass', { min: 0 }),
    atDiameterNm: num('nm', { min: 0, minExclusive: true }),
    slope: num('', { min: 0, minExclusive: true, max: 10 }),
    fromNm: num('nm', { min: 0, minExclusive: true }).nullable().optional(),
  },
  'an object {model: "power-law", countAbove, atDiameterNm, slope}',
);

const bandSchema = obj(
  {
    fromNm: num('nm', { min: 0, minExclusive: true }),
    toNm: num('nm', { min: 0, minExclusive: true }),
    count: num('particles per wafer pass', { min: 0 }),
  },
  'an object {fromNm, toNm, count}',
);

const bandAdders = obj(
  {
    model: z.literal('bands'),
    bands: z
      .array(bandSchema, { error: 'must be a list of {fromNm, toNm, count}' })
      .min(1, { error: 'must list at least one band' }),
  },
  'an object {model: "bands", bands}',
);

const addersSchema = z.discriminatedUnion('model', [powerLawAdders, bandAdders], {
  error: (iss) =>
    iss.input === undefined
      ? 'is required (or null)'
      : 'must be {"model": "power-law", …} or {"model": "bands", …}',
});

const chamberSchema = obj(
  {
    chamber: text('a chamber name'),
    adders: addersSchema.nullable(),
    adderUncertaintyFactor: num('', { min: 1 }).optional(),
  },
  'an object {chamber, adders, adderUncertaintyFactor}',
);

const toolSchema = obj(
  {
    id: text('a tool id'),
    name: text().optional(),
    kind: oneOf(TOOL_KINDS),
    adders: addersSchema.nullable(),
    adderUncertaintyFactor: num('', { min: 1 }).optional(),
    chambers: z.array(chamberSchema, { error: 'must be a list of chambers' }).optional(),
  },
  'an object {id, name, kind, adders, chambers}',
);

const logisticRemoval = obj(
  {
    model: z.literal('logistic-log-d'),
    maxEfficiency: num('', { min: 0, max: 1 }),
    d50Nm: num('nm', { min: 0, minExclusive: true }),
    widthDecades: num('decades', { min: 0, minExclusive: true, max: 5 }).optional(),
    steepness: num('', { min: 0, minExclusive: true, max: 50 }).optional(),
  },
  'an object {model: "logistic-log-d", maxEfficiency, d50Nm, widthDecades or steepness}',
);

const removalBand = obj(
  {
    fromNm: num('nm', { min: 0, minExclusive: true }),
    toNm: num('nm', { min: 0, minExclusive: true }),
    before: num('particles', { min: 0, minExclusive: true }),
    after: num('particles', { min: 0 }),
  },
  'an object {fromNm, toNm, before, after}',
);

const bandRemoval = obj(
  {
    model: z.literal('bands'),
    bands: z
      .array(removalBand, { error: 'must be a list of {fromNm, toNm, before, after}' })
      .min(1, { error: 'must list at least one band' }),
  },
  'an object {model: "bands", bands}',
);

const removalSchema = z.discriminatedUnion('model', [logisticRemoval, bandRemoval], {
  error: (iss) =>
    iss.input === undefined
      ? 'is required'
      : 'must be {"model": "logistic-log-d", …} or {"model": "bands", …}',
});

const cleanSchema = obj(
  {
    id: text('a clean id'),
    name: text().optional(),
    tool: text('a tool id').nullable(),
    chamber: text('a chamber name').nullable().optional(),
    recipe: text('a recipe name').nullable().optional(),
    removal: removalSchema,
  },
  'an object {id, name, tool, recipe, removal}',
);

type Bands = { fromNm: number; toNm: number }[];

/** Bands must each run upwards and not overlap (they may leave gaps). */
function checkBands(
  bands: Bands,
  path: (string | number)[],
  add: (p: (string | number)[], m: string) => void,
): void {
  const order = bands.map((b, i) => ({ ...b, i })).sort((a, b) => a.fromNm - b.fromNm);
  for (const b of bands.map((b, i) => ({ ...b, i })))
    if (b.toNm <= b.fromNm) add([...path, b.i, 'toNm'], `must be greater than fromNm (${b.fromNm} nm)`);
  for (let k = 1; k < order.length; k++) {
    const prev = order[k - 1]!;
    const cur = order[k]!;
    if (cur.fromNm < prev.toNm)
      add(
        [...path, cur.i, 'fromNm'],
        `band ${cur.fromNm}–${cur.toNm} nm overlaps band ${prev.fromNm}–${prev.toNm} nm`,
      );
  }
}

/** The tools file as written (the format's single source of truth). */
export const toolsFileSchema = obj(
  {
    format: formatField('tools'),
    tools: z.array(toolSchema, { error: 'must be a list of tools' }),
    cleans: z.array(cleanSchema, { error: 'must be a list of cleans' }).optional(),
  },
  'a JSON object',
).superRefine((f, ctx) => {
  const add = (path: (string | number)[], message: string) => ctx.addIssue({ code: 'custom', path, message });
  const toolIds = new Map<string, number>();
  f.tools.forEach((t, i) => {
    const first = toolIds.get(t.id);
    if (first !== undefined)
      add(['tools', i, 'id'], `tool "${t.id}" is given twice (first as tools[${first}])`);
    else toolIds.set(t.id, i);
    if (t.adders?.model === 'bands') checkBands(t.adders.bands, ['tools', i, 'adders', 'bands'], add);
    const chambers = new Map<string, number>();
    (t.chambers ?? []).forEach((c, j) => {
      const firstC = chambers.get(c.chamber);
      if (firstC !== undefined)
        add(
          ['tools', i, 'chambers', j, 'chamber'],
          `chamber "${c.chamber}" of tool "${t.id}" is given twice`,
        );
      else chambers.set(c.chamber, j);
      if (c.adders?.model === 'bands')
        checkBands(c.adders.bands, ['tools', i, 'chambers', j, 'adders', 'bands'], add);
    });
  });
  const cleanIds = new Map<string, number>();
  (f.cleans ?? []).forEach((c, i) => {
    const first = cleanIds.get(c.id);
    if (first !== undefined)
      add(['cleans', i, 'id'], `clean "${c.id}" is given twice (first as cleans[${first}])`);
    else cleanIds.set(c.id, i);
    if (c.removal.model === 'logistic-log-d') {
      const r = c.removal;
      if ((r.widthDecades === undefined) === (r.steepness === undefined))
        add(
          ['cleans', i, 'removal'],
          'give the curve width once: widthDecades (decades of diameter) or steepness (k in ln d), not both or neither',
        );
    }
    if (c.removal.model === 'bands') {
      checkBands(c.removal.bands, ['cleans', i, 'removal', 'bands'], add);
      c.removal.bands.forEach((b, j) => {
        if (b.after > b.before)
          add(
            ['cleans', i, 'removal', 'bands', j, 'after'],
            `must not exceed before (${b.before}): particles a clean adds are its tool's adders, state them there`,
          );
      });
    }
  });
});

export type ToolsFile = z.infer<typeof toolsFileSchema>;

export interface ToolsDefinition {
  tools: Omit<StoredTool, 'importId'>[][];
  cleans: Omit<StoredClean, 'importId'>[];
  /** Per clean, where its tool reference sits (for the "tool must exist" check against the store). */
  cleanToolRefs: { cleanId: string; toolId: string; path: string }[];
}

/**
 * Default spread of a tool's adders when the file states none: 95 % of passes within ×/÷ 3 of the
 * level (a memory value: adders per pass of one tool vary by about an order of magnitude across
 * passes in monitor-wafer data; stated, not hidden).
 */
export const DEFAULT_ADDER_UNCERTAINTY_FACTOR = 3;

function addersToSi(a: z.infer<typeof addersSchema> | null): AdderLevel | null {
  if (a === null) return null;
  if (a.model === 'power-law') return { model: 'power-law', ...powerLawToSi(a) };
  return {
    model: 'bands',
    bands: [...a.bands]
      .sort((x, y) => x.fromNm - y.fromNm)
      .map((b) => ({ fromM: nmToM(b.fromNm), toM: nmToM(b.toNm), count: b.count })),
  };
}

export function normaliseTools(f: ToolsFile): ToolsDefinition {
  const tools = f.tools.map((t) => {
    const entries: Omit<StoredTool, 'importId'>[] = [
      {
        toolId: t.id,
        chamber: null,
        name: t.name ?? t.id,
        toolKind: t.kind,
        adders: addersToSi(t.adders),
        adderUncertaintyFactor: t.adderUncertaintyFactor ?? DEFAULT_ADDER_UNCERTAINTY_FACTOR,
      },
    ];
    for (const c of t.chambers ?? [])
      entries.push({
        toolId: t.id,
        chamber: c.chamber,
        name: `${t.name ?? t.id} ${c.chamber}`,
        toolKind: t.kind,
        adders: addersToSi(c.adders),
        adderUncertaintyFactor:
          c.adderUncertaintyFactor ?? t.adderUncertaintyFactor ?? DEFAULT_ADDER_UNCERTAINTY_FACTOR,
      });
    return entries;
  });
  const cleans = (f.cleans ?? []).map((c): Omit<StoredClean, 'importId'> => {
    const r = c.removal;
    return {
      cleanId: c.id,
      name: c.name ?? c.id,
      toolId: c.tool,
      chamber: c.chamber ?? null,
      recipe: c.recipe ?? null,
      removal:
        r.model === 'logistic-log-d'
          ? {
              model: 'logistic-log-d',
              maxEfficiency: r.maxEfficiency,
              halfSizeM: nmToM(r.d50Nm),
              // w = 1/(k·ln 10): the same logistic written in ln d (src/model/clean.ts) or in log10 d.
              widthDecades: r.widthDecades ?? 1 / (r.steepness! * Math.LN10),
            }
          : {
              model: 'bands',
              bands: [...r.bands]
                .sort((x, y) => x.fromNm - y.fromNm)
                .map((b) => ({
                  fromM: nmToM(b.fromNm),
                  toM: nmToM(b.toNm),
                  before: b.before,
                  after: b.after,
                })),
            },
    };
  });
  const cleanToolRefs = (f.cleans ?? []).flatMap((c, i) =>
    c.tool === null ? [] : [{ cleanId: c.id, toolId: c.tool, path: `cleans[${i}].tool` }],
  );
  return { tools, cleans, cleanToolRefs };
}

/** Parses and validates a tools file: the normalised definition, or the issues. */
export function parseToolsFile(textIn: string): ParsedConfig<ToolsDefinition> | { issues: KindIssue[] } {
  return parseConfigFile(textIn, toolsFileSchema, normaliseTools);
}

/** The `tools` import kind (a configuration kind: one JSON file of tools, chambers and cleans). */
export const tools: ImportKind = {
  name: 'tools',
  summary: 'tools and chambers with adders per wafer pass, and cleans with their removal curves (JSON)',
  columns: [],
  begin: () => [{ line: 0, column: null, value: null, rule: 'tools files are JSON (read whole)' }],
  config: {
    apply(ctx, textIn) {
      const parsed = parseToolsFile(textIn);
      if ('issues' in parsed) return { issues: parsed.issues };
      const def = parsed.value;
      // A clean's tool: in this file or stored already.
      const inFile = new Set(def.tools.map((t) => t[0]!.toolId));
      const stored = ctx.db.prepare('SELECT 1 FROM tools WHERE tool_id = ? LIMIT 1');
      const issues: KindIssue[] = [];
      for (const ref of def.cleanToolRefs)
        if (!inFile.has(ref.toolId) && stored.get(ref.toolId) === undefined)
          issues.push(
            jsonIssue(parsed.source, ref.path, `tool "${ref.toolId}" is neither in this file nor stored`),
          );
      if (issues.length > 0) return { issues };
      const w = toolWriter(ctx.db, ctx.importId);
      let updated = 0;
      let duplicates = 0;
      for (const entries of def.tools) {
        const r = w.replaceTool(entries);
        if (r === 'updated') updated++;
        else if (r === 'same') duplicates++;
      }
      for (const c of def.cleans) {
        const r = w.upsertClean(c);
        if (r === 'updated') updated++;
        else if (r === 'same') duplicates++;
      }
      const flags: ImportFlag[] = [];
      const noAdders = def.tools.filter((t) => t.every((e) => e.adders === null)).map((t) => t[0]!.toolId);
      if (noAdders.length > 0)
        flags.push({
          code: 'no-adders',
          count: noAdders.length,
          detail: `tools without any adder level (they add nothing known): ${noAdders.join(', ')}`,
        });
      const n = def.tools.length + def.cleans.length;
      return { rowsRead: n, rowsStored: n - duplicates, duplicates, updated, flags, notes: [] };
    },
  },
};
