/**
 * docs/cli.md tells the truth: every example in its `console` blocks is run, in order, from the
 * repository's root against a fresh data directory holding the demo line, and must exit with the
 * code it shows and print every line it shows (as part of a line of stdout or stderr; `…` stands
 * for lines left out, `{NAME}` captures a value that later commands use as `$NAME`). And the page
 * covers the CLI: every command, calculator, import kind and exit code appears in it, and every exit
 * code is shown by at least one example. Expected outputs are the documentation's own; the demo's
 * figures come from its byte-reproducible files (docs/demo.md).
 */
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { type CliIo, EXIT } from '../../src/cli/io.ts';
import { COMMANDS, main } from '../../src/cli/main.ts';
import { CALCULATORS } from '../../src/engine/calculators.ts';
import { IMPORT_KIND_NAMES } from '../../src/ingest/types.ts';

const ROOT = resolve(import.meta.dirname, '..', '..');
const DOC = readFileSync(join(ROOT, 'docs', 'cli.md'), 'utf8');

interface Example {
  command: string;
  expect: string[];
  exit: number;
}

/** The examples of the page's ```console blocks, in order. */
function examples(doc: string): Example[] {
  const out: Example[] = [];
  for (const block of doc.matchAll(/```console\n([\s\S]*?)```/g)) {
    let cur: Example | null = null;
    for (const line of block[1]!.split('\n')) {
      if (line.startsWith('$ ')) {
        cur = { command: line.slice(2), expect: [], exit: -1 };
        out.push(cur);
      } else if (!cur) {
        if (line.trim()) throw new Error(`output before any command in docs/cli.md: ${line}`);
      } else if (/^# exit \d+$/.test(line)) cur.exit = Number(line.slice(7));
      else if (line.trim() && line.trim() !== '…') cur.expect.push(line.trim());
    }
  }
  return out;
}

/** Splits a command line as a POSIX shell would for these examples (double quotes, no escapes). */
function words(command: string): string[] {
  return [...command.matchAll(/"([^"]*)"|(\S+)/g)].map((m) => m[1] ?? m[2]!);
}

const EXAMPLES = examples(DOC);
const vars: Record<string, string> = {};
let work: string;
let data: string;

beforeAll(async () => {
  work = mkdtempSync(join(tmpdir(), 'voidcast-cli-doc-'));
  data = join(work, 'data');
  // A place for the files an example writes (voidcast backup $WORK/…), outside the repository.
  vars.WORK = work;
  const io: CliIo = { out: () => {}, err: () => {}, isTty: false, env: {}, cwd: ROOT };
  expect(await main(['demo', 'load', '--data', data], io)).toBe(EXIT.ok);
}, 120_000);
afterAll(() => {
  if (work) rmSync(work, { recursive: true, force: true });
});

/** `voidcast serve`: a child process, stopped with SIGTERM once it prints its address. */
function runServer(args: string[]): Promise<{ code: number; output: string }> {
  return new Promise((done, fail) => {
    const child = spawn(process.execPath, ['--import', 'tsx', 'src/cli/main.ts', ...args], {
      cwd: ROOT,
      env: { ...process.env, VOIDCAST_DATA: data, PORT: '' },
    });
    let output = '';
    const timer = setTimeout(() => {
      child.kill('SIGKILL');
      fail(new Error(`voidcast serve did not start within 60 s: ${output}`));
    }, 60_000);
    const read = (b: Buffer) => {
      output += b.toString();
      if (output.includes('voidcast is running at')) child.kill('SIGTERM');
    };
    child.stdout.on('data', read);
    child.stderr.on('data', read);
    child.on('exit', (code) => {
      clearTimeout(timer);
      done({ code: code ?? -1, output });
    });
  });
}

async function run(command: string): Promise<{ code: number; output: string }> {
  const argv = words(command.replace(/\$([A-Z]+)/g, (_, name: string) => vars[name] ?? `$${name}`));
  expect(argv[0]).toBe('voidcast');
  if (argv[1] === 'serve' && !argv.some((a) => /^\d{5,}$/.test(a) || a.startsWith('--prot')))
    return runServer(argv.slice(1));
  let output = '';
  const io: CliIo = {
    out: (t) => (output += t),
    err: (t) => (output += t),
    isTty: false,
    env: { VOIDCAST_DATA: data },
    cwd: ROOT,
  };
  const code = await main(argv.slice(1), io);
  return { code, output };
}

function escapeRe(s: string): string {
  return s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
}

describe('docs/cli.md examples, run in order', () => {
  it('has examples to run', () => {
    expect(EXAMPLES.length).toBeGreaterThan(30);
    for (const e of EXAMPLES) expect(e.exit, `"# exit N" after: $ ${e.command}`).toBeGreaterThanOrEqual(0);
  });

  for (const e of EXAMPLES)
    it(`$ ${e.command}`, async () => {
      const { code, output } = await run(e.command);
      const lines = output.split('\n').map((l) => l.trim());
      expect(code, output).toBe(e.exit);
      for (const want of e.expect) {
        const names = [...want.matchAll(/\{([A-Z]+)\}/g)].map((m) => m[1]!);
        if (names.length === 0) {
          expect(
            lines.some((l) => l.includes(want)),
            `"${want}" in the output of $ ${e.command}:\n${output}`,
          ).toBe(true);
          continue;
        }
        const re = new RegExp(escapeRe(want).replace(/\\\{[A-Z]+\\\}/g, '(\\S+)'));
        const hit = lines.map((l) => re.exec(l)).find((m) => m !== null);
        // A line of the output matches the pattern (find gives undefined when none does).
        expect(hit, `"${want}" in the output of $ ${e.command}:\n${output}`).toBeDefined();
        names.forEach((n, i) => {
          vars[n] = hit![i + 1]!;
        });
      }
    }, 120_000);
});

describe('docs/cli.md covers the command line', () => {
  const commandsRun = new Set(EXAMPLES.map((e) => words(e.command)[1]));

  it('documents every command in its own section, with examples', () => {
    for (const c of COMMANDS) {
      expect(DOC, `a "## ${c.name}" section`).toMatch(new RegExp(`^## ${c.name}$`, 'm'));
      expect(commandsRun.has(c.name), `an example of voidcast ${c.name}`).toBe(true);
    }
  });

  it("every command's own usage (voidcast <command> --help) names its exit codes too", () => {
    for (const c of COMMANDS) expect(c.usage, c.name).toMatch(/exit codes: 0 /);
  });

  it('documents every calculator with an example', () => {
    for (const c of CALCULATORS) {
      expect(DOC).toContain(`\`${c.id}\``);
      expect(
        EXAMPLES.some((e) => e.command.startsWith(`voidcast calc ${c.id}`)),
        `an example of voidcast calc ${c.id}`,
      ).toBe(true);
    }
  });

  it('names every import kind', () => {
    for (const k of IMPORT_KIND_NAMES) expect(DOC).toContain(`\`${k}\``);
  });

  it('documents every exit code the CLI uses, and shows each in an example', () => {
    const table = DOC.slice(DOC.indexOf('## Exit codes'), DOC.indexOf('## The examples'));
    for (const code of Object.values(EXIT)) {
      expect(table, `exit code ${code} in the table`).toMatch(new RegExp(`^\\| ${code} \\|`, 'm'));
      expect(
        EXAMPLES.some((e) => e.exit === code),
        `an example exiting ${code}`,
      ).toBe(true);
    }
    // No exit code outside the table: every command returns one of EXIT's values.
    const codes = [...table.matchAll(/^\| (\d+) \|/gm)].map((m) => Number(m[1]));
    expect(codes.sort()).toEqual(Object.values(EXIT).sort());
  });
});
