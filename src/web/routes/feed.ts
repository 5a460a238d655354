/**
 * The live counter feed: counters (or the gateway in front of them) push their samples as they are
 * taken, instead of leaving files.
 *
 *   POST /api/feed/counter-samples   body: text/csv in the counter-samples format (docs/formats.md)
 *
 * Authenticated like every request (with accounts: an API token of scope import or signoff, or an
 * engineer's session); the role it needs is engineer. The body is streamed to a temporary file —
 * read only as fast as the disk takes it, and never beyond the upload limit (413) — then imported
 * through the same pipeline as a file, with the valid rows kept: each rejected line comes back with
 * its line, column, value and rule, exactly as in a file import.
 *
 * Idempotent per sample: a sample is (counter, location, start, duration); one already stored is
 * counted as a duplicate and not stored again, so a gateway that re-sends after a lost answer does
 * no harm, and a batch sent twice byte for byte is `unchanged`.
 *
 * Back-pressure: batches are imported one at a time, in arrival order; while MAX_WAITING batches
 * wait, a new one is refused before its body is read (429 with Retry-After) so the sender slows down.
 */
import { createWriteStream } from 'node:fs';
import { mkdir, mkdtemp, rm } from 'node:fs/promises';
import { join } from 'node:path';
import { Readable, Transform } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import type { ReadableStream as WebReadableStream } from 'node:stream/web';
import type { Hono } from 'hono';
import type { ImportReport } from '../../ingest/types.ts';
import { actorName, auditor } from '../auth/audit.ts';
import type { AppContext } from '../context.ts';
import { runImport } from '../import-worker.ts';
import { formatBytes, uploadLimitBytes } from '../upload.ts';

export const MAX_WAITING = 4;
const FEED_DIR = 'feed';

class TooLarge extends Error {}

/** What the sender gets back: the import report, issues and all. */
function answer(r: ImportReport) {
  return {
    status: r.status,
    importId: r.importId,
    rowsRead: r.rowsRead,
    rowsStored: r.rowsStored,
    duplicates: r.duplicates,
    rowsRejected: r.rowsRejected,
    issues: r.issues.map((i) => ({ line: i.line, column: i.column, value: i.value, rule: i.rule })),
    flags: r.flags,
  };
}

export function register(app: Hono, ctx: AppContext): void {
  let queue: Promise<unknown> = Promise.resolve();
  let waiting = 0;

  app.post('/api/feed/counter-samples', async (c) => {
    const type = (c.req.header('content-type') ?? '').split(';')[0]!.trim().toLowerCase();
    if (type !== 'text/csv')
      return c.json(
        {
          error: 'unsupported media type',
          detail: 'Send the samples as text/csv in the counter-samples format.',
        },
        415,
      );
    if (waiting >= MAX_WAITING)
      return c.json(
        {
          error: 'busy',
          detail: `${waiting} batches are waiting to be imported; send this one again shortly.`,
        },
        429,
        { 'Retry-After': '5' },
      );
    const limit = uploadLimitBytes(ctx.db);
    const declared = Number(c.req.header('content-length') ?? Number.NaN);
    if (Number.isFinite(declared) && declared > limit)
      return c.json({ error: 'too large', detail: `A batch may have at most ${formatBytes(limit)}.` }, 413);
    const body = c.req.raw.body;
    if (!body) return c.json({ error: 'bad request', detail: 'The body is empty: send the samples.' }, 400);

    waiting++;
    await mkdir(join(ctx.dataDir, FEED_DIR), { recursive: true });
    const dir = await mkdtemp(join(ctx.dataDir, FEED_DIR, 'batch-'));
    try {
      const path = join(dir, 'samples.csv');
      let bytes = 0;
      const limiter = new Transform({
        transform(chunk: Buffer, _enc, done) {
          bytes += chunk.length;
          if (bytes > limit) done(new TooLarge());
          else done(null, chunk);
        },
      });
      try {
        // pipeline() reads the request only as fast as the file takes it (stream back-pressure).
        await pipeline(
          Readable.fromWeb(body as WebReadableStream<Uint8Array>),
          limiter,
          createWriteStream(path),
        );
      } catch (e) {
        if (e instanceof TooLarge)
          return c.json(
            { error: 'too large', detail: `A batch may have at most ${formatBytes(limit)}.` },
            413,
          );
        throw e;
      }
      const record = auditor(c, ctx);
      const displayName = `feed from ${actorName(c)} at ${new Date().toISOString()}`;
      const run = queue.then(() =>
        runImport(ctx.db, { kind: 'counter-samples', path, displayName, acceptValidRows: true }),
      );
      queue = run.catch(() => undefined);
      const report = await run;
      if (report.status === 'imported' || report.status === 'partial')
        record('import', displayName, {
          kind: 'counter-samples',
          status: report.status,
          importId: report.importId,
          sha256: report.sha256,
          rowsStored: report.rowsStored,
          duplicates: report.duplicates,
        });
      return c.json(answer(report), report.status === 'rejected' ? 422 : 200);
    } finally {
      waiting--;
      await rm(dir, { recursive: true, force: true });
    }
  });
}
