/**
 * `voidcast assess --lot <id> | --pair <id> [--json] [--as-of TIME] [--data DIR]`
 */

import { existsSync } from 'node:fs';
import { join } from 'node:path';
import { parseAsOfText } from '../../engine/as-of.ts';
import { fmtCount, fmtCountBound, fmtHours, fmtMm2, fmtPercent, fmtSize } from '../../engine/format.ts';
import { assessPairFromDb } from '../../engine/loader.ts';
import { assessLotFromDbParallel } from '../../engine/parallel.ts';
import { parameterSetWords } from '../../engine/parameters.ts';
import type { Call, Estimate, LotAssessment, PairAssessment, PairFigures } from '../../engine/types.ts';
import { DATABASE_FILE_NAME, migrate, openDatabase } from '../../store/db.ts';
import { installationClockMs } from '../../store/settings.ts';
import { onWriterWait } from '../../store/writer.ts';
import { parseOptions } from '../args.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { resolveDataDir } from './serve.ts';

/**
 * Parses --as-of: UTC ms or an ISO 8601 time with its zone, from 1970 up to 2100 (src/engine/as-of.ts,
 * the same rule as the pages' ?asOf=); `nowMs` when not given.
 */
export function parseAsOf(value: string | undefined, nowMs: number): number {
  if (value === undefined) return nowMs;
  const r = parseAsOfText(value);
  if (!r.ok) throw new UsageError(`--as-of ${r.reason}`);
  return r.ms;
}

export function openExisting(dataFlag: string | undefined, io: CliIo) {
  const dir = resolveDataDir(dataFlag, io);
  const file = join(dir, DATABASE_FILE_NAME);
  if (!existsSync(file)) return { db: null, file };
  const db = openDatabase(file);
  // A write that has to wait for another process (the server importing) says so on stderr.
  onWriterWait(db, (m) => io.err(`voidcast: ${m}\n`));
  migrate(db);
  return { db, file };
}

const CALL_WORD: Record<Call, string> = { bond: 'BOND', 're-clean': 'RE-CLEAN', hold: 'HOLD' };

function est(e: Estimate | null, f: (x: number) => string = fmtCount): string {
  if (!e) return '—';
  return `${f(e.value)} [${f(e.low)}–${f(e.high)}]`;
}

