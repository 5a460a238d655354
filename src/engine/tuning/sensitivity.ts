/**
 * Sensitivity of the call (methods.md §5, a tornado): each uncertain input varied over its stated
 * range one at a time, the rest held; the change in expected voids and die loss at both ends, and the
 * value at which the call would change (the flip point), found by bisection between the nominal value
 * and the end where the call differs.
 *
 * Ranges, in order of preference: the adopted parameter set's 95 % interval where it fitted the input;
 * else the assessment's own interval (the Hill slope's exact interval); else a documented default
 * (docs/engine.md, "Tuning"): the config's deposition uncertainty factor, the tools file's adder
 * uncertainty factor, ×/÷ 10 on carrier isolation, ×/÷ 2 on the interface energy, ×/÷ 1.5 on d50.
 */
import { bisectRoot } from '../../model/roots.ts';
import { resolveConfig } from '../config.ts';
import type { ParameterSet } from '../parameter-set-types.ts';
import type { Call, PairAssessment } from '../types.ts';
import type { Lever, SensitivityInput, SensitivityResult, SensitivityRow } from './types.ts';
import { assessLotScenario, assessPairScenario, type WhatIfContext } from './whatif.ts';

/** Default ranges where nothing fitted the input (voidcast's choices, docs/engine.md). */
export const DEFAULT_RANGES = {
  /** Interface energy ×/÷ this. */
  energyFactor: 2,
  /** Closed-carrier isolation ×/÷ this. */
  isolationFactor: 10,
  /** Every clean's d50 ×/÷ this. */
  d50Factor: 1.5,
} as const;

/** Tolerance of a flip point, decades of the input (0.01: 2.3 %). */
export const FLIP_TOLERANCE_DECADES = 0.01;

interface Outcome {
  voids: number;
  dieLoss: number | null;
  call: Call;
  /** Every spec line of every pair met at the spec's confidence. */
  withinSpec: boolean;
}

const met = (ps: PairAssessment[]) => ps.every((p) => p.specChecks.every((c) => c.pass));

function outcome(ctx: WhatIfContext, levers: Lever[]): Outcome {
  if (ctx.kind === 'pair') {
    const a = assessPairScenario(ctx, { levers }, 'summary');
    const ym = ctx.inputs.line.products[ctx.pair.productId]?.spec.yieldModel;
    const k = ym === 'poisson' ? a.figures.dieKillsPoisson : a.figures.dieKillsNB;
    return { voids: a.figures.voids.value, dieLoss: k ? k.value : null, call: a.call, withinSpec: met([a]) };
  }
  const l = assessLotScenario(ctx, { levers }, 'summary');
  return { voids: l.totals.voids, dieLoss: l.totals.dieKillsNB, call: l.call, withinSpec: met(l.pairs) };
}

interface Input {
  input: SensitivityInput;
  label: string;
  unit: string;
  nominal: number;
  low: number;
  high: number;
  rangeSource: string;
  lever: (v: number) => Lever[];
}

