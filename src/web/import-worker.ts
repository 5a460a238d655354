/**
 * Runs one importFile call off the server's event loop.
 *
 * The ingest pipeline writes a file synchronously inside one better-sqlite3 transaction (a
 * transaction cannot span an `await`), so a large file would hold the web server's event loop for
 * as long as it takes: no page, no progress poll, no health check would be answered. For a
 * database in a file, the import therefore runs in a worker thread with its own connection (SQLite
 * in WAL mode lets the server's connection keep reading meanwhile) and posts its progress back.
 * An in-memory database (tests) cannot be shared between connections: there the import runs in
 * this thread.
 *
 * The worker is started by src/store/worker-thread.ts and loads this module, which sees `workerData`.
 */
import { isMainThread, parentPort, workerData } from 'node:worker_threads';
import { importFile } from '../ingest/pipeline.ts';
import type { ImportOptions, ImportProgress, ImportReport } from '../ingest/types.ts';
import { type Db, openDatabase } from '../store/db.ts';
import { databaseFile, startModuleWorker } from '../store/worker-thread.ts';
import { type WriterWait, watchWriterWait } from '../store/writer.ts';

export type ImportRequest = Omit<ImportOptions, 'onProgress' | 'now'>;

interface WorkerInput {
  voidcastImportWorker: true;
  dbFile: string;
  request: ImportRequest;
}

type WorkerMessage =
  | { type: 'progress'; progress: ImportProgress }
  | { type: 'wait'; wait: WriterWait | null }
  | { type: 'done'; report: ImportReport }
  | { type: 'error'; message: string; stack: string | null };

/**
 * Imports one file: in a worker thread when the database is a file, else in this thread. Resolves
 * with the report; rejects when importFile throws (I/O failure, internal error) or the worker dies.
 * `onWait` hears when the import waits for another process writing to the database (the wait, then
 * null once it goes ahead; src/store/writer.ts).
 */
export function runImport(
  db: Db,
  request: ImportRequest,
  onProgress?: (p: ImportProgress) => void,
  onWait?: (wait: WriterWait | null) => void,
): Promise<ImportReport> {
  const file = databaseFile(db);
  if (file === null) return importFile(db, { ...request, onProgress });
  return new Promise<ImportReport>((resolve, reject) => {
    const input: WorkerInput = { voidcastImportWorker: true, dbFile: file, request };
    const worker = startModuleWorker(import.meta.url, { ...input });
    let settled = false;
    worker.on('message', (m: WorkerMessage) => {
      if (m.type === 'progress') onProgress?.(m.progress);
      else if (m.type === 'wait') onWait?.(m.wait);
      else if (m.type === 'done') {
        settled = true;
        resolve(m.report);
      } else {
        settled = true;
        const err = new Error(m.message);
        if (m.stack) err.stack = m.stack;
        reject(err);
      }
    });
    worker.once('error', (e) => {
      if (!settled) reject(e);
      settled = true;
    });
    worker.once('exit', (code) => {
      if (!settled) reject(new Error(`the import worker exited with code ${code} before it reported`));
      settled = true;
    });
  });
}

async function workerMain(input: WorkerInput): Promise<void> {
  const port = parentPort!;
  const db = openDatabase(input.dbFile);
  watchWriterWait(db, (wait) => port.postMessage({ type: 'wait', wait } satisfies WorkerMessage));
  try {
    const report = await importFile(db, {
      ...input.request,
      onProgress: (progress) => port.postMessage({ type: 'progress', progress } satisfies WorkerMessage),
    });
    port.postMessage({ type: 'done', report } satisfies WorkerMessage);
  } catch (e) {
    const err = e instanceof Error ? e : new Error(String(e));
    port.postMessage({
      type: 'error',
      message: err.message,
      stack: err.stack ?? null,
    } satisfies WorkerMessage);
  } finally {
    db.close();
  }
}

if (!isMainThread && (workerData as Partial<WorkerInput> | null)?.voidcastImportWorker === true) {
  void workerMain(workerData as WorkerInput);
}
