/**
 * `voidcast learn calibration [--lot ID]… [--propose --as NAME [--label TEXT]] [--json]` and
 * `voidcast learn backtest [--lot ID]… [--json]`: calibration from the post-bond void inspections
 * and its leave-one-lot-out backtest (src/engine/learn/calibration.ts, backtest.ts), as text with
 * every figure's interval and the data it rests on, or as JSON (SI units).
 */
import type { ParseArgsConfig } from 'node:util';
import { fmtCount, fmtMm2, fmtPercent, fmtSize } from '../../engine/format.ts';
import { backtest, coverageFraction } from '../../engine/learn/backtest.ts';
import { calibrate } from '../../engine/learn/calibration.ts';
import type {
  BacktestReport,
  CalibrationReport,
  Coverage,
  PredictedFigures,
} from '../../engine/learn/calibration-types.ts';
import { loadInspectedLots } from '../../engine/learn/loader.ts';
import { proposeParameterSet } from '../../engine/parameter-sets.ts';
import type { Estimate } from '../../engine/types.ts';
import type { Db } from '../../store/db.ts';
import { type CliIo, EXIT, UsageError } from '../io.ts';

type Options = NonNullable<ParseArgsConfig['options']>;
type Values = Record<string, string | boolean | (string | boolean)[] | undefined>;

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows
    .map((r) => r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  '))
    .join('\n');
}

/** A count: whole numbers (the Monte Carlo's quantiles of counts) as they are, others as fmtCount. */
function fmtN(x: number): string {
  return Number.isInteger(x) ? String(x) : fmtCount(x);
}

function est(e: Estimate | null, f: (x: number) => string = fmtN): string {
  return e ? `${f(e.value)} [${f(e.low)}–${f(e.high)}]` : '—';
}

function lotsOf(values: Values): string[] | undefined {
  const v = values.lot;
  if (v === undefined) return undefined;
  return (Array.isArray(v) ? v : [v]).map(String);
}

export function renderCalibration(r: CalibrationReport): string {
  const out: string[] = [];
  out.push(
    `Calibration from void inspections: ${r.pairs.length} bonded pair${r.pairs.length === 1 ? '' : 's'} of lot${r.lots.length === 1 ? '' : 's'} ${r.lots.join(', ') || '—'}`,
    '',
  );
  if (r.pairs.length > 0)
    out.push(
      table([
        [
          'pair',
          'inspection',
          '≥',
          'explained',
          'unexplained',
          'edge excl.',
          'not seen (Σ survival)',
          'chance',
        ],
        ...r.pairs.map((p) => {
          const m = p.matching;
          return [
            p.pairId,
            m.inspectionId,
            fmtSize(m.smallestVoidM),
            String(m.explained),
            String(m.unexplained),
            String(m.inEdgeExclusion),
            `${m.notSeen} (${fmtCount(m.notSeenExpected)})`,
            fmtCount(m.chanceMatches),
          ];
        }),
      ]),
      '',
    );
  for (const p of r.products) {
    const v = p.voidSize;
    out.push(`Product ${p.productId}`);
    if (v.fitted) {
      const f = v.fitted;
      out.push(
        `  interface energy     ${fmtCount(f.energyJm2)} J/m² [${fmtCount(f.energyLowJm2)}–${fmtCount(f.energyHighJm2)}] (95 %), typed ${fmtCount(v.typedEnergyJm2)} J/m²; n = ${f.n} explained voids (${v.smallGap} small-gap, ${v.thickPlate} thick-plate)`,
        `  void radius          × ${fmtCount(f.radiusMultiplier)} [${fmtCount(v.multiplierLow ?? 0)}–${fmtCount(v.multiplierHigh ?? 0)}] of the typed prediction; scatter of ln R ${fmtCount(v.residualSigma ?? 0)}`,
      );
    } else out.push(`  interface energy     not fitted: ${v.note}`);
    const u = p.unexplained;
    out.push(`  unexplained voids    ${u.comparison}`);
    if (u.fitted)
      out.push(
        `  proposed source      ${fmtCount(u.fitted.ratePerPair)} per pair [${fmtCount(u.fitted.rateLowPerPair)}–${fmtCount(u.fitted.rateHighPerPair)}], mean ${fmtSize(u.fitted.meanDiameterM)} (${fmtMm2(u.fitted.meanAreaM2)} each); n = ${u.pairs} pairs`,
      );
    else if (u.note) out.push(`  not proposed: ${u.note}`);
    out.push('');
  }
  if (r.notes.length) out.push('Notes:', ...r.notes.map((n) => `  - ${n}`), '');
  out.push('How:', ...r.method.map((m) => `  - ${m}`));
  out.push(
    '',
    'Nothing is changed: a proposed set becomes the assessments’ parameters only when a person adopts it (voidcast params adopt).',
  );
  return `${out.join('\n')}\n`;
}

function pct(c: { inside: number; n: number }): string {
  const f = coverageFraction(c);
  return f === null ? '—' : `${fmtPercent(f)} (${c.inside}/${c.n})`;
}

function coverageLine(label: string, c: Coverage): string {
  return `  ${label.padEnd(7)} voids ${pct(c.voids)} · unbonded area ${pct(c.unbondedArea)} · die kills ${pct(c.dieKills)}`;
}

function figures(p: PredictedFigures | null): [string, string, string] {
  if (!p) return ['—', '—', '—'];
  return [est(p.voids), est(p.unbondedAreaM2, fmtMm2), est(p.dieKills)];
}

