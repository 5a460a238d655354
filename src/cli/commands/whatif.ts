/**
 * `voidcast whatif --pair ID | --lot ID | --waiting [levers] [--scenario NAME|ID] [--save NAME] [--json]`
 *
 * A scenario's figures, call and reasons beside the as-is ones. Nothing stored changes; --save keeps
 * the scenario (levers and target) under a name, recorded in the audit trail.
 */
import { userInfo } from 'node:os';
import { fmtCount, fmtCountBound, fmtPercent } from '../../engine/format.ts';
import { EngineInputError } from '../../engine/pair.ts';
import {
  type LotWhatIf,
  loadScenario,
  openLotContext,
  openPairContext,
  type PairWhatIf,
  parseScenario,
  type SavedScenario,
  type Scenario,
  ScenarioError,
  saveScenario,
  type WaitingWhatIf,
  whatIfLot,
  whatIfPair,
  whatIfWaiting,
} from '../../engine/tuning/index.ts';
import type { Call, Estimate, PairAssessment } from '../../engine/types.ts';
import { RECLEAN_CAUTION } from '../../engine/types.ts';
import type { Db } from '../../store/db.ts';
import { installationClockMs } from '../../store/settings.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { openExisting, parseAsOf } from './assess.ts';
import { LEVER_OPTIONS, LEVER_USAGE, leversOf } from './whatif-levers.ts';

const CALL_WORD: Record<Call, string> = { bond: 'BOND', 're-clean': 'RE-CLEAN', hold: 'HOLD' };

