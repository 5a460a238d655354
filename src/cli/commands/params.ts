/**
 * `voidcast params list | show ID | adopt ID --as NAME | revert --as NAME [--json] [--data DIR]`:
 * the parameter sets fitted from the line's own data — which exist, what one holds beside the typed
 * values it would replace, adopting one, going back to the typed values.
 */
import { fmtMean, fmtMm2, fmtPercent, fmtSize } from '../../engine/format.ts';
import { typedCounterparts } from '../../engine/loader.ts';
import { EngineInputError } from '../../engine/pair.ts';
import { type ParameterEntry, parameterEntries, type QuantityUnit } from '../../engine/parameter-entries.ts';
import type { ParameterSet } from '../../engine/parameter-set-types.ts';
import {
  adoptParameterSetInDb,
  readParameterSet,
  readParameterSets,
  revertToTypedValuesInDb,
} from '../../engine/parameter-sets.ts';
import { parameterCounts } from '../../engine/parameters.ts';
import type { Db } from '../../store/db.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { openExisting } from './assess.ts';

const USAGE = `voidcast params list | show ID | adopt ID --as NAME | revert --as NAME [--json] [--data DIR]

  list          every parameter set: version, label, state, who made and adopted it, what it holds
  show ID       one set: each fitted value with its interval, method and data, the typed value beside it
  adopt ID      make set ID the one every assessment uses (the set adopted before is retired)
  revert        go back to the typed values (tools file, products): no set adopted
  --as NAME     who adopts or reverts (required for adopt and revert)
  --json        print JSON instead of text
  --data DIR    data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

  exit codes: 0 done (also when nothing had to change), 2 usage (a missing id or --as, an unknown
  action), 3 refused (the set's proposer cannot adopt it: another person does), 4 no database or
  no such set`;

