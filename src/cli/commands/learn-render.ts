/**
 * Terminal text of `voidcast learn`: one block per tool or clean with the fitted values, their
 * intervals and the data they rest on, the typed values beside, and the too-little-data reasons.
 */
import { fmtCount, fmtSize } from '../../engine/format.ts';
import type {
  AdderLearning,
  AddersReport,
  PositionErrorUsed,
  RemovalLearning,
  RemovalReport,
} from '../../engine/learn/types.ts';

function table(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows.map((r) =>
    `  ${r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  ')}`.trimEnd(),
  );
}

function fmtUm(m: number): string {
  return `${(m * 1e6).toFixed(1)} µm`;
}

function fmtTime(ms: number): string {
  return new Date(ms).toISOString().slice(0, 16).replace('T', ' ');
}

function plural(n: number, one: string, many = `${one}s`): string {
  return `${n} ${n === 1 ? one : many}`;
}

/** Pass by pass when few (time, wafer, adders); by UTC day when many (passes, adders). */
function historyText(r: AdderLearning): string {
  if (r.passes.length <= 8)
    return r.passes.map((p) => `${fmtTime(p.timeMs)} ${p.waferId} ${p.adders}`).join(' · ');
  const days = new Map<string, { passes: number; adders: number }>();
  for (const p of r.passes) {
    const d = new Date(p.timeMs).toISOString().slice(0, 10);
    const v = days.get(d) ?? { passes: 0, adders: 0 };
    v.passes++;
    v.adders += p.adders;
    days.set(d, v);
  }
  return [...days]
    .map(([d, v]) => `${d} ${plural(v.passes, 'pass', 'passes')} ${plural(v.adders, 'adder')}`)
    .join(' · ');
}

function pct(x: number): string {
  return `${(x * 100).toFixed(1)} %`;
}

export function positionLine(p: PositionErrorUsed): string {
  return p.source === 'estimated'
    ? `positioning error σ ${fmtUm(p.sigmaM)} per axis between two scans (estimated from ${p.n} confident matches); match radius ${fmtUm(p.radiusM)}`
    : `positioning error σ ${fmtUm(p.sigmaM)} per axis (default: too few confident matches to estimate it); match radius ${fmtUm(p.radiusM)}`;
}

function adderBlock(r: AdderLearning): string[] {
  const out = [`${r.toolKey}${r.name ? ` — ${r.name}` : ''}`];
  const f = r.fit;
  const t = r.typed;
  if (f && r.referenceM !== null) {
    out.push(
      `  ${plural(f.passes, 'pass', 'passes')} · ${plural(f.total, 'adder')} ≥ ${fmtSize(r.referenceM)}`,
    );
    const typedCount = t
      ? `${fmtCount(t.countAtReference)}  (${fmtCount(t.countAbove)} at ${fmtSize(t.atDiameterM)}${t.fromM ? `, from ${fmtSize(t.fromM)}` : ''})`
      : '—';
    out.push(
      ...table([
        ['', 'fitted', 'typed'],
        [
          `per pass ≥ ${fmtSize(r.referenceM)}`,
          `${fmtCount(f.meanPerPass)} [${fmtCount(f.lowerPerPass)}–${fmtCount(f.upperPerPass)}]`,
          typedCount,
        ],
        [
          'size slope α',
          f.slope !== null
            ? `${f.slope.toFixed(2)} ± ${f.slopeSe!.toFixed(2)} [${f.slopeLow!.toFixed(2)}–${f.slopeHigh!.toFixed(2)}]`
            : '—',
          t ? t.slope.toFixed(2) : '—',
        ],
        [
          'variance/mean',
          f.dispersion === null
            ? '— (one pass)'
            : f.dispersion.index === null
              ? '— (no adders)'
              : fmtCount(f.dispersion.index),
          '',
        ],
      ]),
    );
    out.push(`  history: ${historyText(r)}`);
  }
  out.push(r.proposal ? '  proposed for a parameter set' : `  ${r.tooLittle}`);
  for (const n of r.notes) out.push(`  - ${n}`);
  return out;
}

export function renderAdders(rep: AddersReport): string {
  const out = [
    'Adders per wafer pass, learned from scans before and after each pass (95 % intervals)',
    positionLine(rep.position),
    '',
  ];
  if (rep.results.length === 0) out.push('no pass through any tool lies between two scans of a wafer', '');
  for (const r of rep.results) out.push(...adderBlock(r), '');
  for (const i of rep.issues) out.push(`- ${i.message}`);
  return `${out.join('\n').trimEnd()}\n`;
}

function removalBlock(r: RemovalLearning): string[] {
  const out = [`${r.cleanId}${r.name ? ` — ${r.name}` : ''}${r.toolId ? ` (${r.toolId})` : ''}`];
  const t = r.typed;
  out.push(
    `  ${plural(r.passes.length, 'pass', 'passes')} · ${plural(r.particles, 'particle')} followed · ${r.removed} removed`,
  );
  if (r.fit) {
    const f = r.fit;
    out.push(
      ...table([
        ['', 'fitted', 'typed'],
        [
          'E_max',
          f.maxEfficiencyFitted
            ? `${pct(f.maxEfficiency)} [${pct(f.maxEfficiencyLow!)}–${pct(f.maxEfficiencyHigh!)}]`
            : `${pct(f.maxEfficiency)} (fixed)`,
          t ? pct(t.maxEfficiency) : '—',
        ],
        [
          'd50',
          `${fmtSize(f.d50M)} [${fmtSize(f.d50LowM)}–${fmtSize(f.d50HighM)}]`,
          t ? fmtSize(t.halfSizeM) : '—',
        ],
        [
          'width w, decades',
          `${f.widthDecades.toFixed(3)} [${f.widthLowDecades.toFixed(3)}–${f.widthHighDecades.toFixed(3)}]`,
          t ? t.widthDecades.toFixed(3) : '—',
        ],
      ]),
    );
  }
  if (r.bands.length > 0) {
    out.push('  survival per size band (Wilson 95 %):');
    out.push(
      ...table([
        ['  band', 'n', 'survived', 'survival'],
        ...r.bands.map((b) => [
          `  ${fmtSize(b.lowerM)}–${fmtSize(b.upperM)}`,
          String(b.n),
          String(b.survived),
          `${pct(b.survival)} [${pct(b.wilsonLow)}–${pct(b.wilsonHigh)}]`,
        ]),
      ]),
    );
  }
  out.push(r.proposal ? '  proposed for a parameter set' : `  ${r.tooLittle}`);
  for (const n of r.notes) out.push(`  - ${n}`);
  return out;
}

export function renderRemoval(rep: RemovalReport): string {
  const out = [
    'Removal efficiency vs size, learned from matched particles before and after each clean (95 % intervals)',
    positionLine(rep.position),
    '',
  ];
  if (rep.results.length === 0) out.push('no pass through any clean lies between two scans of a wafer', '');
  for (const r of rep.results) out.push(...removalBlock(r), '');
  for (const i of rep.issues) out.push(`- ${i.message}`);
  return `${out.join('\n').trimEnd()}\n`;
}
