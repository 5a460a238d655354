/**
 * A watched drop folder for counters that can only write files: every counter-samples file (`*.csv`)
 * that appears in the folder is imported, once it has stopped growing, with its valid rows kept,
 * then moved to `imported/` or `rejected/` beside a `<name>.report.json` holding its import report
 * (every rejected line with its line, column, value and rule). A file is never imported while it is
 * still being written: its size and modification time must be the same at two polls in a row.
 * Files are taken one at a time, oldest first; the audit trail names the drop folder as the actor.
 */
import { existsSync } from 'node:fs';
import { mkdir, readdir, rename, stat, writeFile } from 'node:fs/promises';
import { join } from 'node:path';
import { appendAudit } from '../store/audit.ts';
import type { Db } from '../store/db.ts';
import { runImport } from './import-worker.ts';

export const DROP_POLL_MS = 2000;

export interface DropFolder {
  stop: () => Promise<void>;
  /** One poll now (tests; the timer calls it too). */
  poll: () => Promise<void>;
}

async function freeName(dir: string, name: string): Promise<string> {
  if (!existsSync(join(dir, name))) return name;
  const stamp = new Date().toISOString().replace(/[:.]/g, '-');
  return `${stamp}-${name}`;
}

export function watchDropFolder(
  db: Db,
  dir: string,
  log: (line: string) => void,
  pollMs: number = DROP_POLL_MS,
): DropFolder {
  const seen = new Map<string, string>();
  let busy: Promise<void> | null = null;
  let stopped = false;

  const once = async () => {
    await mkdir(dir, { recursive: true });
    const entries = await readdir(dir, { withFileTypes: true });
    const candidates: { name: string; mtimeMs: number; sig: string }[] = [];
    for (const e of entries) {
      if (!e.isFile() || e.name.startsWith('.') || !/\.csv$/i.test(e.name)) continue;
      const st = await stat(join(dir, e.name)).catch(() => null);
      if (!st) continue;
      candidates.push({ name: e.name, mtimeMs: st.mtimeMs, sig: `${st.size}:${st.mtimeMs}` });
    }
    const present = new Set(candidates.map((c) => c.name));
    for (const k of seen.keys()) if (!present.has(k)) seen.delete(k);
    candidates.sort((a, b) => a.mtimeMs - b.mtimeMs);
    for (const c of candidates) {
      if (stopped) return;
      const before = seen.get(c.name);
      seen.set(c.name, c.sig);
      if (before !== c.sig) continue; // new or still growing: look again at the next poll
      seen.delete(c.name);
      const path = join(dir, c.name);
      let report: Awaited<ReturnType<typeof runImport>> | null = null;
      let error: string | null = null;
      try {
        report = await runImport(db, {
          kind: 'counter-samples',
          path,
          displayName: `drop folder: ${c.name}`,
          acceptValidRows: true,
        });
      } catch (e) {
        error = e instanceof Error ? e.message : String(e);
        log(
          `ERROR drop folder import of ${c.name}: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`,
        );
      }
      const ok = report !== null && report.status !== 'rejected';
      const to = join(dir, ok ? 'imported' : 'rejected');
      await mkdir(to, { recursive: true });
      const name = await freeName(to, c.name);
      await rename(path, join(to, name));
      await writeFile(join(to, `${name}.report.json`), `${JSON.stringify(report ?? { error }, null, 2)}\n`);
      if (report && (report.status === 'imported' || report.status === 'partial'))
        appendAudit(db, {
          atMs: Date.now(),
          actor: 'drop folder',
          userId: null,
          via: 'system',
          action: 'import',
          subject: c.name,
          detail: {
            kind: 'counter-samples',
            status: report.status,
            importId: report.importId,
            sha256: report.sha256,
            rowsStored: report.rowsStored,
            folder: dir,
          },
        });
      log(
        `drop folder: ${c.name} ${report ? `${report.status} (${report.rowsStored} rows stored, ${report.rowsRejected} rejected)` : 'failed'} → ${ok ? 'imported' : 'rejected'}/${name}`,
      );
    }
  };

  const poll = () => {
    busy ??= once()
      .catch((e) => log(`ERROR drop folder ${dir}: ${e instanceof Error ? e.message : String(e)}`))
      .finally(() => {
        busy = null;
      });
    return busy;
  };
  const timer = setInterval(() => void poll(), pollMs);
  timer.unref();
  return {
    poll,
    stop: async () => {
      stopped = true;
      clearInterval(timer);
      await busy;
    },
  };
}
