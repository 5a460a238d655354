/**
 * Uploads: the size limit and a streaming multipart/form-data reader that writes each file part
 * straight to a temporary file, so a large upload never sits in memory.
 *
 * multipart/form-data is defined by RFC 7578 on top of the MIME multipart syntax of RFC 2046
 * §5.1.1 (delimiter = CRLF "--" boundary; close delimiter = delimiter "--"; optional transport
 * padding before the CRLF that ends a delimiter line). Browsers follow the WHATWG HTML
 * "multipart/form-data encoding algorithm", which writes `"` in a file name as `%22` and CR/LF as
 * `%0D`/`%0A`; this reader turns `%22` back into `"` and drops control characters, nothing else.
 *
 * Names from the request (field names, file names) are data: they are returned as strings and
 * never used to build a path. Temporary files are named by their position only.
 */
import { open, rm } from 'node:fs/promises';
import { join } from 'node:path';
import type { Db } from '../store/db.ts';
import { getSetting } from '../store/settings.ts';

/** Default limit of one upload request (all its files together): 512 MiB. */
export const DEFAULT_UPLOAD_LIMIT_BYTES = 512 * 1024 * 1024;
/** The settings key that overrides the default for an installation (a byte size such as "1 GiB"). */
export const UPLOAD_LIMIT_SETTING = 'web.upload_limit';
/** The environment variable that overrides both (same syntax). */
export const UPLOAD_LIMIT_ENV = 'VOIDCAST_UPLOAD_LIMIT';

/** Why an upload was refused: `too-large` → 413, the others → 400. */
export class UploadError extends Error {
  constructor(
    readonly code: 'too-large' | 'malformed' | 'not-multipart' | 'refused' | 'forbidden',
    message: string,
  ) {
    super(message);
    this.name = 'UploadError';
  }
}

const UNITS: Record<string, number> = {
  b: 1,
  kb: 1e3,
  mb: 1e6,
  gb: 1e9,
  tb: 1e12,
  kib: 1024,
  mib: 1024 ** 2,
  gib: 1024 ** 3,
  tib: 1024 ** 4,
};

/**
 * Parses a byte size: a whole number of bytes ("1048576") or a number with a unit, decimal
 * (kB, MB, GB, TB = 10³ⁿ, SI prefixes) or binary (KiB, MiB, GiB, TiB = 2¹⁰ⁿ, IEC 80000-13).
 * Case and a space between number and unit do not matter. Returns null for anything else
 * (empty, negative, zero, NaN, Infinity, unknown unit, fractional bytes).
 *
 * @example parseByteSize('512 MiB') // 536870912
 */
export function parseByteSize(text: string): number | null {
  const m = /^\s*(\d+(?:\.\d+)?)\s*([a-z]*)\s*$/i.exec(text);
  if (!m) return null;
  const unit = (m[2] ?? '').toLowerCase() || 'b';
  const factor = UNITS[unit];
  if (factor === undefined) return null;
  const bytes = Number(m[1]) * factor;
  if (!Number.isFinite(bytes) || bytes < 1 || !Number.isSafeInteger(Math.round(bytes))) return null;
  if (factor === 1 && !Number.isInteger(bytes)) return null;
  return Math.round(bytes);
}

/** Formats a byte count for people, in binary units (IEC 80000-13): "512 MiB", "1.5 KiB", "17 bytes". */
export function formatBytes(bytes: number): string {
  if (!Number.isFinite(bytes) || bytes < 0) return '—';
  if (bytes < 1024) return `${bytes} ${bytes === 1 ? 'byte' : 'bytes'}`;
  const units = ['KiB', 'MiB', 'GiB', 'TiB'];
  let v = bytes / 1024;
  let i = 0;
  while (v >= 1024 && i < units.length - 1) {
    v /= 1024;
    i++;
  }
  const digits = v >= 100 || Number.isInteger(v) ? 0 : 1;
  return `${v.toFixed(digits).replace(/\.0$/, '')} ${units[i]}`;
}

/**
 * The upload limit in force: $VOIDCAST_UPLOAD_LIMIT, else the installation's setting
 * `web.upload_limit`, else 512 MiB. An unreadable value falls through to the next source.
 */
