/**
 * Which parameter set an assessment used, small, for the header line of the lot and pair pages:
 * "parameters: set 3 “week 42 fits”" (a link to the set) or "parameters: typed values".
 */
export interface ParameterSetRefLike {
  id: number | null;
  version: number | null;
  label: string;
}

export function ParametersUsed(props: { parameters: ParameterSetRefLike }) {
  const p = props.parameters;
  return (
    <span class="vc-params-used" data-parameter-set={p.id === null ? 'typed' : String(p.id)}>
      parameters:{' '}
      {p.id === null ? (
        <a href="/parameters">typed values</a>
      ) : (
        <a href={`/parameters/${p.id}`}>
          set {p.version} “{p.label}”
        </a>
      )}
    </span>
  );
}