/** The inputs with a range for this subject, and those left out with why. */
export function sensitivityInputs(
  ctx: WhatIfContext,
  set: ParameterSet | null,
): { inputs: Input[]; notVaried: { input: string; reason: string }[] } {
  const line = ctx.inputs.line;
  const cfg = resolveConfig(ctx.inputs.config);
  const pairs = ctx.inputs.pairs;
  const productId = pairs[0]?.productId ?? '';
  const product = line.products[productId];
  const inputs: Input[] = [];
  const notVaried: { input: string; reason: string }[] = [
    {
      input: 'scan-capture',
      reason:
        'the chain takes every particle at or above a scan threshold as detected; it holds no capture efficiency to vary',
    },
  ];
  if (product) {
    const e = product.surfacePrep.energyJm2;
    const fit = set?.values.voidSize[productId];
    inputs.push({
      input: 'interface-energy',
      label: 'Interface energy',
      unit: 'J/m²',
      nominal: e,
      low: fit ? fit.energyLowJm2 : e / DEFAULT_RANGES.energyFactor,
      high: fit ? fit.energyHighJm2 : e * DEFAULT_RANGES.energyFactor,
      rangeSource: fit
        ? `95 % interval of parameter set ${set!.id}'s fit from explained voids`
        : `default ×/÷ ${DEFAULT_RANGES.energyFactor} (no fitted energy adopted for ${productId})`,
      lever: (v) => [{ kind: 'energy', energyJm2: v }],
    });
  }
  const tails = ctx.kind === 'pair' ? ctx.asIs.tails : ctx.asIs.pairs.flatMap((p) => p.tails);
  const fitted = tails.filter((t) => t.alpha.high > t.alpha.low);
  if (fitted.length) {
    const sortedA = fitted.map((t) => t.alpha.value).sort((a, b) => a - b);
    inputs.push({
      input: 'tail-slope',
      label: 'Tail slope α below the scan threshold',
      unit: '1',
      nominal: sortedA[Math.floor(sortedA.length / 2)]!,
      low: Math.min(...fitted.map((t) => t.alpha.low)),
      high: Math.max(...fitted.map((t) => t.alpha.high)),
      rangeSource: `exact ${Math.round((fitted[0]!.alpha.confidence ?? 0.95) * 100)} % interval of the Hill slope of the subject's scans (Clauset, Shalizi & Newman 2009); nominal: their median`,
      lever: (v) => [{ kind: 'tail-slope', slope: v }],
    });
  } else
    notVaried.push({
      input: 'tail-slope',
      reason: 'no scan of the subject has enough particles for a fitted tail',
    });
  const u = cfg.depositionUncertaintyFactor;
  inputs.push({
    input: 'deposition-velocity',
    label: 'Deposition velocity (factor on the nominal)',
    unit: '×',
    nominal: 1,
    low: 1 / u,
    high: u,
    rangeSource: `the config's deposition uncertainty factor (95 % within ×/÷ ${u})`,
    lever: (v) => [{ kind: 'deposition', factor: v }],
  });
  const closed = pairs.some((p) =>
    [p.top, p.bottom].some((w) =>
      w.ledger.some(
        (s) =>
          (s.kind === 'wait' || s.kind === 'transfer') && (s.carrier === 'closed' || s.carrier === 'purged'),
      ),
    ),
  );
  if (closed)
    inputs.push({
      input: 'carrier-isolation',
      label: 'Closed-carrier isolation',
      unit: '×',
      nominal: cfg.closedIsolation,
      low: cfg.closedIsolation / DEFAULT_RANGES.isolationFactor,
      high: cfg.closedIsolation * DEFAULT_RANGES.isolationFactor,
      rangeSource: `default ×/÷ ${DEFAULT_RANGES.isolationFactor} around the config's ${cfg.closedIsolation} (a memory value)`,
      lever: (v) => [{ kind: 'isolation', isolation: Math.max(1, v) }],
    });
  else
    notVaried.push({
      input: 'carrier-isolation',
      reason: 'no wait of the subject is in a closed or purged carrier',
    });
  const adderFits = set ? Object.values(set.values.adders).filter((f) => f.countAbove > 0) : [];
  const relAdd = adderFits.length
    ? Math.max(
        ...adderFits.map((f) =>
          Math.max(f.countHigh / f.countAbove, f.countAbove / Math.max(f.countLow, 1e-12)),
        ),
      )
    : Math.max(1, ...Object.values(line.tools).map((t) => t.adderUncertaintyFactor));
  inputs.push({
    input: 'adders',
    label: "Every tool's adders (factor)",
    unit: '×',
    nominal: 1,
    low: 1 / relAdd,
    high: relAdd,
    rangeSource: adderFits.length
      ? `widest 95 % interval of parameter set ${set!.id}'s adder fits (×/÷ ${relAdd.toFixed(2)})`
      : `the tools file's largest adder uncertainty factor (×/÷ ${relAdd})`,
    lever: (v) => [{ kind: 'adders-scale', factor: v }],
  });
  const remFits = set ? Object.values(set.values.removal).filter((f) => f.halfSizeM > 0) : [];
  const relD50 = remFits.length
    ? Math.max(...remFits.map((f) => Math.max(f.halfSizeHighM / f.halfSizeM, f.halfSizeM / f.halfSizeLowM)))
    : DEFAULT_RANGES.d50Factor;
  inputs.push({
    input: 'removal-curve',
    label: "Every clean's d50 (factor; above 1: weaker)",
    unit: '×',
    nominal: 1,
    low: 1 / relD50,
    high: relD50,
    rangeSource: remFits.length
      ? `widest 95 % interval of parameter set ${set!.id}'s removal fits (×/÷ ${relD50.toFixed(2)})`
      : `default ×/÷ ${DEFAULT_RANGES.d50Factor} (no removal fit adopted)`,
    lever: (v) => [{ kind: 'removal-scale', d50Factor: v }],
  });
  return { inputs, notVaried };
}

/** The value between nominal and `end` where the call first differs from `base` (bisection in log). */
/**
 * The value between nominal and `end` where the verdict (the call, or within spec) first differs from
 * the as-is one (bisection in log10 of the input); null when the lever at its nominal value already
 * gives another verdict.
 */