/** An expected count with its interval, the bounds as whole counts (fmtCountBound). */
function estCount(e: Estimate | null): string {
  if (!e) return '—';
  return `${fmtCount(e.value)} [${fmtCountBound(e.low, 'low')}–${fmtCountBound(e.high, 'high')}]`;
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows
    .map((r) => r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  '))
    .join('\n');
}

function figureLines(f: PairFigures, conf: number): string[] {
  const pc = `${Math.round(conf * 100)} %`;
  return [
    `  particles at the interface   ${fmtCount(f.particles)}`,
    `  reportable voids (${pc})      ${estCount(f.voids)}`,
    `  unbonded area (${pc})         ${est(f.unbondedAreaM2, fmtMm2)}  (${est(f.unbondedFraction, fmtPercent)})`,
    `  die kills Poisson (${pc})     ${estCount(f.dieKillsPoisson)}${f.dieCount ? ` of ${f.dieCount} dies` : ''}`,
    `  die kills NB (${pc})          ${estCount(f.dieKillsNB)}`,
    `  die yield (${pc})             ${est(f.dieYield, fmtPercent)}`,
  ];
}

export function renderPair(a: PairAssessment): string {
  const conf = a.figures.voids.confidence;
  const out: string[] = [];
  out.push(
    `Pair ${a.pairId} (lot ${a.lotId}, product ${a.productId}): top ${a.topWaferId}, bottom ${a.bottomWaferId}`,
    `assessed ${new Date(a.asOfMs).toISOString()} · model ${a.modelVersion} · spec ${a.specVersion} · ${a.draws} Monte Carlo draws (seed ${a.seed})`,
    `parameters: ${parameterSetWords(a.parameters)}`,
    `inputs ${a.inputsHash}`,
    '',
    `CALL: ${CALL_WORD[a.call]}`,
    ...a.reasons.map((r) => `  ${r.blocking ? '!' : '-'} ${r.text}`),
    '',
    `Figures (voids ≥ ${fmtSize(a.smallestReportableVoidM)}, from particles ≥ ${fmtSize(a.reportableParticleM)}; tail floor ${fmtSize(a.tailFloorM)}):`,
    ...figureLines(a.figures, conf),
  );
  if (a.reclean) {
    out.push(
      '',
      `After one more ${a.reclean.cleanLabel} (modelled${a.reclean.allowed ? '' : '; NOT allowed by the re-clean limit'}; ${a.reclean.meetsSpec ? 'meets' : 'does not meet'} spec):`,
      ...figureLines(a.reclean.after, conf),
    );
  }
  if (a.dominant)
    out.push(
      '',
      `Dominant source: ${a.dominant.label} — ${fmtPercent(a.dominant.share)} of ${a.dominant.metric === 'dieKillEvents' ? 'die loss' : 'expected voids'}`,
    );
  const top = [...a.contributions]
    .sort((x, y) => y.shareVoids + y.shareDieLoss - (x.shareVoids + x.shareDieLoss))
    .slice(0, 12);
  out.push(
    '',
    'Sources (largest first):',
    table([
      ['source', 'particles', 'voids', 'share voids', 'share area', 'share die loss'],
      ...top.map((c) => [
        c.label,
        fmtCount(c.particles),
        fmtCount(c.expectedVoids),
        fmtPercent(c.shareVoids),
        fmtPercent(c.shareArea),
        fmtPercent(c.shareDieLoss),
      ]),
    ]),
  );
  const pareto = (title: string, es: { label: string; share: number }[]) => {
    if (!es.length) return;
    out.push('', `${title}:`, ...es.map((e) => `  ${fmtPercent(e.share).padStart(8)}  ${e.label}`));
  };
  pareto('Pareto by tool', a.pareto.byTool);
  pareto('Pareto by wait location', a.pareto.byWaitLocation);
  pareto('Pareto by clean (residual)', a.pareto.byClean);
  pareto(
    'Pareto by size band',
    a.pareto.bySizeBand.filter((e) => e.share > 0),
  );
  if (a.qTimes.length)
    out.push(
      '',
      'Q-times:',
      ...a.qTimes.map(
        (q) =>
          `  ${q.waferId}  ${q.label}: ${q.elapsedS === null ? 'no such step' : fmtHours(q.elapsedS)} of ${fmtHours(q.limitS)}${q.exceeded ? '  EXCEEDED' : ''}`,
      ),
    );
  if (a.notes.length) out.push('', 'Data notes:', ...a.notes.map((n) => `  - ${n.text}`));
  if (a.caution) out.push('', `Caution: ${a.caution}`);
  return `${out.join('\n')}\n`;
}

export function renderLot(l: LotAssessment): string {
  const out: string[] = [];
  out.push(
    `Lot ${l.lotId} (product ${l.productId}), assessed ${new Date(l.asOfMs).toISOString()} · model ${l.modelVersion} · spec ${l.specVersion}`,
    `parameters: ${parameterSetWords(l.parameters)}`,
    `CALL: ${CALL_WORD[l.call]}   (${l.counts.bond} bond, ${l.counts.reclean} re-clean, ${l.counts.hold} hold)`,
    '',
    table([
      ['pair', 'call', 'voids', 'unbonded', 'die kills NB', 'dominant source'],
      ...l.pairs.map((p) => [
        p.pairId,
        p.call,
        estCount(p.figures.voids),
        est(p.figures.unbondedFraction, fmtPercent),
        estCount(p.figures.dieKillsNB),
        p.dominant ? `${p.dominant.label} (${fmtPercent(p.dominant.share)})` : '—',
      ]),
    ]),
  );
  if (l.dominant)
    out.push('', `Dominant source over the lot: ${l.dominant.label} — ${fmtPercent(l.dominant.share)}`);
  out.push('', 'Reasons:', ...l.reasons.map((r) => `  ${r.blocking ? '!' : '-'} ${r.text}`));
  if (l.caution) out.push('', `Caution: ${l.caution}`);
  return `${out.join('\n')}\n`;
}

export const assess: Command = {
  name: 'assess',
  summary: 'assess a lot or a pair: expected voids, unbonded area, die loss and the call',
  usage: `voidcast assess --lot <id> | --pair <id> [--json] [--as-of TIME] [--data DIR]

  --lot ID     assess every pair of the lot
  --pair ID    assess one pair in full (sources, Paretos, re-clean before/after)
  --json       print the assessment as JSON (the same document as the JSON API)
  --as-of T    assessment time: ISO 8601 with zone, or UTC ms, from 1970 up to 2100 (default: the
               installation clock setting clock.as_of when set, as the demo does, else now)
  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

  exit codes: 0 assessed, 2 usage (a bad option or --as-of), 4 no database, or no such lot or pair,
  1 the data cannot be assessed (the message says what is missing)`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      lot: { type: 'string' },
      pair: { type: 'string' },
      json: { type: 'boolean' },
      'as-of': { type: 'string' },
      data: { type: 'string' },
    });
    if ((values.lot === undefined) === (values.pair === undefined))
      throw new UsageError('give exactly one of --lot or --pair');
    parseAsOf(values['as-of'], 0); // a bad --as-of is a usage error before anything is opened
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast assess: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    // Without --as-of: the installation's clock (settings clock.as_of, set by the demo), else now.
    const clock = values['as-of'] === undefined ? installationClockMs(db) : null;
    const asOfMs = parseAsOf(values['as-of'], clock ?? Date.now());
    if (clock !== null)
      io.err(
        `voidcast assess: as of the installation clock ${new Date(clock).toISOString()} (setting clock.as_of; --as-of overrides)\n`,
      );
    try {
      if (values.pair !== undefined) {
        const a = assessPairFromDb(db, values.pair, { asOfMs, detail: values.json ? 'full' : 'full' });
        if (!a) {
          io.err(`voidcast assess: no pair "${values.pair}"\n`);
          return EXIT.notFound;
        }
        io.out(values.json ? `${JSON.stringify(a)}\n` : renderPair(a));
        return EXIT.ok;
      }
      const l = await assessLotFromDbParallel(db, values.lot!, { asOfMs });
      if (!l) {
        io.err(`voidcast assess: no lot "${values.lot}"\n`);
        return EXIT.notFound;
      }
      io.out(values.json ? `${JSON.stringify(l)}\n` : renderLot(l));
      return EXIT.ok;
    } finally {
      db.close();
    }
  },
};
