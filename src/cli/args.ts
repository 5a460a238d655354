/**
 * Option parsing for every command, on node:util parseArgs (strict: unknown options are errors).
 */
import { type ParseArgsConfig, parseArgs } from 'node:util';
import { UsageError } from './io.ts';

export function parseOptions<T extends NonNullable<ParseArgsConfig['options']>>(
  argv: string[],
  options: T,
  allowPositionals = false,
) {
  try {
    return parseArgs({ args: joinNegativeValues(argv, options), options, allowPositionals, strict: true });
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    throw new UsageError(
      plainParseError(msg.replace(/\. To specify a positional argument.*$/s, '').split('\n')[0]!),
    );
  }
}

/** node's parser messages in the words the other usage errors use. */
function plainParseError(msg: string): string {
  let m = /^Unknown option '([^']+)'/.exec(msg);
  if (m) return `unknown option ${m[1]}`;
  m = /^Option '(--[^ ']+)[^']*' argument missing/.exec(msg);
  if (m) return `${m[1]} needs a value`;
  m = /^Option '(--[^ ']+)[^']*' does not take an argument/.exec(msg);
  if (m) return `${m[1]} takes no value`;
  m = /^Unexpected argument '([^']+)'/.exec(msg);
  if (m) return `unexpected argument "${m[1]}"`;
  return msg;
}

/**
 * `--size -1` → `--size=-1`: node's parser reads a value that starts with "-" as an option and
 * refuses it as ambiguous; a negative number after an option that takes a value is that value,
 * so that the command's own check can say what is wrong with it ("must be positive").
 */
export function joinNegativeValues(
  argv: string[],
  options: NonNullable<ParseArgsConfig['options']>,
): string[] {
  const out: string[] = [];
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    const next = argv[i + 1];
    const name = a.startsWith('--') && !a.includes('=') ? a.slice(2) : null;
    if (name !== null && options[name]?.type === 'string' && next !== undefined && /^-(\d|\.\d)/.test(next)) {
      out.push(`${a}=${next}`);
      i++;
    } else out.push(a);
  }
  return out;
}

/** A port number from a flag or the environment. */
export function parsePort(value: string, from: string): number {
  if (!/^\d+$/.test(value))
    throw new UsageError(`${from} must be a whole number from 0 to 65535, got "${value}"`);
  const n = Number(value);
  if (n > 65535) throw new UsageError(`${from} must be a whole number from 0 to 65535, got "${value}"`);
  return n;
}
