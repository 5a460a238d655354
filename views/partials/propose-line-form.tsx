/**
 * The form that proposes every fit of the line as ONE parameter set (src/engine/learn/propose.ts):
 * the adders and removal curves learned from the scans, and the calibration from the void inspections
 * computed with them applied. A plain POST with the CSRF field (the layout's hx-boost carries it
 * without a page load); the route answers 303 to the new set on the Parameters page, where a person
 * adopts it, or the page again with the reason. Shared by the Tools & cleans page's learned section
 * and the Calibration page.
 */

export interface ProposeLineFormProps {
  /** The route that proposes (POST). */
  action: string;
  /** Prefix of the inputs' ids, unique on the page. */
  idPrefix: string;
  csrfToken: string;
  /** The label offered (the person may change it). */
  label: string;
  /** What the page shows that the set will hold, in words. */
  holds: string;
  /** State after a refused post. */
  error?: string;
  name?: string;
}

export function ProposeLineForm(props: ProposeLineFormProps) {
  const p = props.idPrefix;
  return (
    <div class="vc-panel vc-propose" id={`${p}`}>
      <h3>Propose every fit of the line as a parameter set</h3>
      {props.error ? (
        <p class="vc-error" role="alert">
          {props.error}
        </p>
      ) : null}
      <form class="vc-form vc-propose-form vc-propose-line" method="post" action={props.action}>
        <input type="hidden" name="_csrf" value={props.csrfToken} />
        <label for={`${p}-name`}>Your name</label>
        <input
          id={`${p}-name`}
          name="name"
          required
          maxlength={120}
          autocomplete="name"
          value={props.name ?? ''}
        />
        <label for={`${p}-label`}>Label</label>
        <input id={`${p}-label`} name="label" required maxlength={200} value={props.label} />
        <span></span>
        <button type="submit">Propose as a parameter set</button>
        <span></span>
        <span class="vc-small">
          {props.holds} Fits on too little data propose nothing; their reasons go into the set’s notes.
          Nothing changes in any assessment until someone adopts the set on the{' '}
          <a href="/parameters">Parameters</a> page.
        </span>
      </form>
    </div>
  );
}
