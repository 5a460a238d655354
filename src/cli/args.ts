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
    return parseArgs({ args: argv, options, allowPositionals, strict: true });
  } catch (e) {
    const msg = e instanceof Error ? e.message : String(e);
    throw new UsageError(msg.replace(/\. To specify a positional argument.*$/s, '').split('\n')[0]!);
  }
}

/** A port number from a flag or the environment. */
export function parsePort(value: string, from: string): number {
  if (!/^\d+$/.test(value))
    throw new UsageError(`${from} must be a whole number from 0 to 65535, got "${value}"`);
  const n = Number(value);
  if (n > 65535) throw new UsageError(`${from} must be a whole number from 0 to 65535, got "${value}"`);
  return n;
}
