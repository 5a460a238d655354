/**
 * The Imports page.
 *
 *   GET  /imports                          the form, the history (?history=N page, ?historyKind=K filter)
 *   GET  /imports/history                  one page of the history (htmx swaps it; plain: 303 to /imports)
 *   POST /imports                          multipart upload → a background job (303 to its page; htmx: its partial)
 *   GET  /imports/jobs/:id                 the job: progress while it runs, then the validation report
 *   GET  /imports/jobs/:id/files/:n/issues one page of a file's rejected rows (htmx swaps the table)
 *   GET  /imports/history/:id              a stored import's report, from the database
 *
 * An upload is streamed to a temporary directory (never held in memory), limited in size
 * (src/web/upload.ts), checked for its CSRF token before any file byte is written, then imported
 * file by file with importFile (in a worker thread, src/web/import-worker.ts). Refusals are answered
 * with their HTTP status (400, 403, 413, 422) and an explanation as HTML; the page tells htmx to swap
 * those (views/partials/import-form.tsx).
 */
import { rmSync } from 'node:fs';
import { mkdir, mkdtemp, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { Context, Hono } from 'hono';
import { ImportsPage, type ImportsPageProps } from '../../../views/pages/imports.tsx';
import { ImportErrors } from '../../../views/partials/import-form.tsx';
import {
  type HistoryPaging,
  type HistoryRowView,
  ImportHistory,
} from '../../../views/partials/import-history.tsx';
import { ImportJob, type JobFileView, type JobView } from '../../../views/partials/import-job.tsx';
import {
  ImportIssues,
  ImportReport,
  jobIssueLinks,
  type ReportView,
} from '../../../views/partials/import-report.tsx';
import { getKind } from '../../ingest/kinds/index.ts';
import { IMPORT_KIND_NAMES, type ImportKindName, type ImportReport as Report } from '../../ingest/types.ts';
import { getStoredImport, listImportHistory } from '../../store/views-imports.ts';
import { auditor } from '../auth/audit.ts';
import type { AppContext } from '../context.ts';
import { CSRF_FIELD, csrfDeferred, csrfField, csrfHeaders, forbidden, verifyCsrfToken } from '../csrf.ts';
import { runImport } from '../import-worker.ts';
import { createJobRegistry, DEFAULT_JOB_TTL_MS, type Job } from '../jobs.ts';
import { keptKeyPart } from '../page-cache.ts';
import { pathWholeNumber, queryPage, wholeNumberValue } from '../params.ts';
import { isFragmentRequest, renderPage } from '../render.ts';
import { formatBytes, multipartBoundary, readMultipart, UploadError, uploadLimitBytes } from '../upload.ts';

/** Where uploads wait for their import, under the data directory (removed once imported). */
export const UPLOAD_DIR = 'uploads-in-progress';

/** How many imports one page of the history shows. */
const HISTORY_ROWS = 50;

/** Which history page a request asks for, or why that page cannot be shown (a 400). */
type HistoryRequest = { page: number; kind: ImportKindName | null } | { error: string };

/**
 * `?history=N` (a whole number from 1, default 1) and `?historyKind=K` (a kind voidcast imports,
 * empty for every kind), checked against how many pages there are.
 */
function historyRequest(db: AppContext['db'], q: Record<string, string>): HistoryRequest {
  const kindText = (q.historyKind ?? '').trim();
  if (kindText !== '' && !isKind(kindText))
    return {
      error: `“${kindText}” is not a kind of import; choose one of: ${IMPORT_KIND_NAMES.join(', ')}.`,
    };
  const kind = kindText === '' ? null : (kindText as ImportKindName);
  const pageText = (q.history ?? '').trim();
  if (pageText === '') return { page: 1, kind };
  if (!/^\d+$/.test(pageText) || Number(pageText) < 1)
    return { error: `History page “${pageText}” is not a page number: pages are whole numbers from 1.` };
  const page = Number(pageText);
  const total = listImportHistory(db, { limit: 1, kind }).total;
  const pages = Math.max(1, Math.ceil(total / HISTORY_ROWS));
  if (page > pages)
    return {
      error: `History page ${pageText} does not exist: the ${kind ? `${kind} ` : ''}history has ${pages} page${pages === 1 ? '' : 's'} of ${HISTORY_ROWS} imports.`,
    };
  return { page, kind };
}

interface FileProgress extends JobFileView {
  report: Report | null;
}
interface ImportJobProgress {
  files: FileProgress[];
}
type ImportJobRecord = Job<ImportJobProgress, null>;

function jobView(job: ImportJobRecord): JobView {
  return {
    id: job.id,
    state: job.state,
    files: job.progress.files,
    startedAt: new Date(job.createdAt).toISOString(),
  };
}

function historyView(
  db: AppContext['db'],
  at: { page: number; kind: ImportKindName | null } = { page: 1, kind: null },
): { rows: HistoryRowView[]; total: number; paging: HistoryPaging } {
  const { rows, total } = listImportHistory(db, {
    limit: HISTORY_ROWS,
    offset: (at.page - 1) * HISTORY_ROWS,
    kind: at.kind,
  });
  return {
    total,
    paging: { page: at.page, perPage: HISTORY_ROWS, kind: at.kind, kinds: IMPORT_KIND_NAMES },
    rows: rows.map((r) => ({
      id: r.id,
      importedAt: r.importedAt,
      file: r.fileName,
      kind: r.kind,
      sha256: r.sha256,
      status: r.status,
      rowsRead: r.rowsRead,
      rowsStored: r.rowsStored,
      rowsRejected: r.rowsRejected,
      duplicates: r.duplicates,
      flags: r.flags,
    })),
  };
}

function kindOptions() {
  return IMPORT_KIND_NAMES.map((name) => {
    const kind = getKind(name);
    return { name, summary: kind?.summary ?? '', available: kind !== undefined };
  });
}

/** The kind preselected in a fresh form: the first one this build can import. */
function defaultKind(): string {
  return IMPORT_KIND_NAMES.find((k) => getKind(k) !== undefined) ?? IMPORT_KIND_NAMES[0]!;
}

const isKind = (v: string | undefined): v is ImportKindName =>
  v !== undefined && (IMPORT_KIND_NAMES as readonly string[]).includes(v);

const truthy = (v: string | undefined) => v === 'on' || v === '1' || v === 'true' || v === 'yes';

export function register(app: Hono, ctx: AppContext): void {
  // Uploads left by a server that stopped mid-import belong to no job any more.
  rmSync(join(ctx.dataDir, UPLOAD_DIR), { recursive: true, force: true });
  const jobs = createJobRegistry<ImportJobProgress, null>({ log: ctx.log, ttlMs: DEFAULT_JOB_TTL_MS });

  const page = (c: Context, extra: Partial<ImportsPageProps>, status: 200 | 400 | 404 | 413 | 422 = 200) => {
    const limit = uploadLimitBytes(ctx.db);
    const asked = historyRequest(ctx.db, c.req.query());
    const history = historyView(ctx.db, 'error' in asked ? undefined : asked);
    const props: ImportsPageProps = {
      form: {
        kinds: kindOptions(),
        values: { kind: defaultKind(), acceptValidRows: false },
        csrf: csrfField(c),
        csrfHeaders: csrfHeaders(c),
        limitBytes: limit,
        limitText: formatBytes(limit),
      },
      history: history.rows,
      historyTotal: history.total,
      historyPaging: history.paging,
      ...extra,
    };
    // A history page that does not exist: the page (history from its first page) says why, as a 400.
    if ('error' in asked && status === 200) {
      props.historyError = asked.error;
      status = 400;
    }
    return renderPage(c, ctx, { title: 'Imports', active: '/imports', body: ImportsPage(props) }, status);
  };

  /** A refused upload: the messages in place (htmx) or on the page, with the form as it was. */
  const refuse = (
    c: Context,
    status: 400 | 413 | 422,
    heading: string,
    errors: string[],
    values?: { kind: string; acceptValidRows: boolean },
  ) => {
    if (isFragmentRequest(c)) return c.html(String(ImportErrors({ heading, errors })), status);
    const limit = uploadLimitBytes(ctx.db);
    return page(
      c,
      {
        errors: { heading, errors },
        form: {
          kinds: kindOptions(),
          values: values ?? { kind: defaultKind(), acceptValidRows: false },
          csrf: csrfField(c),
          csrfHeaders: csrfHeaders(c),
          limitBytes: limit,
          limitText: formatBytes(limit),
        },
      },
      status,
    );
  };

  // Jobs still running (e.g. started in another tab) are listed so they can be followed.
  const activeJobs = () => jobs.list().filter((j) => j.state === 'queued' || j.state === 'running');
  // The kept page (src/web/page-cache.ts) is kept per set of running jobs: they change without a write.
  keptKeyPart(ctx, '/imports', () =>
    activeJobs()
      .map((j) => j.id)
      .join(','),
  );
  app.get('/imports', (c) => {
    const active = activeJobs();
    if (active.length === 0) return page(c, {});
    return page(c, {
      notice: (
        <div class="vc-note" role="status">
          <p>
            {active.length === 1 ? 'An import is' : `${active.length} imports are`} still running:{' '}
            {active.map((j, i) => (
              <>
                {i > 0 ? ', ' : ''}
                <a href={`/imports/jobs/${j.id}`}>{j.progress.files.map((f) => f.name).join(', ')}</a>
              </>
            ))}
            .
          </p>
        </div>
      ),
    });
  });

  app.post('/imports', async (c) => {
    const limit = uploadLimitBytes(ctx.db);
    const tooLarge = (size: string) => [
      `The upload${size} is larger than the limit of ${formatBytes(limit)} per upload. Nothing was stored.`,
      'Split the file into smaller ones, or ask the operator to raise the limit (VOIDCAST_UPLOAD_LIMIT or the web.upload_limit setting).',
    ];
    const boundary = multipartBoundary(c.req.header('content-type'));
    if (!boundary)
      return refuse(c, 400, 'The upload was refused', [
        'The files must be sent as a form upload (multipart/form-data), as the form on this page does.',
      ]);
    const declared = Number(c.req.header('content-length') ?? Number.NaN);
    // Refuse before reading a byte when the declared size is already too large.
    if (Number.isFinite(declared) && declared > limit)
      return refuse(c, 413, 'The upload is too large', tooLarge(` (${formatBytes(declared)})`));

    const deferred = csrfDeferred(c);
    // Uploads wait in the data directory (same disk as the database, a place the operator chose).
    await mkdir(join(ctx.dataDir, UPLOAD_DIR), { recursive: true });
    const dir = await mkdtemp(join(ctx.dataDir, UPLOAD_DIR, 'upload-'));
    let parsed: Awaited<ReturnType<typeof readMultipart>>;
    try {
      parsed = await readMultipart(c.req.raw.body, {
        boundary,
        limitBytes: limit,
        dir,
        beforeFile: (fields) => {
          if (deferred && !verifyCsrfToken(c, fields.get(CSRF_FIELD)?.[0]))
            throw new UploadError('forbidden', 'The form token was missing or did not match.');
        },
      });
    } catch (err) {
      await rm(dir, { recursive: true, force: true });
      if (!(err instanceof UploadError)) throw err;
      if (err.code === 'forbidden')
        return forbidden(c, ctx.version, `${err.message} Reload the page and send the form again.`);
      if (err.code === 'too-large') return refuse(c, 413, 'The upload is too large', tooLarge(''));
      return refuse(c, 400, 'The upload was refused', [err.message]);
    }
    if (deferred && !verifyCsrfToken(c, parsed.fields.get(CSRF_FIELD)?.[0])) {
      await rm(dir, { recursive: true, force: true });
      return forbidden(
        c,
        ctx.version,
        'The form token was missing or did not match. Reload the page and send the form again.',
      );
    }

    const kindText = parsed.fields.get('kind')?.[0]?.trim();
    const acceptValidRows = truthy(parsed.fields.get('acceptValidRows')?.[0]);
    const files = parsed.files.filter((f) => f.field === 'files');
    const errors: string[] = [];
    if (!isKind(kindText))
      errors.push(
        kindText
          ? `“${kindText}” is not a kind of file voidcast imports; choose one of: ${IMPORT_KIND_NAMES.join(', ')}.`
          : `Choose the kind of file: one of ${IMPORT_KIND_NAMES.join(', ')}.`,
      );
    else if (!getKind(kindText)) errors.push(`This build of voidcast cannot import ${kindText} files yet.`);
    if (files.length === 0) errors.push('Choose at least one file to import.');
    if (errors.length > 0 || !isKind(kindText)) {
      await rm(dir, { recursive: true, force: true });
      return refuse(c, 422, 'Nothing was imported', errors, {
        kind: kindText ?? defaultKind(),
        acceptValidRows,
      });
    }
    const kind = kindText;
    // Each file's outcome goes to the audit trail under the account that sent it.
    const record = auditor(c, ctx);

    const job = jobs.start(
      {
        files: files.map((f) => ({
          name: f.filename === '' ? 'unnamed file' : f.filename,
          kind,
          state: 'queued',
          bytesRead: 0,
          bytesTotal: f.size,
          rows: 0,
          report: null,
          error: null,
          waitingSince: null,
        })),
      },
      async (_update, self) => {
        try {
          for (const [i, upload] of files.entries()) {
            const fp = self.progress.files[i]!;
            fp.state = 'running';
            try {
              fp.report = await runImport(
                ctx.db,
                { kind, path: upload.path, displayName: fp.name, acceptValidRows },
                (p) => {
                  fp.bytesRead = p.bytesRead;
                  fp.bytesTotal = p.bytesTotal;
                  fp.rows = p.rows;
                },
                (wait) => {
                  // Another process holds the write lock (a CLI import, a second server): the job
                  // page says so, and since when, until the import goes ahead.
                  fp.waitingSince = wait ? new Date(wait.sinceMs).toISOString() : null;
                  if (wait) ctx.log(`import of ${fp.name}: ${wait.message}`);
                },
              );
              fp.waitingSince = null;
              fp.rows = fp.report.rowsRead;
              fp.bytesRead = fp.bytesTotal;
              fp.state = 'done';
              record('import', fp.name, {
                kind,
                status: fp.report.status,
                importId: fp.report.importId,
                sha256: fp.report.sha256,
                rowsStored: fp.report.rowsStored,
              });
            } catch (err) {
              ctx.log(
                `ERROR import of an upload (${kind}): ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`,
              );
              fp.state = 'failed';
              fp.error =
                'The import of this file stopped with an internal error; the details are in the server log.';
            } finally {
              await rm(upload.path, { force: true });
            }
          }
        } finally {
          await rm(dir, { recursive: true, force: true });
        }
        return null;
      },
    );

    const url = `/imports/jobs/${job.id}`;
    if (isFragmentRequest(c)) {
      c.header('HX-Push-Url', url);
      return c.html(String(ImportJob({ job: jobView(job) })));
    }
    return c.redirect(url, 303);
  });

  const missingJob = (c: Context) => {
    const detail = `This import job is no longer held: finished jobs are kept for ${Math.round(DEFAULT_JOB_TTL_MS / 60_000)} minutes, and none survive a restart. Stored imports are in the history below.`;
    if (isFragmentRequest(c))
      return c.html(String(ImportErrors({ heading: 'Job not found', errors: [detail] })), 404);
    return page(c, { errors: { heading: 'Job not found', errors: [detail] } }, 404);
  };

  app.get('/imports/history', (c) => {
    if (!isFragmentRequest(c)) {
      const q = new URL(c.req.url).search;
      return c.redirect(`/imports${q}#import-history`, 303);
    }
    const asked = historyRequest(ctx.db, c.req.query());
    if ('error' in asked)
      return c.html(String(ImportHistory({ ...historyView(ctx.db), error: asked.error })), 400);
    return c.html(String(ImportHistory(historyView(ctx.db, asked))));
  });

  app.get('/imports/jobs/:id', (c) => {
    const job = jobs.get(c.req.param('id'));
    if (!job) return missingJob(c);
    const view = jobView(job);
    const fileN = wholeNumberValue(
      'file',
      c.req.query('file'),
      0,
      Math.max(0, job.progress.files.length - 1),
    );
    const pageN = queryPage(c);
    const pager = fileN !== null ? { file: fileN, page: pageN } : undefined;
    if (isFragmentRequest(c)) {
      const body = String(ImportJob({ job: view, page: pager }));
      const done = job.state === 'done' || job.state === 'failed';
      // A finished job also refreshes the history (out of band).
      const history = done ? String(ImportHistory({ ...historyView(ctx.db), oob: true })) : '';
      return c.html(body + history);
    }
    return page(c, { job: view, page: pager });
  });

  app.get('/imports/jobs/:id/files/:n/issues', (c) => {
    const id = c.req.param('id');
    const job = jobs.get(id);
    if (!job) return missingJob(c);
    const n = pathWholeNumber(c, 'n') ?? -1;
    const file = job.progress.files[n];
    const pageN = queryPage(c);
    if (!file?.report) return missingJob(c);
    if (isFragmentRequest(c))
      return c.html(
        String(
          ImportIssues({ issues: file.report.issues, index: n, links: jobIssueLinks(id, n), page: pageN }),
        ),
      );
    return c.redirect(`/imports/jobs/${encodeURIComponent(id)}?file=${n}&page=${pageN}#issues-${n}`, 303);
  });

  const storedReport = (id: number): ReportView | null => {
    const stored = Number.isSafeInteger(id) ? getStoredImport(ctx.db, id) : null;
    if (!stored) return null;
    return {
      file: stored.fileName,
      kind: stored.kind,
      sha256: stored.sha256,
      status: stored.status,
      rowsRead: stored.rowsRead ?? 0,
      rowsStored: stored.rowsStored,
      rowsRejected: stored.rowsRejected ?? 0,
      duplicates: stored.duplicates ?? 0,
      issues: stored.issues,
      flags: stored.flags,
      notes: stored.notes,
    };
  };
  const storedLinks = (id: number) => (p: number) => ({
    href: `/imports/history/${id}?page=${p}#issues-0`,
    hxGet: `/imports/history/${id}/issues?page=${p}`,
  });

  app.get('/imports/history/:id', (c) => {
    const id = pathWholeNumber(c, 'id') ?? -1;
    const report = storedReport(id);
    if (!report) {
      const errors = {
        heading: 'Import not found',
        errors: [`There is no stored import #${c.req.param('id')}.`],
      };
      return page(c, { errors }, 404);
    }
    const pageN = queryPage(c);
    return page(c, {
      notice: (
        <div class="vc-job vc-job-done">
          <h2>Stored import #{id}</h2>
          <ImportReport report={report} index={0} links={storedLinks(id)} page={pageN} />
        </div>
      ),
    });
  });

  app.get('/imports/history/:id/issues', (c) => {
    const id = pathWholeNumber(c, 'id') ?? -1;
    const report = storedReport(id);
    const pageN = queryPage(c);
    if (!report)
      return c.html(
        String(
          ImportErrors({
            heading: 'Import not found',
            errors: [`There is no stored import #${c.req.param('id')}.`],
          }),
        ),
        404,
      );
    if (isFragmentRequest(c))
      return c.html(
        String(ImportIssues({ issues: report.issues, index: 0, links: storedLinks(id), page: pageN })),
      );
    return c.redirect(`/imports/history/${id}?page=${pageN}#issues-0`, 303);
  });
}
