/**
 * The levers of a scenario checked and worded: the zod schema of each lever kind (shape and ranges, with
 * messages in plain words), parseScenario (which names the lever a value breaks) and leverWords.
 */
import { z } from 'zod';
import { type Lever, type Scenario, ScenarioError } from './types.ts';

/**
 * Range of d50 a lever may set, m (the removal model's own range, src/model/clean.ts): at 0.1 nm the
 * curve is on its plateau at every size of the grid (≥ 10 nm) for any width under a decade.
 */
export const D50_RANGE_M = [1e-10, 1e-2] as const;
/** Most extra passes a lever may ask for (the spec's re-clean limit is checked by the call). */
export const MAX_EXTRA_PASSES = 10;

const pos = z.number('must be a number').finite('must be finite').positive('must be above 0');
const nonneg = z.number('must be a number').finite('must be finite').min(0, 'must be ≥ 0 (not negative)');
const id = z.string('must be text').trim().min(1, 'must not be empty');
const fraction = z
  .number('must be a number')
  .min(0, 'must be from 0 to 1')
  .max(1, 'must be from 0 to 1 (a removal above 1 is not possible)');
const isolation = z
  .number('must be a number')
  .finite('must be finite')
  .min(1, 'must be ≥ 1 (a carrier cannot concentrate the air)');

const leverSchema = z.discriminatedUnion('kind', [
  z
    .object({
      kind: z.literal('clean'),
      cleanId: id,
      extraPasses: z
        .number('must be a number')
        .int('must be a whole number')
        .min(0, 'must be ≥ 0')
        .max(MAX_EXTRA_PASSES, `must be ≤ ${MAX_EXTRA_PASSES}`)
        .optional(),
      d50M: z
        .number('must be a number')
        .min(1e-10, 'must be ≥ 0.1 nm')
        .max(1e-2, 'must be ≤ 10 mm')
        .optional(),
      widthDecades: pos.optional(),
      maxEfficiency: fraction.optional(),
      removalAt: z.object({ diameterM: pos, efficiency: fraction }).strict().optional(),
    })
    .strict()
    .refine(
      (l) =>
        l.extraPasses !== undefined ||
        l.d50M !== undefined ||
        l.widthDecades !== undefined ||
        l.maxEfficiency !== undefined ||
        l.removalAt !== undefined,
      'a clean lever needs passes, d50, width, maximum removal or a removal at a size',
    ),
  z
    .object({
      kind: z.literal('wait'),
      locationId: id,
      durationS: nonneg.optional(),
      carrier: z.enum(['open', 'closed', 'purged', 'in-tool']).optional(),
      isolation: isolation.optional(),
    })
    .strict()
    .refine(
      (l) => l.durationS !== undefined || l.carrier !== undefined || l.isolation !== undefined,
      'a wait lever needs a duration, a carrier or an isolation factor',
    ),
  z
    .object({
      kind: z.literal('air'),
      locationId: id,
      scale: nonneg.optional(),
      isoClass: z
        .number('must be a number')
        .min(1, 'must be from 1 to 9')
        .max(9, 'must be from 1 to 9')
        .optional(),
    })
    .strict()
    .refine(
      (l) => (l.scale === undefined) !== (l.isoClass === undefined),
      'an air lever needs a scale or a class',
    ),
  z
    .object({
      kind: z.literal('adders'),
      toolKey: id,
      factor: nonneg.optional(),
      countAbove: nonneg.optional(),
    })
    .strict()
    .refine(
      (l) => (l.factor === undefined) !== (l.countAbove === undefined),
      'an adders lever needs a factor or a count',
    ),
  z.object({ kind: z.literal('energy'), energyJm2: pos }).strict(),
  z.object({ kind: z.literal('threshold'), thresholdM: pos }).strict(),
  z
    .object({ kind: z.literal('parameters'), parameterSetId: z.number().int().positive().nullable() })
    .strict(),
  z.object({ kind: z.literal('deposition'), factor: pos }).strict(),
  z.object({ kind: z.literal('isolation'), isolation }).strict(),
  z.object({ kind: z.literal('tail-slope'), slope: pos }).strict(),
  z.object({ kind: z.literal('removal-scale'), d50Factor: pos }).strict(),
  z.object({ kind: z.literal('adders-scale'), factor: nonneg }).strict(),
]);

