/** The overview: what this installation holds and where to go next. */
export interface HomeCounts {
  lots: number;
  pairs: number;
  locations: number;
  counterSamples: number;
  scans: number;
  imports: number;
}

export function HomePage(props: { counts: HomeCounts; dataDir: string }) {
  const c = props.counts;
  const empty = c.imports === 0;
  return (
    <section>
      <h1>Line overview</h1>
      <p class="vc-lede">
        Particles at the bond interface, followed from the air, the tools and the cleans to the voids they
        will leave.
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
          demo line (<code>npm start</code> loads it on first start).
        </p>
      ) : null}
      <p class="vc-small">Data directory: {props.dataDir}</p>
    </section>
  );
}

function Tile(props: { label: string; value: number; href: string }) {
  return (
    <a class="vc-tile" href={props.href}>
      <span class="vc-tile-value">{props.value.toLocaleString('en-US')}</span>
      <span class="vc-tile-label">{props.label}</span>
    </a>
  );
}
