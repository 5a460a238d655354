/**
 * `voidcast import <kind> <file…>` — imports files through the same pipeline as the web Imports page.
 * Each file is its own transaction: a rejected file stores nothing, the others are unaffected.
 */
import { resolve } from 'node:path';
import { KINDS } from '../../ingest/kinds/index.ts';
import { ImportFileError, importFile } from '../../ingest/pipeline.ts';
import {
  IMPORT_KIND_NAMES,
  type ImportKindName,
  type ImportProgress,
  type ImportReport,
} from '../../ingest/types.ts';
import { openDataDir } from '../../store/db.ts';
import { parseOptions } from '../args.ts';
import { cliAudit } from '../audit.ts';
import { type CliIo, type Command, EXIT, UsageError } from '../io.ts';
import { resolveDataDir } from './serve.ts';

/** Exit code of a run: failure beats rejected beats ok (docs/cli.md). */
export function exitCodeOf(reports: (ImportReport | null)[]): number {
  if (reports.some((r) => r === null)) return EXIT.failure;
  if (reports.some((r) => r!.status === 'rejected')) return EXIT.rejected;
  return EXIT.ok;
}

const fmtInt = (n: number) => n.toLocaleString('en-US').replace(/,/g, ' ');

/** The human-readable report of one file. */
export function formatReport(r: ImportReport): string {
  const lines: string[] = [];
  const dup = r.duplicates ? `, ${fmtInt(r.duplicates)} duplicates` : '';
  switch (r.status) {
    case 'imported':
      lines.push(`${r.file}: imported ${fmtInt(r.rowsStored)} rows${dup} as import #${r.importId}`);
      break;
    case 'partial':
      lines.push(
        `${r.file}: partly imported ${fmtInt(r.rowsStored)} of ${fmtInt(r.rowsRead)} rows${dup}; ${fmtInt(r.rowsRejected)} rejected rows listed below (import #${r.importId})`,
      );
      break;
    case 'unchanged':
      lines.push(`${r.file}: unchanged (same content as import #${r.importId}); nothing stored`);
      break;
    case 'rejected':
      lines.push(
        `${r.file}: rejected, nothing stored — ${fmtInt(r.issues.length)} issue${r.issues.length === 1 ? '' : 's'}${r.rowsRead ? ` in ${fmtInt(r.rowsRead)} rows read` : ''}`,
      );
      break;
  }
  for (const i of r.issues) {
    const where = i.line > 0 ? `${i.file}:${i.line}` : i.file;
    const col = i.column ? ` ${i.column}` : '';
    const val = i.value !== null && i.value !== '' ? ` "${i.value}"` : '';
    lines.push(`  ${where}:${col}${val} ${i.rule}`);
  }
  for (const f of r.flags) lines.push(`  flag ${f.code} (${fmtInt(f.count)}): ${f.detail}`);
  for (const n of r.notes) if (r.status !== 'unchanged') lines.push(`  note: ${n}`);
  return `${lines.join('\n')}\n`;
}

function progressBar(io: CliIo, file: string) {
  let last = 0;
  let shown = false;
  return {
    update(p: ImportProgress) {
      const t = Date.now();
      if (t - last < 100 && p.bytesRead < p.bytesTotal) return;
      last = t;
      shown = true;
      const frac = p.bytesTotal > 0 ? Math.min(1, p.bytesRead / p.bytesTotal) : 1;
      const width = 24;
      const fill = Math.round(frac * width);
      io.err(
        `\r${file} [${'#'.repeat(fill)}${'.'.repeat(width - fill)}] ${(frac * 100).toFixed(0).padStart(3)} %  ${(p.bytesRead / 1e6).toFixed(1)}/${(p.bytesTotal / 1e6).toFixed(1)} MB  ${fmtInt(p.rows)} rows\x1b[K`,
      );
    },
    clear() {
      if (shown) io.err('\r\x1b[K');
    },
  };
}

export const importCommand: Command = {
  name: 'import',
  summary: 'import data files (locations, counter samples, scans, …) into the database',
  usage: `voidcast import <kind> <file…> [--json] [--accept-valid-rows] [--data DIR]

  kinds: ${IMPORT_KIND_NAMES.join(', ')}
  --accept-valid-rows  store the valid rows of a file that has invalid ones (listed); still one transaction
  --json               print the reports as a JSON array instead of text
  --data DIR           data directory holding voidcast.db (default $VOIDCAST_DATA, else ./data)

  exit codes: 0 imported or unchanged, 3 a file was rejected, 2 usage, 1 a file could not be read`,
  async run(argv, io) {
    const { values, positionals } = parseOptions(
      argv,
      {
        json: { type: 'boolean' },
        'accept-valid-rows': { type: 'boolean' },
        data: { type: 'string' },
      },
      true,
    );
    const [kindName, ...files] = positionals;
    if (kindName === undefined) throw new UsageError('name the kind of file to import');
    if (!(IMPORT_KIND_NAMES as readonly string[]).includes(kindName)) {
      throw new UsageError(`unknown kind "${kindName}" (kinds: ${IMPORT_KIND_NAMES.join(', ')})`);
    }
    if (!KINDS.some((k) => k.name === kindName)) {
      throw new UsageError(`kind "${kindName}" cannot be imported by this build yet`);
    }
    if (files.length === 0) throw new UsageError('name at least one file to import');
    // An import that has to wait for another writer (the server, another CLI) says so and waits.
    const db = openDataDir(resolveDataDir(values.data, io), (m) => io.err(`voidcast import: ${m}\n`));
    const reports: (ImportReport | null)[] = [];
    try {
      for (const f of files) {
        const path = resolve(io.cwd, f);
        const bar = io.isTty && !values.json ? progressBar(io, f) : null;
        try {
          const r = await importFile(db, {
            kind: kindName as ImportKindName,
            path,
            displayName: f,
            acceptValidRows: values['accept-valid-rows'] === true,
            onProgress: bar ? (p) => bar.update(p) : undefined,
          });
          bar?.clear();
          reports.push(r);
          if (r.status === 'imported' || r.status === 'partial')
            cliAudit(db, 'import', f, {
              kind: r.kind,
              status: r.status,
              importId: r.importId,
              sha256: r.sha256,
              rowsStored: r.rowsStored,
            });
          if (!values.json) io.out(formatReport(r));
        } catch (e) {
          bar?.clear();
          if (!(e instanceof ImportFileError)) throw e;
          reports.push(null);
          io.err(`voidcast import: ${e.message}\n`);
        }
      }
    } finally {
      db.close();
    }
    if (values.json)
      io.out(
        `${JSON.stringify(
          reports.filter((r) => r !== null),
          null,
          2,
        )}\n`,
      );
    return exitCodeOf(reports);
  },
};