export function uploadLimitBytes(db: Db, env: Record<string, string | undefined> = process.env): number {
  const fromEnv = env[UPLOAD_LIMIT_ENV];
  if (fromEnv !== undefined && fromEnv.trim() !== '') {
    const v = parseByteSize(fromEnv);
    if (v !== null) return v;
  }
  let fromDb: string | undefined;
  try {
    fromDb = getSetting(db, UPLOAD_LIMIT_SETTING);
  } catch {
    fromDb = undefined;
  }
  if (fromDb !== undefined) {
    const v = parseByteSize(fromDb);
    if (v !== null) return v;
  }
  return DEFAULT_UPLOAD_LIMIT_BYTES;
}

/**
 * The boundary of a multipart/form-data Content-Type, or null when the type is something else
 * or the boundary breaks RFC 2046 §5.1.1 (1–70 characters, no trailing space).
 */
export function multipartBoundary(contentType: string | undefined | null): string | null {
  if (!contentType) return null;
  const [type, ...params] = splitParams(contentType);
  if (type?.toLowerCase() !== 'multipart/form-data') return null;
  for (const p of params) {
    const eq = p.indexOf('=');
    if (eq < 0) continue;
    if (p.slice(0, eq).trim().toLowerCase() !== 'boundary') continue;
    const b = unquote(p.slice(eq + 1).trim());
    if (b.length < 1 || b.length > 70 || b.endsWith(' ')) return null;
    if (!/^[0-9A-Za-z'()+_,\-./:=? ]+$/.test(b)) return null;
    return b;
  }
  return null;
}

export interface UploadedFile {
  /** The form field it came in. */
  field: string;
  /** The file name the browser sent (user data: display it escaped, never use it as a path). */
  filename: string;
  contentType: string;
  /** Where its bytes are now. */
  path: string;
  size: number;
}

export interface MultipartResult {
  fields: Map<string, string[]>;
  files: UploadedFile[];
  /** Bytes of the request body read. */
  bytes: number;
}

export interface MultipartOptions {
  boundary: string;
  /** Bytes of the whole body allowed; one more is `too-large`. */
  limitBytes: number;
  /** An existing directory for the file parts. */
  dir: string;
  /** Largest text field (default 64 KiB). */
  maxFieldBytes?: number;
  /** Most parts in one body (default 1000). */
  maxParts?: number;
  /** Largest header block of one part (default 16 KiB). */
  maxHeaderBytes?: number;
  /**
   * Called before the first byte of each file part is written, with the fields read so far.
   * Throw (an UploadError) to refuse the upload — e.g. a CSRF token that had to come first.
   */
  beforeFile?: (fields: Map<string, string[]>) => void;
}

const CRLF = Buffer.from('\r\n');
const HEADER_END = Buffer.from('\r\n\r\n');

type Part =
  | { kind: 'field'; name: string; chunks: Buffer[]; size: number }
  | { kind: 'file'; name: string; file: UploadedFile; handle: Awaited<ReturnType<typeof open>> | null };

/**
 * Reads a multipart/form-data body, writing file parts to `dir` (as 0.part, 1.part, …) and
 * collecting text fields. A file part sent with an empty file name and no content (a file input
 * left empty) is dropped. On any error the files written so far are deleted and an UploadError
 * (or the error thrown by `beforeFile`) is thrown. The body is not cancelled: the server can still
 * answer on the same connection.
 */
export async function readMultipart(
  body: ReadableStream<Uint8Array> | AsyncIterable<Uint8Array> | null,
  opts: MultipartOptions,
): Promise<MultipartResult> {
  const maxField = opts.maxFieldBytes ?? 64 * 1024;
  const maxParts = opts.maxParts ?? 1000;
  const maxHeader = opts.maxHeaderBytes ?? 16 * 1024;
  const delimiter = Buffer.from(`\r\n--${opts.boundary}`);
  const keep = delimiter.length - 1;
  const fields = new Map<string, string[]>();
  const files: UploadedFile[] = [];
  let state: 'preamble' | 'delimiter-line' | 'headers' | 'body' | 'done' = 'preamble';
  // A virtual CRLF in front lets the first boundary (which has none) match the delimiter.
  let buf: Buffer = Buffer.from(CRLF);
  let part: Part | null = null;
  let parts = 0;
  let bytes = 0;

  const malformed = (why: string) =>
    new UploadError('malformed', `The upload is not valid form data: ${why}.`);

  const openPart = async (headerText: string) => {
    parts++;
    if (parts > maxParts) throw new UploadError('refused', `The form has more than ${maxParts} parts.`);
    const headers = parseHeaders(headerText);
    const disposition = headers.get('content-disposition');
    if (!disposition) throw malformed('a part has no Content-Disposition header');
    const d = parseDisposition(disposition);
    if (d.type !== 'form-data' || d.name === null) throw malformed('a part is not named form-data');
    if (d.filename === null) {
      part = { kind: 'field', name: d.name, chunks: [], size: 0 };
      return;
    }
    opts.beforeFile?.(fields);
    const file: UploadedFile = {
      field: d.name,
      filename: d.filename,
      contentType: headers.get('content-type') ?? 'application/octet-stream',
      path: join(opts.dir, `${files.length}.part`),
      size: 0,
    };
    files.push(file);
    part = { kind: 'file', name: d.name, file, handle: await open(file.path, 'wx', 0o600) };
  };

  const write = async (data: Buffer) => {
    if (data.length === 0 || !part) return;
    if (part.kind === 'field') {
      part.size += data.length;
      if (part.size > maxField)
        throw new UploadError(
          'refused',
          `The form field "${part.name}" is longer than ${formatBytes(maxField)}.`,
        );
      part.chunks.push(data);
    } else {
      await part.handle?.write(data);
      part.file.size += data.length;
    }
  };

  const closePart = async () => {
    const p = part as Part | null;
    part = null;
    if (!p) return;
    if (p.kind === 'field') {
      const value = Buffer.concat(p.chunks).toString('utf8');
      const list = fields.get(p.name);
      if (list) list.push(value);
      else fields.set(p.name, [value]);
    } else {
      await p.handle?.close();
      p.handle = null;
      if (p.file.filename === '' && p.file.size === 0) {
        files.pop();
        await rm(p.file.path, { force: true });
      }
    }
  };

  const step = async (atEnd: boolean) => {
    for (;;) {
      if (state === 'done') {
        buf = Buffer.alloc(0); // the epilogue is ignored (RFC 2046 §5.1.1)
        return;
      }
      if (state === 'preamble' || state === 'body') {
        const i = buf.indexOf(delimiter);
        if (i < 0) {
          if (state === 'body' && buf.length > keep) {
            await write(buf.subarray(0, buf.length - keep));
            buf = buf.subarray(buf.length - keep);
          } else if (state === 'preamble' && buf.length > keep) buf = buf.subarray(buf.length - keep);
          if (atEnd) throw malformed('it ends before its closing boundary');
          return;
        }
        if (state === 'body') {
          await write(buf.subarray(0, i));
          await closePart();
        }
        buf = buf.subarray(i + delimiter.length);
        state = 'delimiter-line';
        continue;
      }
      if (state === 'delimiter-line') {
        if (buf.length >= 2 && buf[0] === 0x2d && buf[1] === 0x2d) {
          state = 'done';
          continue;
        }
        const eol = buf.indexOf(CRLF);
        if (eol < 0) {
          if (buf.length > 256 || atEnd) throw malformed('a boundary line does not end');
          return;
        }
        // Transport padding: only spaces and tabs may stand between the boundary and its CRLF.
        for (let k = 0; k < eol; k++)
          if (buf[k] !== 0x20 && buf[k] !== 0x09) throw malformed('a boundary line has extra text');
        buf = buf.subarray(eol + 2);
        state = 'headers';
        continue;
      }
      // headers
      let headerText: string;
      if (buf.length >= 2 && buf[0] === 0x0d && buf[1] === 0x0a) {
        headerText = '';
        buf = buf.subarray(2);
      } else {
        const end = buf.indexOf(HEADER_END);
        if (end < 0) {
          if (buf.length > maxHeader)
            throw malformed(`a part's headers are longer than ${formatBytes(maxHeader)}`);
          if (atEnd) throw malformed("a part's headers do not end");
          return;
        }
        if (end > maxHeader) throw malformed(`a part's headers are longer than ${formatBytes(maxHeader)}`);
        headerText = buf.subarray(0, end).toString('utf8');
        buf = buf.subarray(end + 4);
      }
      await openPart(headerText);
      state = 'body';
    }
  };

  try {
    if (body) {
      // A web stream is read through its reader so that stopping early does not cancel it.
      const iterable: AsyncIterable<Uint8Array> =
        body instanceof ReadableStream ? streamIterable(body) : body;
      for await (const chunk of iterable) {
        bytes += chunk.length;
        if (bytes > opts.limitBytes)
          throw new UploadError(
            'too-large',
            `The upload is larger than the limit of ${formatBytes(opts.limitBytes)}.`,
          );
        buf = buf.length === 0 ? Buffer.from(chunk) : Buffer.concat([buf, chunk]);
        await step(false);
      }
    }
    await step(true);
    return { fields, files, bytes };
  } catch (err) {
    const p = part as Part | null;
    if (p?.kind === 'file') await p.handle?.close().catch(() => undefined);
    for (const f of files) await rm(f.path, { force: true });
    throw err;
  }
}

/** Iterates a web stream without cancelling it when the loop stops early (the server answers on). */
async function* streamIterable(stream: ReadableStream<Uint8Array>): AsyncIterable<Uint8Array> {
  const reader = stream.getReader();
  try {
    for (;;) {
      const { done, value } = await reader.read();
      if (done) return;
      if (value) yield value;
    }
  } finally {
    reader.releaseLock();
  }
}

function parseHeaders(text: string): Map<string, string> {
  const out = new Map<string, string>();
  for (const line of text.split('\r\n')) {
    const colon = line.indexOf(':');
    if (colon <= 0) continue;
    out.set(line.slice(0, colon).trim().toLowerCase(), line.slice(colon + 1).trim());
  }
  return out;
}

/** Splits `a; b="x;y"; c` at semicolons outside quotes. */
function splitParams(value: string): string[] {
  const out: string[] = [];
  let cur = '';
  let quoted = false;
  for (let i = 0; i < value.length; i++) {
    const ch = value[i]!;
    if (quoted && ch === '\\' && i + 1 < value.length) {
      cur += ch + value[++i];
      continue;
    }
    if (ch === '"') quoted = !quoted;
    if (ch === ';' && !quoted) {
      out.push(cur.trim());
      cur = '';
    } else cur += ch;
  }
  out.push(cur.trim());
  return out;
}

function unquote(v: string): string {
  if (v.length >= 2 && v.startsWith('"') && v.endsWith('"')) return v.slice(1, -1).replace(/\\(.)/g, '$1');
  return v;
}

/**
 * Content-Disposition of a form-data part (RFC 7578 §4.2): its `name` and `filename`. A
 * `filename*` in RFC 8187 form (UTF-8''percent-encoded) wins over `filename`. In a plain
 * `filename`, `%22` becomes `"` (WHATWG HTML form encoding) and control characters are removed.
 */
export function parseDisposition(value: string): {
  type: string;
  name: string | null;
  filename: string | null;
} {
  const [type, ...params] = splitParams(value);
  let name: string | null = null;
  let filename: string | null = null;
  let filenameStar: string | null = null;
  for (const p of params) {
    const eq = p.indexOf('=');
    if (eq < 0) continue;
    const key = p.slice(0, eq).trim().toLowerCase();
    const raw = p.slice(eq + 1).trim();
    if (key === 'name') name = unquote(raw).replaceAll('%22', '"');
    else if (key === 'filename') filename = unquote(raw).replaceAll('%22', '"');
    else if (key === 'filename*') {
      const m = /^utf-8'[^']*'(.*)$/i.exec(raw);
      if (m) {
        try {
          filenameStar = decodeURIComponent(m[1]!);
        } catch {
          filenameStar = null;
        }
      }
    }
  }
  // biome-ignore lint/suspicious/noControlCharactersInRegex: removing control characters is the point
  const clean = (s: string) => s.replace(/[\u0000-\u001f\u007f]/g, '');
  const chosen = filenameStar ?? filename;
  return { type: (type ?? '').toLowerCase(), name, filename: chosen === null ? null : clean(chosen) };
}
