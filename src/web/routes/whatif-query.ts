/**
 * The what-if query: the lever fields of views/partials/whatif-levers.tsx read through
 * src/web/params.ts into the engine's Scenario (src/engine/tuning). A value no lever can use is a
 * BadParamError naming the field and the rule (400); a location, clean or tool the line does not
 * know is refused the same way, in the user's terms, before the engine runs.
 *
 * Units: the form speaks nm, h and J/m²; the scenario is SI (m, s).
 */
import { LEVER_FIELDS, type LeverValues } from '../../../views/partials/whatif-levers.tsx';
import type { CleanLever, Lever, Scenario, WaitLever } from '../../engine/tuning/types.ts';
import type { LineData } from '../../engine/types.ts';
import { BadParamError, choiceValue, numberInRangeValue, wholeNumberValue } from '../params.ts';

/** The raw lever fields of a request (query or form), trimmed; absent or empty fields left out. */
export function leverValuesOf(get: (name: string) => string | undefined): LeverValues {
  const v: LeverValues = {};
  for (const f of LEVER_FIELDS) {
    const s = get(f);
    if (typeof s === 'string' && s.trim() !== '') v[f] = s.trim();
  }
  return v;
}

/** What a line offers the levers: its cleans, locations and tools (for a clear refusal of an unknown one). */
export interface LineNames {
  cleans: Set<string>;
  locations: Set<string>;
  tools: Set<string>;
}

/** The names the levers may use: every clean, location and tool of the given lines' data. */
export function lineNames(...lines: LineData[]): LineNames {
  const n: LineNames = { cleans: new Set(), locations: new Set(), tools: new Set() };
  for (const line of lines) {
    for (const k of Object.keys(line.cleans)) n.cleans.add(k);
    for (const k of Object.keys(line.locations)) n.locations.add(k);
    for (const k of Object.keys(line.tools)) n.tools.add(k);
  }
  return n;
}

const MAX_NM = 100_000; // 100 µm: the top of the size grid (src/model/spectrum.ts)

function known(param: string, value: string, set: Set<string>, what: string): string {
  if (!set.has(value)) {
    const shown = value.length > 40 ? `${value.slice(0, 37)}…` : value;
    throw new BadParamError(param, `names no ${what} of this line: "${shown}"`);
  }
  return value;
}

function needs(param: string, v: LeverValues, fields: (keyof LeverValues)[], what: string): void {
  const given = fields.filter((f) => v[f] !== undefined);
  if (given.length > 0)
    throw new BadParamError(param, `is needed for ${given.join(', ')}: choose the ${what} it applies to`);
}

/**
 * The scenario of a set of lever values. `names` (the subject's line) checks that every location,
 * clean and tool named exists; without it (every waiting lot) the engine checks per lot.
 */
