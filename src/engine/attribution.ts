/**
 * Attribution: each source's share of expected voids, unbonded area and die loss, and the Paretos.
 *
 * The chain is linear in particle densities, so every linear figure — expected voids, the Boolean
 * exponent Σ λ_k π R_k² (unbonded area, linearised), the expected die-kill events Σ λ_k A_c,k and
 * Σ s·[disc hits die] — is a sum over contributions and the shares are exact and sum to one. The
 * non-linear figures (1 − e^(−E), yields) are apportioned by these linear terms.
 *
 * Voids no scanned particle explains (present while an adopted parameter set states their rate) are a
 * source of their own: in the contributions, the kind Pareto and the dominant source, but not in the
 * clean and size-band Paretos (no clean left them, no particle size made them), whose shares then sum
 * to one less the unexplained share.
 */
import { SPECTRUM_BIN_COUNT, SPECTRUM_CENTRES_M } from '../model/spectrum.ts';
import type { Evaluation } from './evaluate.ts';
import type { Contribution } from './propagate.ts';
import type {
  DominantSource,
  LineData,
  Pareto,
  ParetoEntry,
  SourceContribution,
  SourceKind,
} from './types.ts';

/** Size bands of the Pareto, by particle diameter (bin centres decide the band), m. */
export const SIZE_BANDS: readonly { fromM: number; toM: number; label: string }[] = [
  { fromM: 0, toM: 30e-9, label: '< 30 nm' },
  { fromM: 30e-9, toM: 50e-9, label: '30–50 nm' },
  { fromM: 50e-9, toM: 100e-9, label: '50–100 nm' },
  { fromM: 100e-9, toM: 300e-9, label: '0.1–0.3 µm' },
  { fromM: 300e-9, toM: 1e-6, label: '0.3–1 µm' },
  { fromM: 1e-6, toM: 5e-6, label: '1–5 µm' },
  { fromM: 5e-6, toM: Number.POSITIVE_INFINITY, label: '≥ 5 µm' },
];

const share = (x: number, total: number) => (total > 0 ? x / total : 0);

/** The label of the voids no scanned particle explains (a source of its own while a set states a rate). */
export const UNEXPLAINED_LABEL = 'Voids no scanned particle explains (calibrated)';

export function sourceContributions(
  contributions: Contribution[],
  ev: Evaluation,
  bondedAreaM2: number,
): SourceContribution[] {
  const tv = ev.voids;
  const te = ev.exponent;
  let td = 0;
  for (const f of ev.perContribution) td += f.dieEvents;
  return contributions.map((c, i) => {
    const f = ev.perContribution[i]!;
    return {
      key: c.key,
      kind: c.kind,
      label: c.label,
      wafer: c.wafer,
      waferId: c.waferId,
      groupKey: c.groupKey,
      groupLabel: c.groupLabel,
      toolId: c.toolId,
      chamber: c.chamber,
      locationId: c.locationId,
      scanId: c.scanId,
      stepSeq: c.stepSeq,
      lastCleanId: c.lastCleanId,
      particles: f.particles,
      expectedVoids: f.voids,
      unbondedAreaM2: f.exponent * bondedAreaM2,
      dieKillEvents: f.dieEvents,
      shareVoids: share(f.voids, tv),
      shareArea: share(f.exponent, te),
      shareDieLoss: share(f.dieEvents, td),
    };
  });
}

/** The metric Paretos and the dominant source rank by: die loss when the spec has a die-yield line. */
export function paretoMetric(hasDieSpec: boolean): Pareto['metric'] {
  return hasDieSpec ? 'dieKillEvents' : 'expectedVoids';
}

function metricOf(e: { expectedVoids: number; dieKillEvents: number }, metric: Pareto['metric']): number {
  return metric === 'dieKillEvents' ? e.dieKillEvents : e.expectedVoids;
}

function group(
  items: SourceContribution[],
  keyOf: (c: SourceContribution) => { key: string; label: string } | null,
  metric: Pareto['metric'],
  total: number,
): ParetoEntry[] {
  const m = new Map<string, ParetoEntry>();
  for (const c of items) {
    const k = keyOf(c);
    if (!k) continue;
    const e = m.get(k.key) ?? {
      key: k.key,
      label: k.label,
      expectedVoids: 0,
      unbondedAreaM2: 0,
      dieKillEvents: 0,
      share: 0,
    };
    e.expectedVoids += c.expectedVoids;
    e.unbondedAreaM2 += c.unbondedAreaM2;
    e.dieKillEvents += c.dieKillEvents;
    m.set(k.key, e);
  }
  const out = [...m.values()];
  for (const e of out) e.share = share(metricOf(e, metric), total);
  out.sort((a, b) => metricOf(b, metric) - metricOf(a, metric) || a.key.localeCompare(b.key));
  return out;
}

const KIND_LABEL: Record<SourceKind, string> = {
  detected: 'Detected particles (at their positions)',
  tail: 'Undetected tail below the scan thresholds',
  incoming: 'Assumed incoming particles (unscanned)',
  tool: 'Tool adders per pass',
  wait: 'Deposition while waiting',
  unexplained: UNEXPLAINED_LABEL,
};

