/**
 * `voidcast solve longest-wait | clean-removal | extra-passes | area-class (--pair ID | --lot ID) …`
 *
 * The value of one lever at which the pair (every pair of the lot) just meets its spec at the spec's
 * confidence, with the margin to the as-is value and a forward check on both sides of the answer.
 */

import { fmtPercent, fmtSize } from '../../engine/format.ts';
import { EngineInputError } from '../../engine/pair.ts';
import {
  type ForwardCheck,
  hoursMinutes,
  ScenarioError,
  type SolverResult,
  solveAreaClass,
  solveCleanD50,
  solveCleanRemoval,
  solveExtraPasses,
  solveLongestWait,
} from '../../engine/tuning/index.ts';
import { RECLEAN_CAUTION } from '../../engine/types.ts';
import { parseOptions } from '../args.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { openExisting, parseAsOf } from './assess.ts';
import { commandAsOf } from './whatif.ts';
import { openSubjectContext, parseDurationS, parseSizeM } from './whatif-levers.ts';

const SOLVERS = ['longest-wait', 'clean-removal', 'extra-passes', 'area-class'] as const;

function valueWords(r: SolverResult, x: number): string {
  switch (r.unit) {
    case 's':
      return hoursMinutes(x);
    case 'fraction':
      return fmtPercent(x);
    case 'm':
      return fmtSize(x);
    case 'passes':
      return `${x} pass(es)`;
    case 'class':
      return `ISO class ${x.toFixed(1)}`;
  }
}

/** A difference in the solver's unit (the margin). */
function marginWords(r: SolverResult, d: number): string {
  const sign = d >= 0 ? '+' : '−';
  if (r.unit === 'class') return `${sign}${Math.abs(d).toFixed(1)} class`;
  if (r.unit === 'passes') return `${sign}${Math.abs(d)} pass(es)`;
  if (r.unit === 'fraction') return `${sign}${(Math.abs(d) * 100).toFixed(1)} percentage points`;
  return `${sign}${valueWords(r, Math.abs(d))}`;
}

function checkWords(r: SolverResult, f: ForwardCheck): string {
  const w = f.worst;
  const worst = w
    ? `; worst: pair ${w.pairId}, ${w.metric === 'voids' ? `voids bound ${w.bound.toFixed(1)} against ≤ ${w.limit}` : w.metric === 'dieYield' ? `die yield bound ${fmtPercent(w.bound)} against ≥ ${fmtPercent(w.limit)}` : `unbonded bound ${fmtPercent(w.bound)} against ≤ ${fmtPercent(w.limit)}`}`
    : '';
  return `  at ${valueWords(r, f.value)}: ${f.withinSpec ? 'within spec' : 'OUTSIDE spec'} (call ${f.call.toUpperCase()})${worst}`;
}

/** A solver's answer in words. */
export function renderSolver(r: SolverResult): string {
  const out = [`${r.question} — ${r.subject.kind} ${r.subject.id}`, r.message];
  if (r.value !== null && r.current !== null)
    out.push(
      `margin to the as-is value: ${marginWords(r, r.margin!)}; bracket ${valueWords(r, r.bracket[0])} – ${valueWords(r, r.bracket[1])}; ${r.iterations} runs of the chain`,
    );
  if (r.latestBondTimeMs)
    out.push(`latest bond time for the running wait: ${new Date(r.latestBondTimeMs).toISOString()}`);
  out.push('forward check (the chain run again):');
  if (r.forward.atAnswer) out.push(checkWords(r, r.forward.atAnswer));
  if (r.forward.pastAnswer) out.push(checkWords(r, r.forward.pastAnswer));
  if (r.forward.atAnswer && r.forward.atAnswer.call !== 'bond' && r.forward.atAnswer.withinSpec)
    out.push(
      '  (within spec, yet not BOND: other reasons — Q-time, an action-level exposure, data — still hold it)',
    );
  if (r.solver === 'extra-passes' || r.solver === 'clean-removal' || r.solver === 'clean-d50')
    out.push('', `Caution: ${RECLEAN_CAUTION}`);
  return `${out.join('\n')}\n`;
}

