/**
 * Parameters: the sets of values fitted from the line's own data, which one the assessments use,
 * one set's values beside the typed ones they replace, and the two actions — adopt a set, go back to
 * the typed values. The forms post without script (CSRF field, a real action); htmx boosts them.
 *
 * Type-only imports of the engine's types: the page shows what the engine returned.
 */
import type { ParameterEntry, QuantityUnit } from '../../src/engine/parameter-entries.ts';
import type { ParameterSet } from '../../src/engine/parameter-set-types.ts';
import { fmtAreaM2, fmtDiameter, fmtNum, fmtPct, fmtUtc } from '../partials/format.ts';

const STATE_WORDS: Record<ParameterSet['state'], string> = {
  proposed: 'proposed',
  adopted: '✓ adopted — in use',
  retired: 'retired',
};

function counts(s: ParameterSet) {
  const n = (o: object) => Object.keys(o).length;
  return {
    adders: n(s.values.adders),
    removal: n(s.values.removal),
    voidSize: n(s.values.voidSize),
    unexplainedVoids: n(s.values.unexplainedVoids),
  };
}

function fmtQuantity(unit: QuantityUnit, v: number | null): string {
  if (v === null || !Number.isFinite(v)) return '—';
  switch (unit) {
    case 'length':
      return fmtDiameter(v);
    case 'area':
      return fmtAreaM2(v);
    case 'fraction':
      return fmtPct(v);
    case 'energy':
      return `${fmtNum(v)} J/m²`;
    case 'decades':
      return `${fmtNum(v)} decades`;
    default:
      return fmtNum(v);
  }
}

/** The name field and the CSRF token every action form carries. */
function NameField(props: { id: string; value?: string; csrfToken: string }) {
  return (
    <>
      <input type="hidden" name="_csrf" value={props.csrfToken} />
      <label for={props.id}>Your name</label>
      <input
        id={props.id}
        name="name"
        required
        maxlength={120}
        autocomplete="name"
        value={props.value ?? ''}
      />
    </>
  );
}

export function RevertForm(props: { adopted: ParameterSet; csrfToken: string; name?: string }) {
  return (
    <form class="vc-form vc-revert-form" method="post" action="/parameters/revert">
      <NameField id="revert-name" value={props.name} csrfToken={props.csrfToken} />
      <span></span>
      <button type="submit">Go back to the typed values</button>
      <span></span>
      <span class="vc-small">
        Set {props.adopted.version} “{props.adopted.label}” is retired; every assessment uses the tools file
        and products again. Its values stay stored.
      </span>
    </form>
  );
}

export interface ParametersPageProps {
  sets: ParameterSet[];
  csrfToken: string;
  error?: string | null;
  name?: string;
}

