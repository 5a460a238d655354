/**
 * The what-if levers: one form, a GET to the what-if page itself, so that the URL of a scenario is a
 * link to it and the form works without script. With htmx, a change sends the same query to the
 * page (as a fragment) after a short pause and the result swaps in beside the form; the URL follows.
 *
 * Field names are the query's (src/web/routes/whatif-query.ts reads them); values are shown as the
 * user typed them, so a refused value stays in its field with the reason beside the figures.
 */

/** The query fields of a scenario, in the form's order. */
export const LEVER_FIELDS = [
  'clean',
  'passes',
  'd50',
  'width',
  'emax',
  'removal',
  'removalAt',
  'wait',
  'waitH',
  'carrier',
  'isolation',
  'air',
  'airScale',
  'iso',
  'tool',
  'adders',
  'energy',
  'threshold',
  'params',
] as const;
export type LeverField = (typeof LEVER_FIELDS)[number];
export type LeverValues = Partial<Record<LeverField, string>>;

export interface LeverOption {
  value: string;
  label: string;
}

export interface LeverOptions {
  cleans: LeverOption[];
  /** Locations the subject's wafers waited or were carried in (the wait lever). */
  waitLocations: LeverOption[];
  /** Locations with counter data (the air lever). */
  airLocations: LeverOption[];
  tools: LeverOption[];
  parameterSets: LeverOption[];
  /** The product's interface energy as is, J/m² (a hint beside its field). */
  energyJm2: number | null;
  /** The lowest scan threshold of the subject's scans, nm (the threshold lever can only rise). */
  thresholdNm: number | null;
}

/** The query string of a set of lever values (fields in the form's order, empty ones left out). */
export function leverQuery(v: LeverValues, extra: Record<string, string> = {}): string {
  const q = new URLSearchParams();
  for (const f of LEVER_FIELDS) {
    const s = v[f];
    if (s !== undefined && s.trim() !== '') q.set(f, s.trim());
  }
  for (const [k, s] of Object.entries(extra)) if (s) q.set(k, s);
  const t = q.toString();
  return t ? `?${t}` : '';
}

function Select(props: {
  name: LeverField;
  value: string | undefined;
  none: string;
  options: LeverOption[];
}) {
  return (
    <select name={props.name} id={`lever-${props.name}`}>
      <option value="">{props.none}</option>
      {props.options.map((o) => (
        <option value={o.value} selected={o.value === props.value}>
          {o.label}
        </option>
      ))}
    </select>
  );
}

function Num(props: {
  name: LeverField;
  label: string;
  value: string | undefined;
  hint?: string;
  step?: string;
  min?: string;
  max?: string;
}) {
  return (
    <>
      <label for={`lever-${props.name}`}>{props.label}</label>
      <span class="vc-lever-input">
        <input
          type="number"
          inputmode="decimal"
          name={props.name}
          id={`lever-${props.name}`}
          value={props.value ?? ''}
          step={props.step ?? 'any'}
          min={props.min}
          max={props.max}
        />
        {props.hint ? <span class="vc-small">{props.hint}</span> : null}
      </span>
    </>
  );
}

export function LeverForm(props: {
  /** The what-if page of the subject ("/whatif/pair/TR2652-P01"). */
  action: string;
  values: LeverValues;
  options: LeverOptions;
  /** Hidden fields carried along (the assessment time). */
  hidden?: Record<string, string>;
}) {
  const v = props.values;
  const o = props.options;
  return (
    <form
      class="vc-levers"
      id="whatif-levers"
      method="get"
      action={props.action}
      hx-get={props.action}
      hx-target="#whatif-result"
      hx-select="#whatif-result"
      hx-swap="outerHTML"
      hx-trigger="change delay:350ms, submit"
      hx-push-url="true"
      hx-sync="this:replace"
    >
      {Object.entries(props.hidden ?? {}).map(([k, s]) => (
        <input type="hidden" name={k} value={s} />
      ))}
      <fieldset>
        <legend>A clean</legend>
        <div class="vc-form">
          <label for="lever-clean">Clean</label>
          <Select name="clean" value={v.clean} none="(no change)" options={o.cleans} />
          <Num
            name="passes"
            label="Extra passes"
            value={v.passes}
            step="1"
            min="0"
            max="10"
            hint="0–10, count as re-cleans"
          />
          <Num name="d50" label="Half-removal size d₅₀" value={v.d50} min="0" hint="nm" />
          <Num
            name="width"
            label="Width of the curve"
            value={v.width}
            min="0"
            hint="decades of size (smaller: steeper)"
          />
          <Num name="emax" label="Highest removal" value={v.emax} min="0" max="1" hint="0–1" />
          <Num
            name="removal"
            label="Removal at a size"
            value={v.removal}
            min="0"
            max="1"
            hint="0–1, at the size below"
          />
          <Num name="removalAt" label="… at the size" value={v.removalAt} min="0" hint="nm" />
        </div>
      </fieldset>
      <fieldset>
        <legend>A wait</legend>
        <div class="vc-form">
          <label for="lever-wait">Location</label>
          <Select name="wait" value={v.wait} none="(no change)" options={o.waitLocations} />
          <Num name="waitH" label="Duration of each stay" value={v.waitH} min="0" hint="h" />
          <label for="lever-carrier">Carrier</label>
          <select name="carrier" id="lever-carrier">
            <option value="">(as recorded)</option>
            {(['open', 'closed', 'purged'] as const).map((c) => (
              <option value={c} selected={v.carrier === c}>
                {c}
              </option>
            ))}
          </select>
          <Num
            name="isolation"
            label="Isolation factor"
            value={v.isolation}
            min="1"
            hint="room ÷ carrier air, ≥ 1"
          />
        </div>
      </fieldset>
      <fieldset>
        <legend>An area's air</legend>
        <div class="vc-form">
          <label for="lever-air">Location</label>
          <Select name="air" value={v.air} none="(no change)" options={o.airLocations} />
          <Num name="airScale" label="Concentration × " value={v.airScale} min="0" hint="factor, ≥ 0" />
          <Num name="iso" label="… or ISO class" value={v.iso} min="1" max="9" hint="ISO 14644-1, 1–9" />
        </div>
      </fieldset>
      <fieldset>
        <legend>A tool chamber's adders</legend>
        <div class="vc-form">
          <label for="lever-tool">Tool / chamber</label>
          <Select name="tool" value={v.tool} none="(no change)" options={o.tools} />
          <Num name="adders" label="Adders × " value={v.adders} min="0" hint="factor, ≥ 0 (0.5: halved)" />
        </div>
      </fieldset>
      <fieldset>
        <legend>Interface, scan and parameters</legend>
        <div class="vc-form">
          <Num
            name="energy"
            label="Interface energy"
            value={v.energy}
            min="0"
            hint={o.energyJm2 !== null ? `J/m² (as is ${o.energyJm2})` : 'J/m²'}
          />
          <Num
            name="threshold"
            label="Scan threshold"
            value={v.threshold}
            min="0"
            hint={o.thresholdNm !== null ? `nm (as is ${o.thresholdNm}; only a rise)` : 'nm'}
          />
          <label for="lever-params">Parameter set</label>
          <Select name="params" value={v.params} none="(as adopted)" options={o.parameterSets} />
        </div>
      </fieldset>
      <p class="vc-form-actions">
        <button type="submit">Show this scenario</button>
        <a href={`${props.action}${leverQuery({}, props.hidden ?? {})}`}>Clear every lever</a>
        <span class="vc-small">Figures update as you change a lever; nothing stored changes.</span>
      </p>
    </form>
  );
}
