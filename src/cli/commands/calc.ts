import {
  CALCULATORS,
  CalcInputError,
  type Calculator,
  describeRange,
  findCalculator,
  formatCalcValue,
  runCalculator,
} from '../../engine/calculators.ts';
import { parseOptions } from '../args.ts';
import { type Command, EXIT, UsageError } from '../io.ts';

function calcUsage(c: Calculator): string {
  const w = Math.max(...c.fields.map((f) => f.name.length));
  return [
    `voidcast calc ${c.id} ${c.fields.map((f) => `[--${f.name} ${f.choices ? f.choices.map((x) => x.value).join('|') : 'X'}]`).join(' ')} [--json]`,
    '',
    `  ${c.title}: ${c.summary}`,
    `  ${c.formula}`,
    `  source: ${c.source}`,
    '',
    ...c.fields.map(
      (f) =>
        `  --${f.name.padEnd(w)}  ${f.label}${f.unit ? ` (${f.unit})` : ''}, default ${f.default}${f.range ? `; ${describeRange(f.range, f.unit)}` : ''}`,
    ),
    ...(c.jointLimits ? ['', `  together: ${c.jointLimits}`] : []),
    '',
    '  exit codes: 0 computed, 2 a bad option or value (the message names the option and its range)',
  ].join('\n');
}

const listUsage = (): string =>
  [
    'voidcast calc <calculator> [options] [--json]',
    '',
    'calculators:',
    ...CALCULATORS.map((c) => `  ${c.id.padEnd(20)}  ${c.title}`),
    '',
    'voidcast calc <calculator> --help   shows its inputs, formula and source',
    '',
    '  exit codes: 0 computed, 2 a bad option or value (the message names the option and its range)',
  ].join('\n');

export const calc: Command = {
  name: 'calc',
  summary:
    'one model by hand: class limit, sample volume, locations, deposition velocity, void radius, die yield, …',
  get usage() {
    return listUsage();
  },
  async run(argv, io) {
    const [id, ...rest] = argv;
    if (id === undefined) throw new UsageError('name a calculator');
    const c = findCalculator(id);
    if (!c) throw new UsageError(`unknown calculator "${id}"`);
    const options: Record<string, { type: 'string' | 'boolean' }> = { json: { type: 'boolean' } };
    for (const f of c.fields) options[f.name] = { type: 'string' };
    let values: Record<string, string | boolean | undefined>;
    try {
      values = parseOptions(rest, options).values as Record<string, string | boolean | undefined>;
    } catch (e) {
      if (!(e instanceof UsageError)) throw e;
      // The calculator is known: show its own options, not the list of calculators.
      io.err(`voidcast calc ${c.id}: ${e.message}\nusage: ${calcUsage(c)}\n`);
      return EXIT.usage;
    }
    const raw: Record<string, string | undefined> = {};
    for (const f of c.fields) raw[f.name] = values[f.name] as string | undefined;
    let result: ReturnType<typeof runCalculator>;
    try {
      result = runCalculator(c, raw);
    } catch (e) {
      if (e instanceof CalcInputError) {
        // In the user's terms: the option typed, its label and the rule with its unit.
        const what = e.field ? `--${e.field} (${e.subject})` : e.subject;
        io.err(`voidcast calc ${c.id}: ${what} ${e.rule}\nusage: ${calcUsage(c)}\n`);
        return EXIT.usage;
      }
      throw e;
    }
    const inputs = Object.fromEntries(c.fields.map((f) => [f.name, raw[f.name] ?? f.default]));
    if (values.json) {
      io.out(
        `${JSON.stringify(
          {
            calculator: c.id,
            title: c.title,
            inputs,
            units: Object.fromEntries(c.fields.map((f) => [f.name, f.unit])),
            outputs: result.outputs,
            formula: c.formula,
            source: c.source,
            notes: result.notes,
          },
          null,
          2,
        )}\n`,
      );
      return EXIT.ok;
    }
    const lw = Math.max(...result.outputs.map((o) => o.label.length), ...c.fields.map((f) => f.label.length));
    const lines = [
      c.title,
      ...c.fields.map((f) => {
        const shown = f.choices?.find((x) => x.value === inputs[f.name])?.label ?? inputs[f.name];
        return `  ${f.label.padEnd(lw)}  ${shown}${f.unit ? ` ${f.unit}` : ''}`;
      }),
      '',
      ...result.outputs.map(
        (o) => `  ${o.label.padEnd(lw)}  ${formatCalcValue(o)}${o.unit ? ` ${o.unit}` : ''}`,
      ),
      '',
      `  formula: ${c.formula}`,
      `  source:  ${c.source}`,
      ...result.notes.map((n) => `  note:    ${n}`),
    ];
    io.out(`${lines.join('\n')}\n`);
    return EXIT.ok;
  },
};

export { calcUsage };
