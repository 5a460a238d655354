/**
 * The solvers on the what-if pages: the longest wait at a location, the removal (or d₅₀) a clean
 * needs, the extra passes needed, the ISO class an area needs. Each form is a GET to the subject's
 * /solve address (works without script; htmx swaps the answer in place), and each answer shows the
 * value, its margin against today, the forward check on both sides of the root, and — when no answer
 * exists — why.
 */
import type { ForwardCheck, SolverResult } from '../../src/engine/tuning/types.ts';
import { CallBadge } from './call.tsx';
import { fmtNum, fmtUtc } from './format.ts';
import { RecleanCaution } from './reasons.tsx';
import type { LeverOption } from './whatif-levers.tsx';
import { RECLEAN_SAFETY } from './whatif-result.tsx';

export const SOLVERS = ['longest-wait', 'clean-removal', 'clean-d50', 'extra-passes', 'area-class'] as const;
export type SolverKey = (typeof SOLVERS)[number];

/** The solver fields as the user typed them (shown again in the forms). */
export interface SolverValues {
  solver?: string;
  at?: string;
  sclean?: string;
  size?: string;
  spasses?: string;
}

/** A lever value in the solver's unit, in the trade's words. */
export function fmtSolverValue(v: number | null, unit: SolverResult['unit']): string {
  if (v === null || !Number.isFinite(v)) return '—';
  switch (unit) {
    case 's':
      return `${fmtNum(v / 3600)} h`;
    case 'fraction':
      return `${fmtNum(v * 100, 4)} %`;
    case 'm':
      return `${fmtNum(v * 1e9)} nm`;
    case 'passes':
      return `${v} extra pass${v === 1 ? '' : 'es'}`;
    case 'class':
      return `ISO class ${v.toFixed(1)}`;
  }
}

/** A tolerance in the solver's unit, without the unit's label words. */
function fmtTolerance(v: number, unit: SolverResult['unit']): string {
  if (unit === 'passes') return 'whole passes';
  if (unit === 'class') return `${fmtNum(v)} of a class`;
  if (unit === 's' && v < 3600) return `${fmtNum(v / 60)} min`;
  return fmtSolverValue(v, unit);
}

/** A spec line's bound or limit as the spec states it. */
function fmtSpec(metric: string, v: number): string {
  return metric === 'voids' ? fmtNum(v) : `${fmtNum(v * 100)} %`;
}

const METRIC_WORDS: Record<string, string> = {
  voids: 'reportable voids',
  unbondedFraction: 'unbonded area',
  dieYield: 'die yield',
};

function fmtMargin(v: number | null, unit: SolverResult['unit']): string {
  if (v === null || !Number.isFinite(v)) return '—';
  const s = fmtSolverValue(Math.abs(v), unit)
    .replace(/^ISO class /, '')
    .replace(/ extra pass(es)?$/, ' pass$1');
  return v === 0 ? '0' : `${v > 0 ? '+' : '−'}${s}`;
}

const CLEAN_SOLVERS: string[] = ['clean-removal', 'clean-d50', 'extra-passes'];

function Forward(props: { label: string; f: ForwardCheck | null; unit: SolverResult['unit'] }) {
  if (!props.f) return null;
  const f = props.f;
  return (
    <tr data-forward={props.label}>
      <td>{props.label}</td>
      <td class="num">{fmtSolverValue(f.value, props.unit)}</td>
      <td>
        <span class={f.withinSpec ? 'vc-pass' : 'vc-fail'}>
          {f.withinSpec ? '✓ within spec' : '✗ outside spec'}
        </span>
      </td>
      <td>
        <CallBadge call={f.call} />
      </td>
      <td>
        {f.worst
          ? `${f.worst.pairId}: ${METRIC_WORDS[f.worst.metric] ?? f.worst.metric} ${fmtSpec(f.worst.metric, f.worst.bound)} against ${fmtSpec(f.worst.metric, f.worst.limit)}`
          : '—'}
      </td>
    </tr>
  );
}

export function SolverAnswer(props: { r: SolverResult | null; error?: string | null }) {
  const r = props.r;
  if (props.error)
    return (
      <div id="solver-answer" class="vc-solver-answer" data-status="error" data-swap-error-codes="400">
        <p class="vc-error" role="alert">
          This question cannot be answered: {props.error} Nothing was changed.
        </p>
      </div>
    );
  if (!r) return <div id="solver-answer" class="vc-solver-answer" data-status="none" hidden />;
  return (
    <div
      id="solver-answer"
      class="vc-solver-answer"
      data-status={r.status}
      data-solver={r.solver}
      aria-live="polite"
    >
      <h3>{r.question}</h3>
      <p class="vc-solver-message">
        {r.status === 'found' ? null : <strong>No answer. </strong>}
        <strong>{r.message}</strong>
      </p>
      {r.status === 'found' ? (
        <p class="vc-small">
          As is: {fmtSolverValue(r.current, r.unit)}; margin {fmtMargin(r.margin, r.unit)}. Searched{' '}
          {fmtSolverValue(r.bracket[0], r.unit)} to {fmtSolverValue(r.bracket[1], r.unit)} to within{' '}
          {fmtTolerance(r.tolerance, r.unit)}, {r.iterations} runs of the chain.
          {r.latestBondTimeMs ? ` Latest bond time it allows: ${fmtUtc(r.latestBondTimeMs)}.` : ''}
        </p>
      ) : null}
      {r.forward.atAnswer || r.forward.pastAnswer ? (
        <table class="vc-table vc-table-compact vc-solver-forward">
          <caption class="vc-small">
            Forward check: the chain run again at the answer and just past it.
          </caption>
          <thead>
            <tr>
              <th>Run</th>
              <th class="num">Value</th>
              <th>Spec</th>
              <th>Call</th>
              <th>Closest spec line</th>
            </tr>
          </thead>
          <tbody>
            <Forward label="at the answer" f={r.forward.atAnswer} unit={r.unit} />
            <Forward label="just past it" f={r.forward.pastAnswer} unit={r.unit} />
          </tbody>
        </table>
      ) : null}
      {CLEAN_SOLVERS.includes(r.solver) ? <RecleanCaution text={RECLEAN_SAFETY} /> : null}
    </div>
  );
}

