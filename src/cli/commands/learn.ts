/**
 * `voidcast learn <what> [options]`: fits from the line's own data — adders per pass of each tool
 * and chamber, removal curves of each clean, and the calibration from post-bond void inspections with
 * its backtest (learn-calibration.ts). Each subcommand is one entry of LEARN_SUBCOMMANDS.
 */
import type { ParseArgsConfig } from 'node:util';
import { learnAdders, learnRemoval } from '../../engine/learn/index.ts';
import type { Db } from '../../store/db.ts';
import { readCleans, readTools } from '../../store/tools.ts';
import { parseOptions } from '../args.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { openExisting } from './assess.ts';
import { backtestSubcommand, calibrationSubcommand } from './learn-calibration.ts';
import {
  allSubcommand,
  PROPOSE_OPTIONS,
  proposeAdders,
  proposedText,
  proposeRemoval,
  proposeRequest,
} from './learn-propose.ts';
import { renderAdders, renderRemoval } from './learn-render.ts';

type Options = NonNullable<ParseArgsConfig['options']>;
/** Parsed options; an option declared `multiple` (such as --lot) gives an array. */
type Values = Record<string, string | boolean | (string | boolean)[] | undefined>;

/** One `voidcast learn <name>`: its options (besides --json and --data) and what it does. */
export interface LearnSubcommand {
  name: string;
  summary: string;
  /** The options line of the usage, e.g. "[--tool ID]". */
  usage: string;
  options: Options;
  /** Writes the result (text or JSON) and returns the exit code. */
  run: (db: Db, values: Values, json: boolean, io: CliIo) => number;
}

function known(db: Db, id: string, kind: 'tool' | 'clean'): boolean {
  if (kind === 'clean') return id in readCleans(db);
  const tools = readTools(db);
  return id in tools || Object.keys(tools).some((k) => k.split('/')[0] === id);
}

const adders: LearnSubcommand = {
  name: 'adders',
  summary: 'adders per wafer pass of each tool and chamber, from scans before and after each pass',
  usage: '[--tool ID|ID/CHAMBER] [--propose --as NAME [--label TEXT]]',
  options: { tool: { type: 'string' }, ...PROPOSE_OPTIONS },
  run(db, values, json, io) {
    const req = proposeRequest(values);
    const toolId = values.tool as string | undefined;
    const rep = learnAdders(db, { toolId });
    if (toolId && !known(db, toolId, 'tool') && rep.results.every((r) => r.passes.length === 0)) {
      io.err(`voidcast learn adders: no tool "${toolId}" in the tools file and no pass through it\n`);
      return EXIT.notFound;
    }
    const p = req ? proposeAdders(db, rep, req, toolId) : null;
    if (json) io.out(`${JSON.stringify(p ? { ...rep, ...p } : rep)}\n`);
    else io.out(renderAdders(rep) + (p && req ? proposedText(p, req.who) : ''));
    return p?.refused ? EXIT.rejected : EXIT.ok;
  },
};

const removal: LearnSubcommand = {
  name: 'removal',
  summary: 'removal efficiency vs size of each clean, from matched particles before and after it',
  usage: '[--clean ID] [--propose --as NAME [--label TEXT]]',
  options: { clean: { type: 'string' }, ...PROPOSE_OPTIONS },
  run(db, values, json, io) {
    const req = proposeRequest(values);
    const cleanId = values.clean as string | undefined;
    const rep = learnRemoval(db, { cleanId });
    if (cleanId && !known(db, cleanId, 'clean') && rep.results.every((r) => r.passes.length === 0)) {
      io.err(`voidcast learn removal: no clean "${cleanId}" in the tools file and no pass through it\n`);
      return EXIT.notFound;
    }
    const p = req ? proposeRemoval(db, rep, req, cleanId) : null;
    if (json) io.out(`${JSON.stringify(p ? { ...rep, ...p } : rep)}\n`);
    else io.out(renderRemoval(rep) + (p && req ? proposedText(p, req.who) : ''));
    return p?.refused ? EXIT.rejected : EXIT.ok;
  },
};

/** The subcommands of `voidcast learn`, in the order the usage lists them. Add new ones here. */
export const LEARN_SUBCOMMANDS: LearnSubcommand[] = [
  adders,
  removal,
  calibrationSubcommand,
  backtestSubcommand,
  allSubcommand,
];

function learnUsage(): string {
  const width = Math.max(...LEARN_SUBCOMMANDS.map((s) => s.name.length));
  return [
    ...LEARN_SUBCOMMANDS.map((s) => `voidcast learn ${s.name} ${s.usage} [--json] [--data DIR]`),
    '',
    ...LEARN_SUBCOMMANDS.map((s) => `  ${s.name.padEnd(width)}  ${s.summary}`),
    '',
    '  --lot ID     calibration, backtest: only these bonded lots (repeat for more; default every lot with inspections)',
    '  --propose    adders, removal, calibration, all: store the fitted values as a proposed parameter set',
    '               (--as NAME: who; --label TEXT); all proposes every fit of the line as one set',
    '  --json       print the result as JSON (values in SI units: m, UTC ms)',
    '  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)',
    '',
    'No assessment changes: a fit becomes a parameter only when a person adopts it (voidcast params adopt).',
    '',
    '  exit codes: 0 fitted (also when a fit has too little data and proposes nothing), 2 usage,',
    '  3 --propose with nothing to propose, 4 no database, or a --tool, --clean or --lot that names nothing',
  ].join('\n');
}

export const learn: Command = {
  name: 'learn',
  summary:
    'fit adders, removal curves and the void calibration from the line’s own scans and void inspections (nothing is changed)',
  get usage() {
    return learnUsage();
  },
  async run(argv, io) {
    const [name, ...rest] = argv;
    const sub = LEARN_SUBCOMMANDS.find((s) => s.name === name);
    if (!sub)
      throw new UsageError(
        name === undefined
          ? `say what to learn: ${LEARN_SUBCOMMANDS.map((s) => s.name).join(', ')}`
          : `unknown subject "${name}" (one of ${LEARN_SUBCOMMANDS.map((s) => s.name).join(', ')})`,
      );
    const { values } = parseOptions(rest, {
      ...sub.options,
      json: { type: 'boolean' },
      data: { type: 'string' },
    });
    const { db, file } = openExisting(values.data as string | undefined, io);
    if (!db) {
      io.err(`voidcast learn: no database at ${file} (import data or start the server first)\n`);
      return EXIT.notFound;
    }
    try {
      return sub.run(db, values as Values, Boolean(values.json), io);
    } finally {
      db.close();
    }
  },
};