export function buildPareto(
  items: SourceContribution[],
  ev: { voidsBins: Float64Array; exponentBins: Float64Array; eventsBins: Float64Array },
  bondedAreaM2: number,
  metric: Pareto['metric'],
  line: LineData,
): Pareto {
  let total = 0;
  for (const c of items) total += metricOf(c, metric);
  const byTool = group(
    items,
    (c) => (c.kind === 'tool' ? { key: c.groupKey, label: c.groupLabel } : null),
    metric,
    total,
  );
  const byWaitLocation = group(
    items,
    (c) => (c.kind === 'wait' ? { key: c.groupKey, label: c.groupLabel } : null),
    metric,
    total,
  );
  // Voids no scanned particle explains have no clean and no particle size: they are in the kind
  // Pareto (and the dominant source), not in the clean and size-band ones.
  const byClean = group(
    items,
    (c) =>
      c.kind === 'unexplained'
        ? null
        : c.lastCleanId
          ? {
              key: `clean:${c.lastCleanId}`,
              label: `Left by ${line.cleans[c.lastCleanId]?.name ?? c.lastCleanId} (a perfect clean there would remove it)`,
            }
          : { key: 'none', label: 'Arrived after the last clean' },
    metric,
    total,
  );
  const byKind = group(items, (c) => ({ key: c.kind, label: KIND_LABEL[c.kind] }), metric, total);
  const bySizeBand = SIZE_BANDS.map((b) => {
    let v = 0;
    let e = 0;
    let d = 0;
    for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
      const c = SPECTRUM_CENTRES_M[k]!;
      if (c < b.fromM || c >= b.toM) continue;
      v += ev.voidsBins[k]!;
      e += ev.exponentBins[k]!;
      d += ev.eventsBins[k]!;
    }
    const entry = {
      key: `size:${b.label}`,
      label: b.label,
      expectedVoids: v,
      unbondedAreaM2: e * bondedAreaM2,
      dieKillEvents: d,
      share: 0,
      fromM: b.fromM,
      toM: Number.isFinite(b.toM) ? b.toM : 1e-4,
    };
    entry.share = share(metricOf(entry, metric), total);
    return entry;
  });
  return { metric, byTool, byWaitLocation, byClean, bySizeBand, byKind };
}

/** The group (tool, wait location, scan particles, tail, incoming) with the largest share. */
export function dominantSource(items: SourceContribution[], metric: Pareto['metric']): DominantSource | null {
  let total = 0;
  const groups = new Map<
    string,
    { label: string; kind: SourceKind; value: number; cleans: Map<string, number> }
  >();
  for (const c of items) {
    const v = metricOf(c, metric);
    total += v;
    const g = groups.get(c.groupKey) ?? { label: c.groupLabel, kind: c.kind, value: 0, cleans: new Map() };
    g.value += v;
    const ck = c.lastCleanId ?? '';
    g.cleans.set(ck, (g.cleans.get(ck) ?? 0) + v);
    groups.set(c.groupKey, g);
  }
  if (!(total > 0)) return null;
  let best: [string, typeof groups extends Map<string, infer V> ? V : never] | null = null;
  for (const e of groups) if (!best || e[1].value > best[1].value) best = e;
  if (!best) return null;
  let topClean = '';
  let topV = -1;
  for (const [k, v] of best[1].cleans)
    if (v > topV) {
      topV = v;
      topClean = k;
    }
  return {
    groupKey: best[0],
    label: best[1].label,
    kind: best[1].kind,
    share: best[1].value / total,
    metric,
    lastCleanId: topClean === '' ? null : topClean,
  };
}

/** Sums Paretos of several pairs (a lot): entries by key, shares of the summed total. */
export function sumParetos(ps: Pareto[], metric: Pareto['metric']): Pareto {
  const merge = <T extends ParetoEntry>(lists: T[][]): T[] => {
    const m = new Map<string, T>();
    for (const l of lists)
      for (const e of l) {
        const x = m.get(e.key);
        if (!x) m.set(e.key, { ...e });
        else {
          x.expectedVoids += e.expectedVoids;
          x.unbondedAreaM2 += e.unbondedAreaM2;
          x.dieKillEvents += e.dieKillEvents;
        }
      }
    return [...m.values()];
  };
  const byKind = merge(ps.map((p) => p.byKind));
  let total = 0;
  for (const e of byKind) total += metricOf(e, metric);
  const fin = <T extends ParetoEntry>(l: T[], sort = true): T[] => {
    for (const e of l) e.share = share(metricOf(e, metric), total);
    if (sort) l.sort((a, b) => metricOf(b, metric) - metricOf(a, metric) || a.key.localeCompare(b.key));
    return l;
  };
  return {
    metric,
    byTool: fin(merge(ps.map((p) => p.byTool))),
    byWaitLocation: fin(merge(ps.map((p) => p.byWaitLocation))),
    byClean: fin(merge(ps.map((p) => p.byClean))),
    bySizeBand: fin(merge(ps.map((p) => p.bySizeBand)), false),
    byKind: fin(byKind),
  };
}

/** Lot-level dominant source from the pairs' contributions. */
export function lotDominant(all: SourceContribution[], metric: Pareto['metric']): DominantSource | null {
  return dominantSource(all, metric);
}