function Select(props: {
  id: string;
  name: string;
  value: string | undefined;
  options: LeverOption[];
  none?: string;
}) {
  return (
    <select name={props.name} id={props.id}>
      {props.none ? <option value="">{props.none}</option> : null}
      {props.options.map((o) => (
        <option value={o.value} selected={o.value === props.value}>
          {o.label}
        </option>
      ))}
    </select>
  );
}

function SolverForm(props: {
  action: string;
  solver: SolverKey;
  title: string;
  children?: unknown;
  hidden: Record<string, string>;
}) {
  return (
    <form
      method="get"
      action={props.action}
      hx-get={props.action}
      hx-target="#solver-answer"
      hx-select="#solver-answer"
      hx-swap="outerHTML"
      hx-push-url="false"
      data-solver={props.solver}
    >
      <h3>{props.title}</h3>
      <input type="hidden" name="solver" value={props.solver} />
      {Object.entries(props.hidden).map(([k, v]) => (
        <input type="hidden" name={k} value={v} />
      ))}
      <div class="vc-form">{props.children as never}</div>
    </form>
  );
}

export function SolverSection(props: {
  /** The subject's solve address ("/whatif/pair/TR2653-P01/solve"). */
  action: string;
  waitLocations: LeverOption[];
  airLocations: LeverOption[];
  cleans: LeverOption[];
  values: SolverValues;
  hidden: Record<string, string>;
  answer: unknown;
}) {
  const v = props.values;
  const is = (s: SolverKey) => v.solver === s;
  return (
    <section class="vc-whatif-solvers" id="solvers">
      <h2>Ask for a limit</h2>
      <p class="vc-small">
        Each answer is found by bracketing and root finding on the chain (it is monotone in each lever) and
        checked by running the chain again at the answer and just past it. A call held for other reasons (a
        Q-time, an excursion) stays held whatever the answer.
      </p>
      <div class="vc-solvers">
        <SolverForm
          action={props.action}
          solver="longest-wait"
          title="Longest wait within spec"
          hidden={props.hidden}
        >
          <label for="longest-wait-at">Location</label>
          <Select
            id="longest-wait-at"
            name="at"
            value={is('longest-wait') ? v.at : undefined}
            options={props.waitLocations}
          />
          <button type="submit">Find the longest wait</button>
        </SolverForm>
        <SolverForm
          action={props.action}
          solver="clean-removal"
          title="Removal a clean needs at a size"
          hidden={props.hidden}
        >
          <label for="clean-removal-sclean">Clean</label>
          <Select
            id="clean-removal-sclean"
            name="sclean"
            value={is('clean-removal') ? v.sclean : undefined}
            options={props.cleans}
          />
          <label for="clean-removal-size">Size, nm</label>
          <input
            type="number"
            name="size"
            step="any"
            min="0"
            value={is('clean-removal') ? (v.size ?? '50') : '50'}
          />
          <label for="clean-removal-spasses">Extra passes</label>
          <input
            type="number"
            name="spasses"
            step="1"
            min="0"
            max="10"
            value={is('clean-removal') ? (v.spasses ?? '0') : '0'}
          />
          <button type="submit">Find the removal needed</button>
        </SolverForm>
        <SolverForm action={props.action} solver="clean-d50" title="d₅₀ a clean needs" hidden={props.hidden}>
          <label for="clean-d50-sclean">Clean</label>
          <Select
            id="clean-d50-sclean"
            name="sclean"
            value={is('clean-d50') ? v.sclean : undefined}
            options={props.cleans}
          />
          <label for="clean-d50-spasses">Extra passes</label>
          <input
            type="number"
            name="spasses"
            step="1"
            min="0"
            max="10"
            value={is('clean-d50') ? (v.spasses ?? '0') : '0'}
          />
          <button type="submit">Find the d₅₀ needed</button>
        </SolverForm>
        <SolverForm
          action={props.action}
          solver="extra-passes"
          title="Extra clean passes needed"
          hidden={props.hidden}
        >
          <label for="extra-passes-sclean">Clean</label>
          <Select
            id="extra-passes-sclean"
            name="sclean"
            value={is('extra-passes') ? v.sclean : undefined}
            options={props.cleans}
            none="(the product's re-clean)"
          />
          <button type="submit">Find the passes needed</button>
        </SolverForm>
        <SolverForm
          action={props.action}
          solver="area-class"
          title="ISO class an area needs"
          hidden={props.hidden}
        >
          <label for="area-class-at">Location</label>
          <Select
            id="area-class-at"
            name="at"
            value={is('area-class') ? v.at : undefined}
            options={props.airLocations}
          />
          <button type="submit">Find the class needed</button>
        </SolverForm>
      </div>
      {props.answer as never}
    </section>
  );
}
