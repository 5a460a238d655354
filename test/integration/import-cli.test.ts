/** `voidcast import` through the CLI entry point: output, --json, exit codes (docs/cli.md), progress. */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import type { CliIo } from '../../src/cli/io.ts';
import { main } from '../../src/cli/main.ts';
import type { ImportReport } from '../../src/ingest/types.ts';

const FIX = join(import.meta.dirname, '../fixtures');
let data: string;

function io(isTty = false) {
  let out = '';
  let err = '';
  const io: CliIo = { out: (t) => (out += t), err: (t) => (err += t), isTty, env: {}, cwd: FIX };
  return { io, out: () => out, err: () => err };
}

beforeEach(() => {
  data = mkdtempSync(join(tmpdir(), 'voidcast-cli-'));
});
afterEach(() => rmSync(data, { recursive: true, force: true }));

describe('voidcast import', () => {
  it('imports files in order and exits 0; a second run says unchanged and exits 0', async () => {
    const t = io();
    const code = await main(
      ['import', 'locations', 'good/locations-line.csv', 'good/locations-quoted.csv', '--data', data],
      t.io,
    );
    expect(code).toBe(0);
    expect(t.out()).toBe(
      'good/locations-line.csv: imported 7 rows as import #1\ngood/locations-quoted.csv: imported 3 rows as import #2\n',
    );
    const t2 = io();
    expect(await main(['import', 'locations', 'good/locations-line.csv', '--data', data], t2.io)).toBe(0);
    expect(t2.out()).toBe('good/locations-line.csv: unchanged (same content as import #1); nothing stored\n');
  });

  it('a rejected file exits 3 and lists its issues as file:line: column "value" rule', async () => {
    await main(['import', 'locations', 'good/locations-line.csv', '--data', data], io().io);
    const t = io();
    const code = await main(
      ['import', 'counter-samples', 'bad/counter-samples-non-monotone-cumulative.csv', '--data', data],
      t.io,
    );
    expect(code).toBe(3);
    expect(t.out()).toBe(
      'bad/counter-samples-non-monotone-cumulative.csv: rejected, nothing stored — 1 issue in 2 rows read\n' +
        '  bad/counter-samples-non-monotone-cumulative.csv:4: ge_0.5um "31" cumulative counts must not rise with size: ge_0.5um = 31 is above ge_0.3um = 30\n',
    );
    const t2 = io();
    expect(
      await main(
        [
          'import',
          'counter-samples',
          'bad/counter-samples-non-monotone-cumulative.csv',
          '--accept-valid-rows',
          '--data',
          data,
        ],
        t2.io,
      ),
    ).toBe(0);
    expect(t2.out().split('\n')[0]).toBe(
      'bad/counter-samples-non-monotone-cumulative.csv: partly imported 1 of 2 rows; 1 rejected rows listed below (import #2)',
    );
  });

  it('--json prints the reports', async () => {
    const t = io();
    expect(
      await main(['import', 'locations', 'good/locations-line.csv', '--json', '--data', data], t.io),
    ).toBe(0);
    const reports = JSON.parse(t.out()) as ImportReport[];
    expect(reports).toHaveLength(1);
    expect(reports[0]).toMatchObject({
      file: 'good/locations-line.csv',
      kind: 'locations',
      status: 'imported',
      rowsStored: 7,
    });
    expect(reports[0]!.sha256).toMatch(/^[0-9a-f]{64}$/);
  });

  it('a missing file exits 1 (failure beats rejected), usage errors exit 2', async () => {
    const t = io();
    expect(
      await main(
        ['import', 'locations', 'nowhere.csv', 'bad/locations-duplicate-id.csv', '--data', data],
        t.io,
      ),
    ).toBe(1);
    expect(t.err()).toBe(`voidcast import: cannot read ${join(FIX, 'nowhere.csv')}: no such file (ENOENT)\n`);
    const u = io();
    expect(await main(['import', 'locatoins', 'x.csv', '--data', data], u.io)).toBe(2);
    expect(u.err().split('\n')[0]).toBe(
      'voidcast import: unknown kind "locatoins" (kinds: locations, counter-samples, scans, ledger, tools, products, pairs, void-inspections)',
    );
    const v = io();
    expect(await main(['import', 'locations', '--data', data], v.io)).toBe(2);
    expect(v.err().split('\n')[0]).toBe('voidcast import: name at least one file to import');
    expect(await main(['import', 'locations', 'x.csv', '--frob'], io().io)).toBe(2);
  });

  it('draws a progress bar on stderr only on a terminal, and clears it', async () => {
    const tty = io(true);
    expect(await main(['import', 'locations', 'good/locations-line.csv', '--data', data], tty.io)).toBe(0);
    const ESC = String.fromCharCode(27); // ANSI "erase to end of line" is ESC [ K
    const draws = tty.err().split('\r').filter(Boolean);
    expect(draws.at(-1)).toBe(`${ESC}[K`);
    for (const d of draws.slice(0, -1)) {
      expect(d).toMatch(/^good\/locations-line\.csv \[#{24}\] 100 % {2}0\.0\/0\.0 MB {2}\d+ rows/);
      expect(d.endsWith(`${ESC}[K`)).toBe(true);
    }
    expect(draws.length).toBeGreaterThanOrEqual(2);
    const pipe = io(false);
    await main(['import', 'locations', 'good/locations-quoted.csv', '--data', data], pipe.io);
    expect(pipe.err()).toBe('');
  });
});
