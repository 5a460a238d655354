import { describe, expect, it } from 'vitest';
import type { CliIo } from '../../../src/cli/io.ts';
import { COMMANDS, main } from '../../../src/cli/main.ts';
import { ModelInputError } from '../../../src/model/errors.ts';

function io() {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty: false, env: {}, cwd: '/tmp' };
  return { io, out: () => out, err: () => err };
}

describe('voidcast CLI', () => {
  it('--version prints the package version', async () => {
    const t = io();
    expect(await main(['--version'], t.io)).toBe(0);
    expect(t.out()).toMatch(/^voidcast \d+\.\d+\.\d+\n$/);
  });

  it('--help lists the commands and exits 0', async () => {
    const t = io();
    expect(await main(['--help'], t.io)).toBe(0);
    expect(t.out()).toContain('usage: voidcast <command> [options]');
    expect(t.out()).toMatch(/serve\s+run the web application/);
  });

  it('an unknown command exits 2 with a one-line message and the usage', async () => {
    const t = io();
    expect(await main(['frobnicate'], t.io)).toBe(2);
    const [first, ...rest] = t.err().split('\n');
    expect(first).toBe('voidcast: unknown command "frobnicate"');
    expect(rest.join('\n')).toContain('usage: voidcast <command> [options]');
  });

  it('a bad option exits 2 with a one-line message and the command usage', async () => {
    const t = io();
    expect(await main(['serve', '--prot', '80'], t.io)).toBe(2);
    const [first, second] = t.err().split('\n');
    expect(first).toBe('voidcast serve: unknown option --prot');
    expect(second).toBe(
      'usage: voidcast serve [--port N] [--host ADDR] [--data DIR] [--empty] [--open] [--drop DIR] [--allowed-host NAME]...',
    );
  });

  it('a bad port exits 2 naming the rule', async () => {
    const t = io();
    expect(await main(['serve', '--port', 'eighty'], t.io)).toBe(2);
    expect(t.err().split('\n')[0]).toBe(
      'voidcast serve: --port must be a whole number from 0 to 65535, got "eighty"',
    );
    const t2 = io();
    t2.io.env = { PORT: '70000' };
    expect(await main(['serve'], t2.io)).toBe(2);
    expect(t2.err().split('\n')[0]).toBe(
      'voidcast serve: PORT must be a whole number from 0 to 65535, got "70000"',
    );
  });

  it('no command at all prints the usage and exits 2', async () => {
    const t = io();
    expect(await main([], t.io)).toBe(2);
    expect(t.out()).toContain('usage: voidcast');
  });
});

describe('a model range error inside a command', () => {
  it('exits 1 with plain words, not the model function or parameter name (hand-written expectation)', async () => {
    const probe = {
      name: 'model-error-probe',
      summary: 'test only',
      usage: 'voidcast model-error-probe',
      run: async (): Promise<number> => {
        throw new ModelInputError(
          'poissonYield',
          'expectedDefects',
          'defects per die',
          '≤ 1000000 defects per die',
          2e6,
        );
      },
    };
    COMMANDS.push(probe);
    try {
      const t = io();
      expect(await main(['model-error-probe'], t.io)).toBe(1);
      expect(t.err()).toBe(
        "voidcast model-error-probe: these data cannot be assessed: a computed quantity is outside its model's range (expected defects = 2000000 defects per die is out of range; allowed ≤ 1000000 defects per die); check the data and the assessment time\n",
      );
    } finally {
      COMMANDS.splice(COMMANDS.indexOf(probe), 1);
    }
  });
});