function est(e: Estimate | null, f: (x: number) => string): string {
  return e ? `${f(e.value)} [${f(e.low)}–${f(e.high)}]` : '—';
}
function count(e: Estimate | null): string {
  return e ? `${fmtCount(e.value)} [${fmtCountBound(e.low, 'low')}–${fmtCountBound(e.high, 'high')}]` : '—';
}
function signed(x: number | null, f: (x: number) => string = fmtCount): string {
  if (x === null) return '—';
  return `${x > 0 ? '+' : x < 0 ? '−' : '±'}${f(Math.abs(x))}`;
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows
    .map((r) => r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  '))
    .join('\n');
}

function cautionLines(scenario: Scenario, calls: Call[]): string[] {
  const passes = scenario.levers.some((l) => l.kind === 'clean' && (l.extraPasses ?? 0) > 0);
  return passes || calls.includes('re-clean') ? ['', `Caution: ${RECLEAN_CAUTION}`] : [];
}

/** A pair's what-if in words: the scenario beside the as-is figures. */
export function renderPairWhatIf(w: PairWhatIf): string {
  const a = w.asIs;
  const b = w.whatIf;
  const pc = `${Math.round(a.figures.voids.confidence * 100)} %`;
  const row = (name: string, f: (x: PairAssessment) => string, d: string) => [name, f(a), f(b), d];
  const out = [
    `What-if for pair ${w.pairId} (lot ${w.lotId}), as of ${new Date(w.asOfMs).toISOString()}${w.scenario.name ? ` — "${w.scenario.name}"` : ''}`,
    'levers:',
    ...(w.applied.length ? w.applied.map((t) => `  - ${t}`) : ['  (none: the stored inputs)']),
    '',
    `CALL: ${CALL_WORD[a.call]} as is → ${CALL_WORD[b.call]} in the scenario${w.callChanged ? ' (CHANGED)' : ''}`,
    '',
    table([
      ['', 'as is', 'scenario', 'change'],
      row('call', (x) => CALL_WORD[x.call], w.callChanged ? 'CHANGED' : ''),
      row(`reportable voids (${pc})`, (x) => count(x.figures.voids), signed(w.delta.voids)),
      row(
        `unbonded area (${pc})`,
        (x) => est(x.figures.unbondedFraction, fmtPercent),
        signed(w.delta.unbondedFraction, fmtPercent),
      ),
      row(`killed dies (${pc})`, (x) => count(x.figures.dieKillsNB), signed(w.delta.dieLoss)),
      row(`die yield (${pc})`, (x) => est(x.figures.dieYield, fmtPercent), ''),
    ]),
    '',
    'Scenario reasons:',
    ...b.reasons.map((r) => `  ${r.blocking ? '!' : '-'} ${r.text}`),
  ];
  if (b.dominant)
    out.push('', `Scenario's dominant source: ${b.dominant.label} — ${fmtPercent(b.dominant.share)}`);
  out.push(...cautionLines(w.scenario, [b.call]));
  return `${out.join('\n')}\n`;
}

/** A lot's what-if in words: the calls and changes pair by pair. */
export function renderLotWhatIf(w: LotWhatIf): string {
  const out = [
    `What-if for lot ${w.lotId}, as of ${new Date(w.asOfMs).toISOString()}${w.scenario.name ? ` — "${w.scenario.name}"` : ''}`,
    'levers:',
    ...(w.applied.length ? w.applied.map((t) => `  - ${t}`) : ['  (none: the stored inputs)']),
    '',
    `CALL: ${CALL_WORD[w.asIs.call]} as is → ${CALL_WORD[w.whatIf.call]} in the scenario${w.callChanged ? ' (CHANGED)' : ''}`,
    `expected voids over the lot: ${fmtCount(w.asIs.totals.voids)} → ${fmtCount(w.whatIf.totals.voids)} (${signed(w.delta.voids)})`,
    '',
    table([
      ['pair', 'as is', 'scenario', 'voids change', 'killed dies change'],
      ...w.pairs.map((p) => [
        p.pairId,
        CALL_WORD[p.asIsCall],
        CALL_WORD[p.whatIfCall],
        signed(p.delta.voids),
        signed(p.delta.dieLoss),
      ]),
    ]),
    ...cautionLines(w.scenario, [w.whatIf.call]),
  ];
  return `${out.join('\n')}\n`;
}

function renderWaiting(w: WaitingWhatIf): string {
  const out = [
    `What-if on every waiting lot, as of ${new Date(w.asOfMs).toISOString()}`,
    '',
    table([
      ['lot', 'as is', 'scenario', 'voids change'],
      ...w.lots.map((l) => [
        l.lotId,
        CALL_WORD[l.asIs.call],
        CALL_WORD[l.whatIf.call],
        signed(l.delta.voids),
      ]),
    ]),
    ...w.skipped.map((s) => `  lot ${s.lotId} left out: ${s.reason}`),
    ...cautionLines(
      w.scenario,
      w.lots.map((l) => l.whatIf.call),
    ),
  ];
  return `${out.join('\n')}\n`;
}

function osUser(): string {
  try {
    return userInfo().username || 'unknown';
  } catch {
    return 'unknown';
  }
}

/** The assessment time of a command: --as-of, else the installation clock (said on stderr), else now. */
export function commandAsOf(db: Db, asOf: string | undefined, name: string, io: CliIo): number {
  const clock = asOf === undefined ? installationClockMs(db) : null;
  if (clock !== null)
    io.err(
      `voidcast ${name}: as of the installation clock ${new Date(clock).toISOString()} (setting clock.as_of; --as-of overrides)\n`,
    );
  return parseAsOf(asOf, clock ?? Date.now());
}

export const whatif: Command = {
  name: 'whatif',
  summary:
    'try a scenario (a stronger clean, a shorter wait, cleaner air …) on a pair, a lot or every waiting lot',
  usage: `voidcast whatif --pair ID | --lot ID | --waiting [levers] [--scenario NAME|ID] [--save NAME] [--by NAME] [--json] [--as-of TIME] [--data DIR]

  --pair ID        the scenario on one pair, beside its as-is assessment
  --lot ID         on every pair of a lot
  --waiting        on every lot waiting to bond (a lot a lever does not apply to is listed and left out)
  --scenario S     start from a saved scenario (by id or name); levers given here are added after its own
  --save NAME      keep the scenario under NAME (for the pair or lot given), in the audit trail
  --by NAME        who saves it (default: the operating-system user)
  --json           the what-if as JSON: {asIs, whatIf, delta, callChanged, applied, scenario} (a pair's
                   or a lot's; --waiting: {lots, skipped}), with "saved" when --save was given
  --as-of T        assessment time (default: the installation clock, else now)
  --data DIR       data directory holding voidcast.db

${LEVER_USAGE}

  Nothing stored changes: a scenario is applied to the inputs in memory only.

  exit codes: 0 done, 2 usage (a bad option or lever text), 3 a lever refused (unknown location,
  clean or tool, a value out of range — the message names the lever), 4 no database, or no such
  pair, lot or saved scenario, 1 the data cannot be assessed`,
  async run(argv, io) {
    const { values } = parseOptions(argv, {
      pair: { type: 'string' },
      lot: { type: 'string' },
      waiting: { type: 'boolean' },
      scenario: { type: 'string' },
      save: { type: 'string' },
      by: { type: 'string' },
      json: { type: 'boolean' },
      'as-of': { type: 'string' },
      data: { type: 'string' },
      ...LEVER_OPTIONS,
    });
    const subjects = [values.pair, values.lot, values.waiting ? true : undefined].filter(
      (x) => x !== undefined,
    );
    if (subjects.length !== 1) throw new UsageError('give exactly one of --pair, --lot or --waiting');
    if (values.save !== undefined && values.waiting) throw new UsageError('--save needs --pair or --lot');
    const extra = leversOf(values);
    parseAsOf(values['as-of'], 0);
    const { db, file } = openExisting(values.data, io);
    if (!db) {
      io.err(`voidcast whatif: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    try {
      let base: SavedScenario | null = null;
      if (values.scenario !== undefined) {
        const key = /^\d+$/.test(values.scenario) ? Number(values.scenario) : values.scenario;
        base = loadScenario(db, key);
        if (!base) {
          io.err(`voidcast whatif: no saved scenario "${values.scenario}"\n`);
          return EXIT.notFound;
        }
      }
      const scenario: Scenario = parseScenario({
        ...(base?.scenario.name ? { name: base.scenario.name } : {}),
        levers: [...(base?.scenario.levers ?? []), ...extra],
      });
      const asOfMs = commandAsOf(db, values['as-of'], 'whatif', io);
      let doc: unknown;
      let text: string;
      let target: { kind: 'pair' | 'lot'; id: string } | null = null;
      if (values.pair !== undefined) {
        const ctx = openPairContext(db, values.pair, { asOfMs, detail: 'summary' });
        if (!ctx) {
          io.err(`voidcast whatif: no pair "${values.pair}"\n`);
          return EXIT.notFound;
        }
        const w = whatIfPair(ctx, scenario);
        target = { kind: 'pair', id: values.pair };
        doc = w;
        text = renderPairWhatIf(w);
      } else if (values.lot !== undefined) {
        const ctx = openLotContext(db, values.lot, { asOfMs });
        if (!ctx) {
          io.err(`voidcast whatif: no lot "${values.lot}"\n`);
          return EXIT.notFound;
        }
        const w = whatIfLot(ctx, scenario);
        target = { kind: 'lot', id: values.lot };
        doc = w;
        text = renderLotWhatIf(w);
      } else {
        const w = whatIfWaiting(db, scenario, { asOfMs });
        doc = w;
        text = renderWaiting(w);
      }
      let saved: SavedScenario | null = null;
      if (values.save !== undefined) {
        const by = values.by?.trim() || `command line (${osUser()})`;
        saved = saveScenario(db, { name: values.save, scenario, target, createdBy: by });
        cliAudit(db, 'scenario.save', `scenario:${saved.id}`, { name: saved.name, target }, values.by);
        text += `\nSaved as scenario ${saved.id} "${saved.name}".\n`;
      }
      io.out(values.json ? `${JSON.stringify(saved ? { ...(doc as object), saved } : doc)}\n` : text);
      return EXIT.ok;
    } catch (e) {
      if (e instanceof ScenarioError) {
        io.err(`voidcast whatif: ${e.message}\n`);
        return EXIT.rejected;
      }
      if (e instanceof EngineInputError) {
        io.err(`voidcast whatif: ${e.message}\n`);
        return EXIT.failure;
      }
      throw e;
    } finally {
      db.close();
    }
  },
};