export const solve: Command = {
  name: 'solve',
  summary:
    'find the longest wait, the removal a clean needs, the extra passes or the ISO class that keep a pair or lot within spec',
  usage: `voidcast solve SOLVER (--pair ID | --lot ID) [options] [--json] [--as-of TIME] [--data DIR]

  longest-wait --at LOC          the longest each wait at LOC may last (and, for a wait still running,
                                 the latest bond time); [--tolerance DURATION] (default 5min)
  clean-removal --clean CLN --size SIZE
                                 the least removal the clean needs at SIZE (nm unless a unit is given);
                                 --need d50: the largest d50 it may have instead (no --size);
                                 [--passes N] with N extra runs of it at the end of the route
  extra-passes [--clean CLN]     the fewest extra runs of the clean (default: the product's re-clean)
                                 within the spec's re-clean limit
  area-class --at LOC            the least clean ISO 14644-1 class the area may have

  --basis B  what "within spec" means: bound (default: every spec line's bound at the spec's
             confidence, as the call uses) or expected (the expected figures against the limits)
  --json   the answer as JSON: {solver, basis, subject, question, status (found | fails-everywhere |
           passes-everywhere), value, unit (s | fraction | m | passes | class), current, margin,
           bracket, tolerance, iterations, forward {atAnswer, pastAnswer}, message, latestBondTimeMs}

  Within spec means every spec line of every pair met at the spec's confidence; a pair within spec
  can still be held by a Q-time or an action-level exposure (the forward check shows the call).
  When no answer exists (outside spec even at zero wait or with a perfect clean; within spec over the
  whole bracket) the status and the message say so and why; that is still exit 0.

  exit codes: 0 answered, 2 usage, 3 refused (an unknown location or clean, a location without a
  stated class), 4 no database or no such pair or lot, 1 the data cannot be assessed`,
  async run(argv, io: CliIo) {
    const [which, ...rest] = argv;
    if (!which || !(SOLVERS as readonly string[]).includes(which))
      throw new UsageError(`give a solver first: ${SOLVERS.join(', ')}`);
    const { values } = parseOptions(rest, {
      pair: { type: 'string' },
      lot: { type: 'string' },
      at: { type: 'string' },
      clean: { type: 'string' },
      size: { type: 'string' },
      need: { type: 'string' },
      passes: { type: 'string' },
      tolerance: { type: 'string' },
      basis: { type: 'string' },
      json: { type: 'boolean' },
      'as-of': { type: 'string' },
      data: { type: 'string' },
    });
    if ((values.pair === undefined) === (values.lot === undefined))
      throw new UsageError('give exactly one of --pair or --lot');
    if ((which === 'longest-wait' || which === 'area-class') && !values.at)
      throw new UsageError(`${which} needs --at LOCATION`);
    if (which === 'clean-removal') {
      if (!values.clean) throw new UsageError('clean-removal needs --clean CLEAN');
      if (values.need !== undefined && values.need !== 'd50')
        throw new UsageError(`--need: "${values.need}" is not "d50"`);
      if (values.need === undefined && values.size === undefined)
        throw new UsageError('clean-removal needs --size SIZE (or --need d50)');
    }
    const basis = values.basis ?? 'bound';
    if (basis !== 'bound' && basis !== 'expected')
      throw new UsageError(`--basis: "${values.basis}" is not "bound" or "expected"`);
    const passes = values.passes === undefined ? 0 : Number(values.passes);
    if (!Number.isInteger(passes) || passes < 0 || passes > 10)
      throw new UsageError(`--passes: "${values.passes}" is not a whole number from 0 to 10`);
    const sizeM = values.size === undefined ? null : parseSizeM(values.size, '--size');
    const tolS = values.tolerance === undefined ? undefined : parseDurationS(values.tolerance, '--tolerance');
    if (tolS !== undefined && !(tolS > 0)) throw new UsageError('--tolerance must be above zero');
    parseAsOf(values['as-of'], 0);
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast solve: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    try {
      const asOfMs = commandAsOf(db, values['as-of'], 'solve', io);
      const ctx = openSubjectContext(db, values, asOfMs, 'solve', io);
      if (!ctx) return EXIT.notFound;
      const r =
        which === 'longest-wait'
          ? solveLongestWait(ctx, values.at!, { basis, ...(tolS === undefined ? {} : { toleranceS: tolS }) })
          : which === 'area-class'
            ? solveAreaClass(ctx, values.at!, { basis })
            : which === 'extra-passes'
              ? solveExtraPasses(ctx, values.clean, { basis })
              : values.need === 'd50'
                ? solveCleanD50(ctx, values.clean!, { extraPasses: passes, basis })
                : solveCleanRemoval(ctx, values.clean!, sizeM!, { extraPasses: passes, basis });
      io.out(values.json ? `${JSON.stringify(r)}\n` : renderSolver(r));
      return EXIT.ok;
    } catch (e) {
      if (e instanceof ScenarioError) {
        io.err(`voidcast solve: ${e.message}\n`);
        return EXIT.rejected;
      }
      if (e instanceof EngineInputError) {
        io.err(`voidcast solve: ${e.message}\n`);
        return EXIT.failure;
      }
      throw e;
    } finally {
      db.close();
    }
  },
};
