/**
 * Search results: what an id names — a wafer, pair, lot, tool or location — with a link to its
 * page. The search box itself is in the masthead of every page (views/layout.tsx).
 */
import type { SearchHit, SearchHitKind } from '../../src/engine/audit/types.ts';

const KIND_WORDS: Record<SearchHitKind, string> = {
  wafer: 'Wafers',
  pair: 'Pairs',
  lot: 'Lots',
  tool: 'Tools',
  location: 'Locations',
};

/** Where a hit leads. */
export function hitHref(h: SearchHit): string {
  const id = encodeURIComponent(h.id);
  switch (h.kind) {
    case 'pair':
      return `/pairs/${id}`;
    case 'lot':
      return `/lots/${id}`;
    case 'tool':
      return '/tools';
    case 'location':
      return `/areas?location=${id}#trend-panel`;
    default:
      return `/search?q=${id}`;
  }
}

export function SearchPage(props: {
  q: string;
  hits: SearchHit[];
  limit: number;
  hrefOf?: (h: SearchHit) => string;
}) {
  const kinds = (Object.keys(KIND_WORDS) as SearchHitKind[]).filter((k) =>
    props.hits.some((h) => h.kind === k),
  );
  const href = props.hrefOf ?? hitHref;
  return (
    <section class="vc-search-page">
      <h1>Find</h1>
      <form class="vc-period-form" method="get" action="/search">
        <label>
          Wafer, pair, lot, tool or location id
          <input name="q" value={props.q} maxlength={120} />
        </label>
        <button type="submit">Find</button>
      </form>
      {props.q.trim() === '' ? (
        <p class="vc-small">Type an id or the start of one.</p>
      ) : props.hits.length === 0 ? (
        <p class="vc-note" data-hits="0">
          Nothing on the line has an id containing “{props.q}”.
        </p>
      ) : (
        <>
          <p class="vc-small" data-hits={String(props.hits.length)}>
            {props.hits.length} found for “{props.q}”
            {props.hits.length >= props.limit
              ? ` (the first ${props.limit}; type more of the id to narrow)`
              : ''}
            .
          </p>
          {kinds.map((k) => (
            <div class="vc-search-kind" data-kind={k}>
              <h2>{KIND_WORDS[k]}</h2>
              <ul>
                {props.hits
                  .filter((h) => h.kind === k)
                  .map((h) => (
                    <li>
                      <a href={href(h)}>{h.id}</a>
                      {h.label && h.label !== h.id ? <span class="vc-small"> {h.label}</span> : null}
                    </li>
                  ))}
              </ul>
            </div>
          ))}
        </>
      )}
    </section>
  );
}
