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
  usage: '[--tool ID|ID/CHAMBER]',
  options: { tool: { type: 'string' } },
  run(db, values, json, io) {
    const toolId = values.tool as string | undefined;
    const rep = learnAdders(db, { toolId });
    if (toolId && !known(db, toolId, 'tool') && rep.results.every((r) => r.passes.length === 0)) {
      io.err(`voidcast learn adders: no tool "${toolId}" in the tools file and no pass through it\n`);
      return EXIT.notFound;
    }
    io.out(json ? `${JSON.stringify(rep)}\n` : renderAdders(rep));
    return EXIT.ok;
  },
};

const removal: LearnSubcommand = {
  name: 'removal',
  summary: 'removal efficiency vs size of each clean, from matched particles before and after it',
  usage: '[--clean ID]',
  options: { clean: { type: 'string' } },
  run(db, values, json, io) {
    const cleanId = values.clean as string | undefined;
    const rep = learnRemoval(db, { cleanId });
    if (cleanId && !known(db, cleanId, 'clean') && rep.results.every((r) => r.passes.length === 0)) {
      io.err(`voidcast learn removal: no clean "${cleanId}" in the tools file and no pass through it\n`);
      return EXIT.notFound;
    }
    io.out(json ? `${JSON.stringify(rep)}\n` : renderRemoval(rep));
    return EXIT.ok;
  },
};

/** The subcommands of `voidcast learn`, in the order the usage lists them. Add new ones here. */
export const LEARN_SUBCOMMANDS: LearnSubcommand[] = [
  adders,
  removal,
  calibrationSubcommand,
  backtestSubcommand,
];

function learnUsage(): string {
  const width = Math.max(...LEARN_SUBCOMMANDS.map((s) => s.name.length));
  return [
    ...LEARN_SUBCOMMANDS.map((s) => `voidcast learn ${s.name} ${s.usage} [--json] [--data DIR]`),
    '',
    ...LEARN_SUBCOMMANDS.map((s) => `  ${s.name.padEnd(width)}  ${s.summary}`),
    '',
    '  --lot ID     calibration, backtest: only these bonded lots (repeat for more; default every lot with inspections)',
    '  --propose    calibration: store the fitted values as a proposed parameter set (--as NAME: who; --label TEXT)',
    '  --json       print the result as JSON (values in SI units: m, UTC ms)',
    '  --data DIR   data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)',
    '',
    'No assessment changes: a fit becomes a parameter only when a person adopts it (voidcast params adopt).',
    '',
    '  exit codes: 0 fitted (also when a fit has too little data and proposes nothing), 2 usage,',
    '  4 no database, or a --tool, --clean or --lot that names nothing',
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
