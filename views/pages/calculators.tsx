/** The Calculators page: one card per model; results update in place as inputs change (htmx). */
import type { CalcResult, Calculator } from '../../src/engine/calculators.ts';
import { formatCalcValue } from '../../src/engine/calculators.ts';

export interface CalcCardState {
  calc: Calculator;
  values: Record<string, string>;
  result: CalcResult | null;
  error: { field: string; message: string } | null;
}

export function CalculatorsPage(props: { cards: CalcCardState[] }) {
  return (
    <section>
      <h1>Calculators</h1>
      <p class="vc-lede">
        The models behind every figure in voidcast, one at a time. Change an input and the result follows; the
        formula and its source stand beside it.
      </p>
      <nav class="vc-calc-index" aria-label="Calculators">
        {props.cards.map((c) => (
          <a href={`#calc-${c.calc.id}`}>{c.calc.title}</a>
        ))}
      </nav>
      <div class="vc-calc-grid">
        {props.cards.map((c) => (
          <CalcCard {...c} />
        ))}
      </div>
    </section>
  );
}

export function CalcCard(props: CalcCardState) {
  const c = props.calc;
  return (
    <article class="vc-panel vc-calc" id={`calc-${c.id}`}>
      <h2>{c.title}</h2>
      <p class="vc-small">{c.summary}</p>
      <form
        class="vc-form"
        method="get"
        action={`/calculators/${c.id}#calc-${c.id}`}
        hx-get={`/calculators/${c.id}/result`}
        hx-trigger="input changed delay:250ms, change, submit"
        hx-target={`#calc-${c.id}-result`}
        hx-swap="outerHTML"
        hx-push-url="false"
      >
        {c.fields.map((f) => (
          <>
            <label for={`${c.id}-${f.name}`}>
              {f.label}
              {f.unit ? <span class="vc-unit"> ({f.unit})</span> : null}
            </label>
            {f.choices ? (
              <select id={`${c.id}-${f.name}`} name={f.name}>
                {f.choices.map((o) => (
                  <option value={o.value} selected={(props.values[f.name] ?? f.default) === o.value}>
                    {o.label}
                  </option>
                ))}
              </select>
            ) : (
              <input
                id={`${c.id}-${f.name}`}
                name={f.name}
                inputmode="decimal"
                value={props.values[f.name] ?? f.default}
                aria-invalid={props.error?.field === f.name ? 'true' : undefined}
                title={f.help}
              />
            )}
          </>
        ))}
        <span></span>
        <button type="submit">Calculate</button>
      </form>
      <CalcResultPanel {...props} />
    </article>
  );
}

/** The result block: the one partial both the full page and the htmx swap render. */
export function CalcResultPanel(props: CalcCardState) {
  const c = props.calc;
  return (
    <div class="vc-calc-result" id={`calc-${c.id}-result`} aria-live="polite">
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error.message}
        </p>
      ) : props.result ? (
        <table class="vc-table vc-calc-out">
          <tbody>
            {props.result.outputs.map((o) => (
              <tr>
                <th scope="row">{o.label}</th>
                <td class="num" data-output={o.label}>
                  {formatCalcValue(o)}
                </td>
                <td>{o.unit}</td>
              </tr>
            ))}
          </tbody>
        </table>
      ) : null}
      <dl class="vc-formula">
        <dt>Formula</dt>
        <dd>
          <code>{c.formula}</code>
        </dd>
        <dt>Symbols</dt>
        <dd>{c.symbols}</dd>
        <dt>Source</dt>
        <dd>{c.source}</dd>
        {props.result?.notes.map((n) => (
          <>
            <dt>Note</dt>
            <dd>{n}</dd>
          </>
        ))}
      </dl>
    </div>
  );
}
