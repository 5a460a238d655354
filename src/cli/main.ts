/**
 * `voidcast <command> [options]` — the command-line face of the same engine the web app uses.
 */
import { fileURLToPath } from 'node:url';
import { findCalculator } from '../engine/calculators.ts';
import { ModelInputError, plainModelError } from '../model/errors.ts';
import { VERSION } from '../web/version.ts';
import { assess } from './commands/assess.ts';
import { audit } from './commands/audit.ts';
import { backup } from './commands/backup.ts';
import { calc, calcUsage } from './commands/calc.ts';
import { demo } from './commands/demo.ts';
import { excursions } from './commands/excursions.ts';
import { importCommand } from './commands/import.ts';
import { learn } from './commands/learn.ts';
import { levels } from './commands/levels.ts';
import { params } from './commands/params.ts';
import { serve } from './commands/serve.ts';
import { signoff } from './commands/signoff.ts';
import { type CliIo, type Command, EXIT, UsageError } from './io.ts';

/** Every command, in the order `--help` lists them. Later capabilities add theirs here. */
export const COMMANDS: Command[] = [
  serve,
  calc,
  importCommand,
  assess,
  learn,
  signoff,
  params,
  audit,
  levels,
  excursions,
  demo,
  backup,
];

export function usage(): string {
  const width = Math.max(...COMMANDS.map((c) => c.name.length));
  return [
    'usage: voidcast <command> [options]',
    '',
    'commands:',
    ...COMMANDS.map((c) => `  ${c.name.padEnd(width)}  ${c.summary}`),
    '',
    "voidcast <command> --help   shows a command's options",
    'voidcast --version          prints the version',
  ].join('\n');
}

export async function main(argv: string[], io: CliIo): Promise<number> {
  const [first, ...rest] = argv;
  if (first === undefined || first === '--help' || first === '-h' || first === 'help') {
    io.out(`${usage()}\n`);
    return first === undefined ? EXIT.usage : EXIT.ok;
  }
  if (first === '--version' || first === '-v') {
    io.out(`voidcast ${VERSION}\n`);
    return EXIT.ok;
  }
  const cmd = COMMANDS.find((c) => c.name === first);
  if (!cmd) {
    io.err(`voidcast: unknown command "${first}"\n${usage()}\n`);
    return EXIT.usage;
  }
  if (rest.includes('--help') || rest.includes('-h')) {
    const calculator = cmd === calc && rest[0] ? findCalculator(rest[0]) : undefined;
    io.out(`usage: ${calculator ? calcUsage(calculator) : cmd.usage}\n`);
    return EXIT.ok;
  }
  try {
    return await cmd.run(rest, io);
  } catch (e) {
    if (e instanceof UsageError) {
      io.err(`voidcast ${cmd.name}: ${e.message}\nusage: ${cmd.usage}\n`);
      return EXIT.usage;
    }
    // A model's range error names the model's own identifiers: say it in plain words instead.
    const msg =
      e instanceof ModelInputError
        ? `these data cannot be assessed: a computed quantity is outside its model's range (${plainModelError(e)}); check the data and the assessment time`
        : e instanceof Error
          ? e.message
          : String(e);
    io.err(`voidcast ${cmd.name}: ${msg}\n`);
    return EXIT.failure;
  }
}

export const processIo: CliIo = {
  out: (t) => process.stdout.write(t),
  err: (t) => process.stderr.write(t),
  isTty: Boolean(process.stdout.isTTY),
  env: process.env,
  cwd: process.cwd(),
};

if (process.argv[1] && fileURLToPath(import.meta.url) === process.argv[1]) {
  main(process.argv.slice(2), processIo).then(
    (code) => {
      process.exitCode = code;
    },
    (e) => {
      process.stderr.write(`voidcast: ${e instanceof Error ? e.message : String(e)}\n`);
      process.exitCode = EXIT.failure;
    },
  );
}
