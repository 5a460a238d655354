/**
 * Worker threads that open their own connection to the data file: the web server's imports
 * (src/web/import-worker.ts) and a lot's second assessment thread (src/engine/parallel.ts). It
 * lives with the store because what such a thread shares with its parent is the database file.
 *
 * The sources run as TypeScript through tsx (as bin/voidcast.js does for the main thread), so a
 * thread starts from a small CommonJS bootstrap that registers tsx's loader and then imports the
 * module that asked for it; that module sees `workerData` and runs its thread side.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { Worker } from 'node:worker_threads';
import type { Db } from './db.ts';

const require = createRequire(import.meta.url);

const BOOTSTRAP = `
const { workerData } = require('node:worker_threads');
import(workerData.tsxApi).then((tsx) => { tsx.register(); return import(workerData.entry); });
`;

/** File URL of tsx's ESM register API (package export "./esm/api", import condition). */
function tsxApiUrl(): string {
  const pkgPath = require.resolve('tsx/package.json');
  const pkg = JSON.parse(readFileSync(pkgPath, 'utf8')) as {
    exports: Record<string, string | { import?: { default?: string } }>;
  };
  const entry = pkg.exports['./esm/api'];
  const rel = typeof entry === 'string' ? entry : entry?.import?.default;
  if (!rel) throw new Error('tsx does not export ./esm/api');
  return pathToFileURL(join(dirname(pkgPath), rel)).href;
}

/**
 * Starts a thread that imports the module at `entryUrl` (its import.meta.url) with `data` as its
 * workerData (plus the two bootstrap fields `tsxApi` and `entry`).
 */
export function startModuleWorker(entryUrl: string, data: Record<string, unknown>): Worker {
  return new Worker(BOOTSTRAP, {
    eval: true,
    workerData: { ...data, tsxApi: tsxApiUrl(), entry: entryUrl },
  });
}

/** The database's file, or null when it lives in memory (then there is nothing to share). */
export function databaseFile(db: Db): string | null {
  return db.memory || db.name === '' || db.name === ':memory:' ? null : db.name;
}
