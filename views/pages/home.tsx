/** The overview: what this installation holds, the lots in it, the latest imports, where to go next. */
import { groupDigits } from '../partials/format.ts';

export interface HomeCounts {
  lots: number;
  pairs: number;
  locations: number;
  counterSamples: number;
  scans: number;
  imports: number;
}

export interface HomeLot {
  lotId: string;
  productId: string | null;
  wafers: number;
  pairs: number;
  /** Earliest planned bond time of its pairs, ISO UTC, or null. */
  nextBond: string | null;
}

export interface HomeImportKind {
  kind: string;
  files: number;
  rows: number;
  duplicates: number;
  flags: number;
  /** ISO UTC of the latest import of this kind. */
  lastAt: string;
}

export function HomePage(props: {
  counts: HomeCounts;
  dataDir: string;
  lots: HomeLot[];
  byKind: HomeImportKind[];
  asOf: string | null;
}) {
  const c = props.counts;
  const empty = c.imports === 0;
  return (
    <section>
      <h1>Line overview</h1>
      <p class="vc-lede">
        Particles at the bond interface, followed from the air, the tools and the cleans to the voids they
        will leave.
        {props.asOf ? ` Assessments are made as of ${props.asOf}.` : ''}
      </p>
      <div class="vc-tiles">
        <Tile label="Lots" value={c.lots} href="/lots" />
        <Tile label="Bond pairs" value={c.pairs} href="/lots" />
        <Tile label="Monitored locations" value={c.locations} href="/areas" />
        <Tile label="Counter samples" value={c.counterSamples} href="/areas" />
        <Tile label="Surface scans" value={c.scans} href="/lots" />
        <Tile label="Imported files" value={c.imports} href="/imports" />
      </div>
      {empty ? (
        <p class="vc-note">
          This database is empty. Load files on the <a href="/imports">Imports</a> page, or restart with the
          demo line (<code>npm start</code> loads it on first start into a fresh data directory).
        </p>
      ) : null}
      <div class="vc-grid2">
        <div>
          <h2>Lots</h2>
          {props.lots.length === 0 ? (
            <p class="vc-small">No lots yet: they arrive with scans, ledgers and pairs.</p>
          ) : (
            <table class="vc-table">
              <thead>
                <tr>
                  <th>Lot</th>
                  <th>Product</th>
                  <th class="num">Wafers</th>
                  <th class="num">Pairs</th>
                  <th>First planned bond (UTC)</th>
                </tr>
              </thead>
              <tbody>
                {props.lots.map((l) => (
                  <tr>
                    <td>
                      <a href={`/lots/${encodeURIComponent(l.lotId)}`}>{l.lotId}</a>
                    </td>
                    <td>{l.productId ?? '—'}</td>
                    <td class="num">{l.wafers}</td>
                    <td class="num">{l.pairs}</td>
                    <td>{l.nextBond ?? '—'}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          <p class="vc-small">
            The <a href="/lots">Lots</a> queue gives each lot its call — bond, re-clean or hold — with the
            source that dominates its risk.
          </p>
        </div>
        <div>
          <h2>Imported data</h2>
          {props.byKind.length === 0 ? (
            <p class="vc-small">Nothing imported yet.</p>
          ) : (
            <table class="vc-table">
              <thead>
                <tr>
                  <th>Kind</th>
                  <th class="num">Files</th>
                  <th class="num">Rows</th>
                  <th class="num">Duplicates dropped</th>
                  <th class="num">Quality flags</th>
                  <th>Latest (UTC)</th>
                </tr>
              </thead>
              <tbody>
                {props.byKind.map((k) => (
                  <tr>
                    <td class="vc-nowrap">{k.kind}</td>
                    <td class="num">{k.files}</td>
                    <td class="num">{groupDigits(k.rows)}</td>
                    <td class="num">{groupDigits(k.duplicates)}</td>
                    <td class="num">{groupDigits(k.flags)}</td>
                    <td class="vc-nowrap">{k.lastAt.replace('T', ' ').slice(0, 16)}</td>
                  </tr>
                ))}
              </tbody>
            </table>
          )}
          <p class="vc-small">
            Every file, its hash, its rejected rows and its flags are on the <a href="/imports">Imports</a>{' '}
            page.
          </p>
        </div>
      </div>
      <p class="vc-small">Data directory: {props.dataDir}</p>
    </section>
  );
}

function Tile(props: { label: string; value: number; href: string }) {
  return (
    <a class="vc-tile" href={props.href}>
      <span class="vc-tile-value">{groupDigits(props.value)}</span>
      <span class="vc-tile-label">{props.label}</span>
    </a>
  );
}
