/** What a command writes to; tests pass buffers, the binary passes the process streams. */
export interface CliIo {
  out: (text: string) => void;
  err: (text: string) => void;
  /** True when stdout is a terminal (progress bars, colour). */
  isTty: boolean;
  env: NodeJS.ProcessEnv;
  cwd: string;
}

export interface Command {
  name: string;
  summary: string;
  usage: string;
  run: (argv: string[], io: CliIo) => Promise<number>;
}

/** Exit codes, documented in docs/cli.md. */
export const EXIT = {
  ok: 0,
  failure: 1,
  usage: 2,
  rejected: 3,
  notFound: 4,
} as const;

export class UsageError extends Error {
  override readonly name = 'UsageError';
}