function when(ms: number | null): string {
  return ms === null ? '—' : `${new Date(ms).toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

function parseId(v: string | undefined): number {
  if (v === undefined) throw new UsageError('the id of a parameter set is required');
  if (!/^\d+$/.test(v) || Number(v) < 1)
    throw new UsageError(`a parameter set id is a whole number ≥ 1, got "${v}"`);
  return Number(v);
}

function countsWords(s: ParameterSet): string {
  const c = parameterCounts(s.values);
  return `${c.adders} adders, ${c.removal} removal, ${c.voidSize} void size, ${c.unexplainedVoids} unexplained voids`;
}

function table(rows: string[][]): string {
  const widths = rows[0]!.map((_, i) => Math.max(...rows.map((r) => (r[i] ?? '').length)));
  return rows
    .map((r) => r.map((c, i) => (i === r.length - 1 ? c : c.padEnd(widths[i]!))).join('  '))
    .join('\n');
}

export function fmtQuantity(unit: QuantityUnit, v: number | null): string {
  if (v === null || !Number.isFinite(v)) return '—';
  switch (unit) {
    case 'count':
      return fmtMean(v);
    case 'length':
      return fmtSize(v);
    case 'area':
      return fmtMm2(v);
    case 'fraction':
      return fmtPercent(v);
    case 'energy':
      return `${Number(v.toPrecision(3))} J/m²`;
    case 'decades':
      return `${Number(v.toPrecision(3))} decades`;
    default:
      return String(Number(v.toPrecision(3)));
  }
}

export function renderList(sets: ParameterSet[]): string {
  if (sets.length === 0)
    return 'No parameter sets yet: assessments use the typed values (tools file, products). The learn commands propose sets.\n';
  const adopted = sets.find((s) => s.state === 'adopted');
  return `${table([
    ['id', 'version', 'state', 'label', 'created', 'adopted', 'holds'],
    ...sets.map((s) => [
      String(s.id),
      String(s.version),
      s.state,
      s.label,
      `${when(s.createdAtMs)} by ${s.createdBy}`,
      s.adoptedAtMs === null ? '—' : `${when(s.adoptedAtMs)} by ${s.adoptedBy}`,
      countsWords(s),
    ]),
  ])}\n\nAssessments use ${adopted ? `set ${adopted.id} (version ${adopted.version}, “${adopted.label}”)` : 'the typed values: no set is adopted'}.\n`;
}

function renderEntry(e: ParameterEntry): string[] {
  const p = e.provenance;
  return [
    `${e.subject} [${e.kind} ${e.key}]`,
    ...e.quantities.map(
      (q) =>
        `  ${q.name}: ${fmtQuantity(q.unit, q.value)}${q.low !== null && q.high !== null ? ` (95 %: ${fmtQuantity(q.unit, q.low)}–${fmtQuantity(q.unit, q.high)})` : ''} · typed ${fmtQuantity(q.unit, q.typed)}`,
    ),
    ...e.remarks.map((r) => `  ${r}`),
    `  method: ${p.method}; n = ${p.n}; fitted ${when(p.fittedAtMs)}`,
    `  data: ${p.data.length ? p.data.join(', ') : '—'}`,
  ];
}

export function renderSet(s: ParameterSet, entries: ParameterEntry[]): string {
  const out = [
    `Parameter set ${s.id}, version ${s.version}: “${s.label}” — ${s.state}`,
    `created ${when(s.createdAtMs)} by ${s.createdBy}` +
      (s.adoptedAtMs !== null ? ` · adopted ${when(s.adoptedAtMs)} by ${s.adoptedBy}` : '') +
      (s.retiredAtMs !== null ? ` · retired ${when(s.retiredAtMs)} by ${s.retiredBy}` : ''),
    `values ${s.valuesHash}`,
  ];
  for (const e of entries) out.push('', ...renderEntry(e));
  if (s.notes.length)
    out.push('', 'Notes of the fits (nothing proposed for these):', ...s.notes.map((n) => `  - ${n}`));
  return `${out.join('\n')}\n`;
}

async function withDb(dataFlag: string | undefined, io: CliIo, f: (db: Db) => number): Promise<number> {
  const { db, file } = openExisting(dataFlag, io);
  if (!db) {
    io.err(`voidcast params: no database at ${file}\n`);
    return EXIT.notFound;
  }
  try {
    return f(db);
  } finally {
    db.close();
  }
}

export const params: Command = {
  name: 'params',
  summary: 'parameter sets fitted from the line: list, show, adopt one, revert to the typed values',
  usage: USAGE,
  async run(argv, io) {
    const { values, positionals } = parseOptions(
      argv,
      { as: { type: 'string' }, json: { type: 'boolean' }, data: { type: 'string' } },
      true,
    );
    const [action, arg, ...extra] = positionals;
    if (extra.length) throw new UsageError(`unexpected argument "${extra[0]}"`);
    const json = values.json === true;
    const out = (x: unknown, text: string) => io.out(json ? `${JSON.stringify(x)}\n` : text);
    switch (action) {
      case 'list':
        if (arg !== undefined) throw new UsageError(`unexpected argument "${arg}"`);
        return withDb(values.data, io, (db) => {
          const sets = readParameterSets(db);
          out(sets, renderList(sets));
          return EXIT.ok;
        });
      case 'show': {
        const id = parseId(arg);
        return withDb(values.data, io, (db) => {
          const s = readParameterSet(db, id);
          if (!s) {
            io.err(`voidcast params: no parameter set ${id}\n`);
            return EXIT.notFound;
          }
          const entries = parameterEntries(s.values, typedCounterparts(db, s.values));
          out({ set: s, entries }, renderSet(s, entries));
          return EXIT.ok;
        });
      }
      case 'adopt': {
        const id = parseId(arg);
        if (!values.as?.trim()) throw new UsageError('--as NAME is required: who adopts the set');
        return withDb(values.data, io, (db) => {
          let r: ReturnType<typeof adoptParameterSetInDb>;
          try {
            r = adoptParameterSetInDb(db, id, values.as!);
          } catch (e) {
            // The proposer adopting their own set, or values no longer usable: nothing changed.
            if (!(e instanceof EngineInputError)) throw e;
            io.err(`voidcast params: ${e.message}\n`);
            return EXIT.rejected;
          }
          if (!r) {
            io.err(`voidcast params: no parameter set ${id}\n`);
            return EXIT.notFound;
          }
          const s = r.set;
          if (r.changed)
            cliAudit(db, 'parameters.adopt', `parameter set ${s.id}`, { setId: s.id }, values.as);
          out(
            r,
            r.changed
              ? `adopted: set ${s.id} (version ${s.version}, “${s.label}”) by ${s.adoptedBy}; every assessment now uses it` +
                  (r.previous ? `; set ${r.previous.id} (“${r.previous.label}”) is retired` : '') +
                  '\n'
              : `set ${s.id} (“${s.label}”) is adopted already; nothing changed\n`,
          );
          return EXIT.ok;
        });
      }
      case 'revert': {
        if (arg !== undefined) throw new UsageError(`unexpected argument "${arg}"`);
        if (!values.as?.trim())
          throw new UsageError('--as NAME is required: who goes back to the typed values');
        return withDb(values.data, io, (db) => {
          const r = revertToTypedValuesInDb(db, values.as!);
          if (r.changed)
            cliAudit(
              db,
              'parameters.revert',
              'typed values',
              { retiredSetId: r.retired?.id ?? null },
              values.as,
            );
          out(
            r,
            r.changed
              ? `reverted: assessments use the typed values again; set ${r.retired!.id} (“${r.retired!.label}”) is retired\n`
              : 'no parameter set was adopted: assessments use the typed values already; nothing changed\n',
          );
          return EXIT.ok;
        });
      }
      case undefined:
        throw new UsageError('say what to do: list, show ID, adopt ID --as NAME or revert --as NAME');
      default:
        throw new UsageError(`unknown action "${action}" (list, show, adopt, revert)`);
    }
  },
};