export function renderBacktest(r: BacktestReport): string {
  const out: string[] = [
    'Backtest, leave one lot out (each lot predicted with values fitted on the others):',
    '',
  ];
  for (const l of r.lots) {
    const vs = Object.values(l.values.voidSize)[0];
    const ux = Object.values(l.values.unexplainedVoids)[0];
    out.push(
      `Lot ${l.lotId}: fitted on ${l.fittedOn.join(', ') || 'nothing'}` +
        (vs
          ? ` — energy ${fmtCount(vs.energyJm2)} J/m² [${fmtCount(vs.energyLowJm2)}–${fmtCount(vs.energyHighJm2)}] (n = ${vs.n})`
          : '') +
        (ux ? `, unexplained ${fmtCount(ux.ratePerPair)} per pair` : ''),
      `  reportable voids over the lot: observed ${l.observedVoids}, predicted before ${fmtCount(l.predictedVoidsBefore)}, after ${l.predictedVoidsAfter === null ? '—' : fmtCount(l.predictedVoidsAfter)}`,
    );
    const rows = r.pairs.filter((p) => p.lotId === l.lotId);
    out.push(
      table([
        [
          'pair',
          'voids obs',
          'before',
          'after',
          'area obs',
          'before',
          'after',
          'dies obs',
          'before',
          'after',
        ],
        ...rows.map((p) => {
          const b = figures(p.before);
          const a = figures(p.after);
          return [
            p.pairId,
            String(p.observed.voids),
            b[0],
            a[0],
            fmtMm2(p.observed.unbondedAreaM2),
            b[1],
            a[1],
            p.observed.dieKills === null ? '—' : String(p.observed.dieKills),
            b[2],
            a[2],
          ];
        }),
      ]).replace(/^/gm, '  '),
      '',
    );
  }
  out.push(
    'Coverage of the 95 % intervals (fraction of observed values inside):',
    coverageLine('before', r.coverageBefore),
    coverageLine('after', r.coverageAfter),
    '',
  );
  if (r.notes.length) out.push('Notes:', ...r.notes.map((n) => `  - ${n}`), '');
  out.push('How:', ...r.method.map((m) => `  - ${m}`));
  return `${out.join('\n')}\n`;
}

/** Shape of a `voidcast learn` subcommand (src/cli/commands/learn.ts LearnSubcommand). */
export interface CalibrationSubcommand {
  name: string;
  summary: string;
  usage: string;
  options: Options;
  run: (db: Db, values: Values, json: boolean, io: CliIo) => number;
}

function loadOrSay(db: Db, values: Values, name: string, io: CliIo) {
  const lotIds = lotsOf(values);
  const { lots, missing } = loadInspectedLots(db, lotIds);
  if (missing.length) {
    io.err(
      `voidcast learn ${name}: no bonded lot with void inspections named ${missing.map((m) => `"${m}"`).join(', ')}\n`,
    );
    return null;
  }
  return lots;
}

export const calibrationSubcommand: CalibrationSubcommand = {
  name: 'calibration',
  summary: 'interface energy and unexplained voids from the post-bond void inspections',
  usage: '[--lot ID]… [--propose --as NAME [--label TEXT]]',
  options: {
    lot: { type: 'string', multiple: true },
    propose: { type: 'boolean' },
    as: { type: 'string' },
    label: { type: 'string' },
  },
  run(db, values, json, io) {
    const propose = Boolean(values.propose);
    const who = typeof values.as === 'string' ? values.as.trim() : '';
    if (propose && !who) throw new UsageError('--propose needs --as NAME: who proposes the set');
    if (!propose && (values.as !== undefined || values.label !== undefined))
      throw new UsageError('--as and --label go with --propose');
    const lots = loadOrSay(db, values, 'calibration', io);
    if (!lots) return EXIT.notFound;
    const report = calibrate(lots);
    let proposed: { id: number; version: number; label: string } | null = null;
    let refused: string | null = null;
    if (propose) {
      const label =
        typeof values.label === 'string' && values.label.trim()
          ? values.label.trim()
          : `calibration from the void inspections of ${report.lots.join(', ')}`;
      const out = proposeParameterSet(db, report.values, report.notes, label, who);
      if (out.ok) proposed = { id: out.set.id, version: out.set.version, label: out.set.label };
      else refused = out.message;
    }
    if (json) io.out(`${JSON.stringify({ ...report, proposed, refused })}\n`);
    else {
      io.out(renderCalibration(report));
      if (proposed)
        io.out(
          `\nProposed as parameter set ${proposed.id} (version ${proposed.version}, “${proposed.label}”) by ${who}; adopt it with: voidcast params adopt ${proposed.id} --as NAME\n`,
        );
      if (refused) io.out(`\nNot proposed: ${refused}\n`);
    }
    return refused ? EXIT.rejected : EXIT.ok;
  },
};

export const backtestSubcommand: CalibrationSubcommand = {
  name: 'backtest',
  summary:
    'predicted against observed voids, area and die kills per bonded pair, before and after calibration (leave one lot out)',
  usage: '[--lot ID]…',
  options: { lot: { type: 'string', multiple: true } },
  run(db, values, json, io) {
    const lots = loadOrSay(db, values, 'backtest', io);
    if (!lots) return EXIT.notFound;
    const report = backtest(lots);
    io.out(json ? `${JSON.stringify(report)}\n` : renderBacktest(report));
    return EXIT.ok;
  },
};