export function scenarioOf(v: LeverValues, names: LineNames | null, name?: string): Scenario {
  const levers: Lever[] = [];

  // A clean: extra passes, its curve, or its removal at a size.
  if (v.clean) {
    const cleanId = names ? known('clean', v.clean, names.cleans, 'clean') : v.clean;
    const passes = wholeNumberValue('passes', v.passes, 0, 10);
    const d50 = numberInRangeValue('d50', v.d50, { min: 0, max: MAX_NM, aboveMin: true, unit: 'nm' });
    const width = numberInRangeValue('width', v.width, { min: 0, max: 5, aboveMin: true, unit: 'decades' });
    const emax = numberInRangeValue('emax', v.emax, { min: 0, max: 1, aboveMin: true });
    const removal = numberInRangeValue('removal', v.removal, { min: 0, max: 1, aboveMin: true });
    const at = numberInRangeValue('removalAt', v.removalAt, {
      min: 0,
      max: MAX_NM,
      aboveMin: true,
      unit: 'nm',
    });
    if ((removal === null) !== (at === null))
      throw new BadParamError(
        removal === null ? 'removal' : 'removalAt',
        'and its partner go together: a removal (0–1) at a size (nm)',
      );
    if (removal !== null && d50 !== null)
      throw new BadParamError('d50', 'or a removal at a size: give one of the two, not both');
    const lever: CleanLever = { kind: 'clean', cleanId };
    if (passes !== null && passes > 0) lever.extraPasses = passes;
    if (d50 !== null) lever.d50M = d50 * 1e-9;
    if (width !== null) lever.widthDecades = width;
    if (emax !== null) lever.maxEfficiency = emax;
    if (removal !== null && at !== null) lever.removalAt = { diameterM: at * 1e-9, efficiency: removal };
    if (Object.keys(lever).length > 2) levers.push(lever);
  } else needs('clean', v, ['passes', 'd50', 'width', 'emax', 'removal', 'removalAt'], 'clean');

  // A wait: its duration, carrier, isolation.
  if (v.wait) {
    const locationId = names ? known('wait', v.wait, names.locations, 'location') : v.wait;
    const hours = numberInRangeValue('waitH', v.waitH, { min: 0, max: 10_000, unit: 'h' });
    const carrier = choiceValue('carrier', v.carrier, ['open', 'closed', 'purged'] as const);
    const isolation = numberInRangeValue('isolation', v.isolation, { min: 1, max: 1e6 });
    const lever: WaitLever = { kind: 'wait', locationId };
    if (hours !== null) lever.durationS = hours * 3600;
    if (carrier !== null) lever.carrier = carrier;
    if (isolation !== null) lever.isolation = isolation;
    if (Object.keys(lever).length > 2) levers.push(lever);
  } else needs('wait', v, ['waitH', 'carrier', 'isolation'], 'location');

  // An area's air: a factor or a target class.
  if (v.air) {
    const locationId = names ? known('air', v.air, names.locations, 'location') : v.air;
    const scale = numberInRangeValue('airScale', v.airScale, { min: 0, max: 1000 });
    const iso = numberInRangeValue('iso', v.iso, { min: 1, max: 9, unit: '(ISO 14644-1 class)' });
    if (scale !== null && iso !== null)
      throw new BadParamError('iso', 'or a concentration factor: give one of the two, not both');
    if (scale !== null) levers.push({ kind: 'air', locationId, scale });
    if (iso !== null) levers.push({ kind: 'air', locationId, isoClass: iso });
  } else needs('air', v, ['airScale', 'iso'], 'location');

  // A tool's (or chamber's) adders.
  if (v.tool) {
    const toolKey = names ? known('tool', v.tool, names.tools, 'tool or chamber') : v.tool;
    const factor = numberInRangeValue('adders', v.adders, { min: 0, max: 1000 });
    if (factor !== null) levers.push({ kind: 'adders', toolKey, factor });
  } else needs('tool', v, ['adders'], 'tool or chamber');

  const energy = numberInRangeValue('energy', v.energy, { min: 0, max: 100, aboveMin: true, unit: 'J/m²' });
  if (energy !== null) levers.push({ kind: 'energy', energyJm2: energy });
  const threshold = numberInRangeValue('threshold', v.threshold, {
    min: 0,
    max: MAX_NM,
    aboveMin: true,
    unit: 'nm',
  });
  if (threshold !== null) levers.push({ kind: 'threshold', thresholdM: threshold * 1e-9 });
  if (v.params) {
    if (v.params === 'typed') levers.push({ kind: 'parameters', parameterSetId: null });
    else {
      const id = wholeNumberValue('params', v.params, 1, 1_000_000_000);
      if (id !== null) levers.push({ kind: 'parameters', parameterSetId: id });
    }
  }
  return name ? { name, levers } : { levers };
}

/** The lever values that reproduce a scenario (a saved one opened again). Inverse of scenarioOf. */
export function valuesOfScenario(s: Scenario): LeverValues {
  const v: LeverValues = {};
  const num = (x: number) => String(+x.toPrecision(6));
  for (const l of s.levers) {
    switch (l.kind) {
      case 'clean':
        v.clean = l.cleanId;
        if (l.extraPasses !== undefined) v.passes = String(l.extraPasses);
        if (l.d50M !== undefined) v.d50 = num(l.d50M * 1e9);
        if (l.widthDecades !== undefined) v.width = num(l.widthDecades);
        if (l.maxEfficiency !== undefined) v.emax = num(l.maxEfficiency);
        if (l.removalAt) {
          v.removal = num(l.removalAt.efficiency);
          v.removalAt = num(l.removalAt.diameterM * 1e9);
        }
        break;
      case 'wait':
        v.wait = l.locationId;
        if (l.durationS !== undefined) v.waitH = num(l.durationS / 3600);
        if (l.carrier && l.carrier !== 'in-tool') v.carrier = l.carrier;
        if (l.isolation !== undefined) v.isolation = num(l.isolation);
        break;
      case 'air':
        v.air = l.locationId;
        if (l.scale !== undefined) v.airScale = num(l.scale);
        if (l.isoClass !== undefined) v.iso = num(l.isoClass);
        break;
      case 'adders':
        v.tool = l.toolKey;
        if (l.factor !== undefined) v.adders = num(l.factor);
        break;
      case 'energy':
        v.energy = num(l.energyJm2);
        break;
      case 'threshold':
        v.threshold = num(l.thresholdM * 1e9);
        break;
      case 'parameters':
        v.params = l.parameterSetId === null ? 'typed' : String(l.parameterSetId);
        break;
      default:
        // The sensitivity levers (deposition, isolation, tail slope, removal scale, adders scale)
        // have no field on the form; a saved scenario holding one opens through its JSON.
        break;
    }
  }
  return v;
}