function flipPoint<V>(
  ctx: WhatIfContext,
  inp: Input,
  verdict: (o: Outcome) => V,
  base: V,
  end: number,
): { value: number; verdict: V } | null {
  const seen = new Map<number, V>();
  const at = (u: number) => {
    if (!seen.has(u)) seen.set(u, verdict(outcome(ctx, inp.lever(10 ** u))));
    return seen.get(u) as V;
  };
  if (at(Math.log10(inp.nominal)) !== base) return null;
  const r = bisectRoot((u) => (at(u) === base ? 1 : -1), Math.log10(inp.nominal), Math.log10(end), {
    xTolerance: FLIP_TOLERANCE_DECADES,
  });
  const u = r.fRoot < 0 ? r.root : r.other;
  return { value: 10 ** u, verdict: at(u) };
}

const NOMINAL_DIFFERS =
  'the lever at its nominal value already gives another verdict (one value for what the assessment takes per scan): no single flip point';

function valueText(inp: Input, v: number): string {
  return `${inp.unit === '×' ? '×' : ''}${+v.toPrecision(3)}${inp.unit === '×' || inp.unit === '1' ? '' : ` ${inp.unit}`}`;
}

const WITHIN = `(to within ${Math.round((10 ** FLIP_TOLERANCE_DECADES - 1) * 1000) / 10} %)`;

/** The tornado of the subject: each input's swing and flip point, largest swing first. */
export function sensitivity(
  ctx: WhatIfContext,
  set: ParameterSet | null = ctx.parameterSet ?? null,
): SensitivityResult {
  const baseOut: Outcome =
    ctx.kind === 'pair'
      ? (() => {
          const ym = ctx.inputs.line.products[ctx.pair.productId]?.spec.yieldModel;
          const k = ym === 'poisson' ? ctx.asIs.figures.dieKillsPoisson : ctx.asIs.figures.dieKillsNB;
          return {
            voids: ctx.asIs.figures.voids.value,
            dieLoss: k ? k.value : null,
            call: ctx.asIs.call,
            withinSpec: met([ctx.asIs]),
          };
        })()
      : {
          voids: ctx.asIs.totals.voids,
          dieLoss: ctx.asIs.totals.dieKillsNB,
          call: ctx.asIs.call,
          withinSpec: met(ctx.asIs.pairs),
        };
  const { inputs, notVaried } = sensitivityInputs(ctx, set);
  const rows: SensitivityRow[] = inputs.map((inp) => {
    const lo = outcome(ctx, inp.lever(inp.low));
    const hi = outcome(ctx, inp.lever(inp.high));
    let flip: SensitivityRow['flip'] = { value: null, call: null, text: 'no flip within range' };
    const end = hi.call !== baseOut.call ? inp.high : lo.call !== baseOut.call ? inp.low : null;
    if (end !== null) {
      const f = flipPoint(ctx, inp, (o) => o.call, baseOut.call, end);
      flip = f
        ? {
            value: f.value,
            call: f.verdict,
            text: `the call becomes ${f.verdict.toUpperCase()} at ${valueText(inp, f.value)} ${WITHIN}`,
          }
        : { value: null, call: null, text: NOMINAL_DIFFERS };
    }
    let specFlip: SensitivityRow['specFlip'] = {
      value: null,
      withinSpec: null,
      text: 'no change within range',
    };
    const sEnd =
      hi.withinSpec !== baseOut.withinSpec ? inp.high : lo.withinSpec !== baseOut.withinSpec ? inp.low : null;
    if (sEnd !== null) {
      const f = flipPoint(ctx, inp, (o) => o.withinSpec, baseOut.withinSpec, sEnd);
      specFlip = f
        ? {
            value: f.value,
            withinSpec: f.verdict,
            text: `${f.verdict ? 'within' : 'outside'} spec from ${valueText(inp, f.value)} ${WITHIN}`,
          }
        : { value: null, withinSpec: null, text: NOMINAL_DIFFERS };
    }
    return {
      input: inp.input,
      label: inp.label,
      unit: inp.unit,
      nominal: inp.nominal,
      low: inp.low,
      high: inp.high,
      rangeSource: inp.rangeSource,
      voidsAtLow: lo.voids,
      voidsAtHigh: hi.voids,
      dieLossAtLow: lo.dieLoss,
      dieLossAtHigh: hi.dieLoss,
      callAtLow: lo.call,
      callAtHigh: hi.call,
      withinSpecAtLow: lo.withinSpec,
      withinSpecAtHigh: hi.withinSpec,
      swingVoids: Math.max(Math.abs(lo.voids - baseOut.voids), Math.abs(hi.voids - baseOut.voids)),
      flip,
      specFlip,
    };
  });
  rows.sort((a, b) => b.swingVoids - a.swingVoids);
  return {
    subject: { kind: ctx.kind, id: ctx.kind === 'pair' ? ctx.pair.pairId : ctx.lot.lotId },
    asOfMs: ctx.asOfMs,
    base: baseOut,
    rows,
    notVaried,
  };
}