export const scenarioSchema = z
  .object({ name: z.string().max(200).optional(), levers: z.array(z.unknown()).max(50) })
  .strict();

/**
 * Checks a scenario's shape and ranges (not yet against any inputs) and returns it typed. Throws
 * ScenarioError naming the lever (its index and kind) and the rule broken.
 */
export function parseScenario(raw: unknown): Scenario {
  const top = scenarioSchema.safeParse(raw);
  if (!top.success) throw new ScenarioError(`scenario: ${top.error.issues.map(issueText).join('; ')}`);
  const levers: Lever[] = top.data.levers.map((l, i) => {
    const r = leverSchema.safeParse(l);
    if (!r.success) {
      const kind = typeof l === 'object' && l && 'kind' in l ? String((l as { kind: unknown }).kind) : '?';
      throw new ScenarioError(`lever ${i + 1} (${kind}): ${r.error.issues.map(issueText).join('; ')}`, i);
    }
    return r.data as Lever;
  });
  return top.data.name === undefined ? { levers } : { name: top.data.name, levers };
}

function issueText(i: z.core.$ZodIssue): string {
  const path = i.path.length ? `${i.path.join('.')}: ` : '';
  return `${path}${i.message}`;
}

/** A lever in plain words (what the CLI and the pages list). */
export function leverWords(l: Lever): string {
  const nm = (m: number) => `${+(m * 1e9).toPrecision(4)} nm`;
  const h = (s: number) => `${+(s / 3600).toPrecision(4)} h`;
  switch (l.kind) {
    case 'clean': {
      const parts: string[] = [];
      if (l.extraPasses !== undefined) parts.push(`${l.extraPasses} extra pass(es)`);
      if (l.d50M !== undefined) parts.push(`d50 ${nm(l.d50M)}`);
      if (l.widthDecades !== undefined) parts.push(`width ${l.widthDecades} decades`);
      if (l.maxEfficiency !== undefined)
        parts.push(`maximum removal ${+(l.maxEfficiency * 100).toPrecision(4)} %`);
      if (l.removalAt)
        parts.push(
          `removal ${+(l.removalAt.efficiency * 100).toPrecision(4)} % at ${nm(l.removalAt.diameterM)}`,
        );
      return `clean ${l.cleanId}: ${parts.join(', ')}`;
    }
    case 'wait': {
      const parts: string[] = [];
      if (l.durationS !== undefined) parts.push(`each wait ${h(l.durationS)}`);
      if (l.carrier) parts.push(`${l.carrier} carrier`);
      if (l.isolation !== undefined) parts.push(`isolation ×${l.isolation}`);
      return `waits at ${l.locationId}: ${parts.join(', ')}`;
    }
    case 'air':
      return l.isoClass !== undefined
        ? `air at ${l.locationId}: ISO class ${l.isoClass}`
        : `air at ${l.locationId}: concentrations ×${l.scale}`;
    case 'adders':
      return l.factor !== undefined
        ? `adders of ${l.toolKey}: ×${l.factor}`
        : `adders of ${l.toolKey}: ${l.countAbove} per wafer pass`;
    case 'energy':
      return `interface energy ${l.energyJm2} J/m²`;
    case 'threshold':
      return `scan threshold ${nm(l.thresholdM)}`;
    case 'parameters':
      return l.parameterSetId === null
        ? 'parameters: the typed values'
        : `parameters: set ${l.parameterSetId}`;
    case 'deposition':
      return `deposition velocity ×${l.factor}`;
    case 'isolation':
      return `closed-carrier isolation ×${l.isolation}`;
    case 'tail-slope':
      return `tail slope α = ${l.slope}`;
    case 'removal-scale':
      return `every clean's d50 ×${l.d50Factor}`;
    case 'adders-scale':
      return `every tool's adders ×${l.factor}`;
  }
}