export function ParametersPage(props: ParametersPageProps) {
  const adopted = props.sets.find((s) => s.state === 'adopted') ?? null;
  return (
    <section class="vc-parameters">
      <h1>Parameters</h1>
      <p class="vc-lede">
        Values fitted from this line's own scans and void inspections — adders per wafer pass, removal curves,
        the effective interface energy, the rate of voids no scanned particle explains — kept as versioned
        sets. A fit proposes a set; nothing changes until a person adopts it.
      </p>
      <div class="vc-panel vc-params-status" id="params-status">
        {props.error ? (
          <p class="vc-error" role="alert">
            {props.error}
          </p>
        ) : null}
        {adopted ? (
          <>
            <p>
              Assessments use{' '}
              <a href={`/parameters/${adopted.id}`}>
                set {adopted.version} “{adopted.label}”
              </a>
              , adopted by {adopted.adoptedBy} at {fmtUtc(adopted.adoptedAtMs)}.
            </p>
            <RevertForm adopted={adopted} csrfToken={props.csrfToken} name={props.name} />
          </>
        ) : (
          <p>Assessments use the typed values (tools file, products): no set is adopted.</p>
        )}
      </div>
      <h2>Sets</h2>
      {props.sets.length === 0 ? (
        <p class="vc-note">
          No parameter sets yet. The learn commands propose one from the line's matched scans and void
          inspections.
        </p>
      ) : (
        <table class="vc-table vc-table-compact vc-params-table">
          <thead>
            <tr>
              <th class="num">Version</th>
              <th>Label</th>
              <th>State</th>
              <th>Created</th>
              <th>Adopted</th>
              <th class="num">Adders</th>
              <th class="num">Removal curves</th>
              <th class="num">Void size</th>
              <th class="num">Unexplained voids</th>
            </tr>
          </thead>
          <tbody>
            {props.sets.map((s) => {
              const c = counts(s);
              return (
                <tr data-set={String(s.id)} data-state={s.state}>
                  <td class="num">{s.version}</td>
                  <td>
                    <a href={`/parameters/${s.id}`}>{s.label}</a>
                  </td>
                  <td>{STATE_WORDS[s.state]}</td>
                  <td>
                    {fmtUtc(s.createdAtMs)} <span class="vc-small">by {s.createdBy}</span>
                  </td>
                  <td>
                    {s.adoptedAtMs === null ? (
                      '—'
                    ) : (
                      <>
                        {fmtUtc(s.adoptedAtMs)} <span class="vc-small">by {s.adoptedBy}</span>
                      </>
                    )}
                  </td>
                  <td class="num">{c.adders}</td>
                  <td class="num">{c.removal}</td>
                  <td class="num">{c.voidSize}</td>
                  <td class="num">{c.unexplainedVoids}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      )}
    </section>
  );
}

export interface ParameterSetPageProps {
  set: ParameterSet;
  entries: ParameterEntry[];
  /** The set adopted now (this one or another; null: typed values). */
  adopted: ParameterSet | null;
  csrfToken: string;
  error?: string | null;
  name?: string;
}

export function ParameterSetPage(props: ParameterSetPageProps) {
  const s = props.set;
  const action = `/parameters/${s.id}/adopt`;
  return (
    <section class="vc-parameter-set">
      <p class="vc-crumbs">
        <a href="/parameters">Parameters</a> › set {s.version}
      </p>
      <h1>
        Set {s.version}: {s.label}
      </h1>
      <p class="vc-lede">
        <span class="vc-set-state" data-state={s.state}>
          {STATE_WORDS[s.state]}
        </span>{' '}
        · created {fmtUtc(s.createdAtMs)} by {s.createdBy}
        {s.adoptedAtMs !== null ? ` · adopted ${fmtUtc(s.adoptedAtMs)} by ${s.adoptedBy}` : ''}
        {s.retiredAtMs !== null ? ` · retired ${fmtUtc(s.retiredAtMs)} by ${s.retiredBy}` : ''}
      </p>
      <div class="vc-panel" id="set-action">
        {props.error ? (
          <p class="vc-error" role="alert">
            {props.error}
          </p>
        ) : null}
        {s.state === 'adopted' ? (
          <>
            <p>Every assessment uses this set now.</p>
            <RevertForm adopted={s} csrfToken={props.csrfToken} name={props.name} />
          </>
        ) : (
          <form class="vc-form vc-adopt-form" method="post" action={action}>
            <NameField id="adopt-name" value={props.name} csrfToken={props.csrfToken} />
            <span></span>
            <button type="submit">Adopt this set</button>
            <span></span>
            <span class="vc-small">
              Every assessment then uses these values in place of the typed ones and names this set; the
              inputs' hash of every pair changes, so earlier figures must be reviewed again before signing.
              {props.adopted ? ` Set ${props.adopted.version} “${props.adopted.label}” is retired.` : ''}
            </span>
          </form>
        )}
      </div>
      <h2>Values</h2>
      {props.entries.map((e) => (
        <div class="vc-panel vc-param-entry" data-kind={e.kind} data-key={e.key}>
          <h3>{e.subject}</h3>
          <table class="vc-table vc-table-compact">
            <thead>
              <tr>
                <th>Quantity</th>
                <th class="num">Fitted</th>
                <th class="num">95 % interval</th>
                <th class="num">Typed value it replaces</th>
              </tr>
            </thead>
            <tbody>
              {e.quantities.map((q) => (
                <tr>
                  <td>{q.name}</td>
                  <td class="num">{fmtQuantity(q.unit, q.value)}</td>
                  <td class="num">
                    {q.low !== null && q.high !== null
                      ? `${fmtQuantity(q.unit, q.low)} – ${fmtQuantity(q.unit, q.high)}`
                      : '—'}
                  </td>
                  <td class="num">{fmtQuantity(q.unit, q.typed)}</td>
                </tr>
              ))}
            </tbody>
          </table>
          <p class="vc-small">
            {[
              ...e.remarks,
              `method: ${e.provenance.method}`,
              `n = ${e.provenance.n}`,
              `fitted ${fmtUtc(e.provenance.fittedAtMs)}`,
            ].join(' · ')}
            <br />
            data: {e.provenance.data.length ? e.provenance.data.join(', ') : '—'}
          </p>
        </div>
      ))}
      {s.notes.length ? (
        <>
          <h2>What the fits did not propose</h2>
          <ul class="vc-notes">
            {s.notes.map((n) => (
              <li>{n}</li>
            ))}
          </ul>
        </>
      ) : null}
      <p class="vc-small vc-provenance">
        Values hash <code>{s.valuesHash}</code> — part of the inputs' hash of every assessment made with this
        set.
      </p>
    </section>
  );
}
