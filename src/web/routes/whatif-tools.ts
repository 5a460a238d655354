/**
 * The solvers and the sensitivity of a call, for the what-if, pair and lot pages: the solver query
 * (solver, at, sclean, size, spasses) read through src/web/params.ts and answered by the engine
 * (src/engine/tuning/solvers.ts), and the sensitivity section with the figures at each flip point.
 */
import type { Context } from 'hono';
import type { WhatIfSubject } from '../../../views/pages/whatif.tsx';
import {
  type FlipFigures,
  SensitivityBody,
  SensitivityUnavailable,
} from '../../../views/partials/sensitivity-panel.tsx';
import { type LeverOptions, leverQuery } from '../../../views/partials/whatif-levers.tsx';
import {
  SOLVERS,
  SolverAnswer,
  SolverSection,
  type SolverValues,
} from '../../../views/partials/whatif-solvers.tsx';
import {
  assessLotScenario,
  assessPairScenario,
  type SensitivityResult,
  type SolverResult,
  sensitivity,
  sensitivityInputs,
  solveAreaClass,
  solveCleanD50,
  solveCleanRemoval,
  solveExtraPasses,
  solveLongestWait,
  type WhatIfContext,
} from '../../engine/tuning/index.ts';
import type { AppContext } from '../context.ts';
import { BadParamError, choiceValue, numberInRangeValue, wholeNumberValue } from '../params.ts';
import { memoised } from './lots.tsx';
import { attempt, hiddenOf } from './whatif-context.ts';

export function solverValuesOf(c: Context): SolverValues {
  const v: SolverValues = {};
  for (const k of ['solver', 'at', 'sclean', 'size', 'spasses'] as const) {
    const s = c.req.query(k);
    if (typeof s === 'string' && s.trim() !== '') v[k] = s.trim();
  }
  return v;
}

function needName(
  param: string,
  value: string | undefined,
  known: Record<string, unknown>,
  what: string,
): string {
  if (!value) throw new BadParamError(param, `is needed: choose the ${what}`);
  if (!(value in known)) {
    const shown = value.length > 40 ? `${value.slice(0, 37)}…` : value;
    throw new BadParamError(param, `names no ${what} of this line: "${shown}"`);
  }
  return value;
}

/** Runs the solver a query asks for on a subject (throws BadParamError for a bad field). */
export function runSolver(w: WhatIfContext, v: SolverValues): SolverResult {
  const solver = choiceValue('solver', v.solver, SOLVERS);
  if (solver === null) throw new BadParamError('solver', `is needed: one of ${SOLVERS.join(', ')}`);
  const line = w.inputs.line;
  const passes = wholeNumberValue('spasses', v.spasses, 0, 10) ?? 0;
  switch (solver) {
    case 'longest-wait':
      return solveLongestWait(w, needName('at', v.at, line.locations, 'location'));
    case 'area-class':
      return solveAreaClass(w, needName('at', v.at, line.locations, 'location'));
    case 'clean-removal': {
      const size = numberInRangeValue('size', v.size, { min: 0, max: 100_000, aboveMin: true, unit: 'nm' });
      if (size === null) throw new BadParamError('size', 'is needed: the size, nm, the removal is asked at');
      return solveCleanRemoval(w, needName('sclean', v.sclean, line.cleans, 'clean'), size * 1e-9, {
        extraPasses: passes,
      });
    }
    case 'clean-d50':
      return solveCleanD50(w, needName('sclean', v.sclean, line.cleans, 'clean'), { extraPasses: passes });
    case 'extra-passes':
      return solveExtraPasses(w, v.sclean ? needName('sclean', v.sclean, line.cleans, 'clean') : undefined);
  }
}

/** The answer element for a query (empty when the query asks nothing), and its status. */
export function solverAnswer(w: WhatIfContext, v: SolverValues): { answer: unknown; status: 200 | 400 } {
  if (!v.solver) return { answer: SolverAnswer({ r: null }), status: 200 };
  const r = attempt(() => runSolver(w, v));
  if ('error' in r) return { answer: SolverAnswer({ r: null, error: r.error }), status: 400 };
  return { answer: SolverAnswer({ r: r.ok }), status: 200 };
}

/** The solver section of a subject's what-if page. */
export function solverSection(
  c: Context,
  subject: WhatIfSubject,
  options: LeverOptions,
  answer: unknown,
): unknown {
  if (subject.kind === 'waiting') return null;
  return SolverSection({
    action: `/whatif/${subject.kind}/${encodeURIComponent(subject.id ?? '')}/solve`,
    waitLocations: options.waitLocations,
    airLocations: options.airLocations,
    cleans: options.cleans,
    values: solverValuesOf(c),
    hidden: hiddenOf(c),
    // The place the answer swaps into is there before any question is asked.
    answer: answer ?? SolverAnswer({ r: null }),
  });
}

/** The figures at each row's flip point: the chain run once more with that input at its flip value. */
function flipFigures(w: WhatIfContext, s: SensitivityResult): FlipFigures {
  const { inputs } = sensitivityInputs(w, w.parameterSet ?? null);
  const out: FlipFigures = {};
  for (const row of s.rows) {
    const inp = inputs.find((i) => i.input === row.input);
    if (!inp || row.flip.value === null) continue;
    const levers = inp.lever(row.flip.value);
    if (w.kind === 'pair') {
      const a = assessPairScenario(w, { levers }, 'summary');
      const ym = w.inputs.line.products[w.pair.productId]?.spec.yieldModel;
      const k = ym === 'poisson' ? a.figures.dieKillsPoisson : a.figures.dieKillsNB;
      out[row.input] = { voids: a.figures.voids.value, dieLoss: k ? k.value : null };
    } else {
      const l = assessLotScenario(w, { levers }, 'summary');
      out[row.input] = { voids: l.totals.voids, dieLoss: l.totals.dieKillsNB };
    }
  }
  return out;
}

/**
 * The sensitivity body of a subject (the tornado, the table of flip points), computed once per data
 * version and time: it runs the chain a few dozen times.
 */
export function sensitivityBody(
  ctx: AppContext,
  w: WhatIfContext,
  asOfQuery: Record<string, string>,
): unknown {
  const id = w.kind === 'pair' ? w.pair.pairId : w.lot.lotId;
  const got = memoised(ctx, `whatif-sensitivity|${w.kind}|${id}|${w.asOfMs}`, () =>
    attempt(() => {
      const s = sensitivity(w);
      return { s, flips: flipFigures(w, s) };
    }),
  );
  // Data the chain cannot vary (a model refusing an input's end of range) are said in the section,
  // in words; the page around it stands.
  if ('error' in got) return SensitivityUnavailable({ reason: got.error });
  const { s, flips } = got.ok;
  const product = w.inputs.line.products[w.inputs.pairs[0]?.productId ?? ''];
  return SensitivityBody({
    s,
    flips,
    // The spec's voids limit is per pair; a lot's tornado sums its pairs, so it has none to draw.
    voidsLimit: w.kind === 'pair' ? (product?.spec.maxVoids ?? null) : null,
    subject: `${w.kind === 'pair' ? 'Pair' : 'Lot'} ${id}`,
    whatIfHref: `/whatif/${w.kind}/${encodeURIComponent(id)}${leverQuery({}, asOfQuery)}`,
  });
}
