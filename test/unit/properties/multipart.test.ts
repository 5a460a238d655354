/**
 * Property-based test of the upload reader (src/web/upload.ts readMultipart, the parser of every
 * uploaded import), with fast-check, 10,000 generated bodies: a form (text fields and files whose
 * contents hold CRLF, dashes and pieces of the boundary) encoded by Node's fetch implementation
 * (undici, WHATWG Fetch: the reference encoder and parser) and delivered in chunks of a random size
 * is read exactly as undici's Request.formData() reads it; the same body cut short, with bytes
 * changed or with junk spliced in is either read or refused with an UploadError — never another
 * exception — and a refused body leaves no file behind. The seed is fixed.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { afterAll, describe, expect, it } from 'vitest';
import { multipartBoundary, readMultipart, UploadError } from '../../../src/web/upload.ts';

const RUNS = 10_000;
// One directory for every body, emptied after each (fewer file-system calls than one per body).
const dir = mkdtempSync(join(tmpdir(), 'voidcast-mp-prop-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

/** Text and bytes that are hard for a multipart reader: line breaks, dashes, boundary look-alikes. */
const tricky = fc.constantFrom(
  '\r\n',
  '--',
  '\r\n--',
  '\r\n\r\n',
  '-',
  '\r',
  '\n',
  '"',
  'é',
  'x',
  '%22',
  ';',
);
const text = fc.array(fc.oneof(tricky, fc.string({ maxLength: 6 })), { maxLength: 8 }).map((a) => a.join(''));
const bytes = fc.oneof(
  text.map((t) => Buffer.from(t, 'utf8')),
  fc.uint8Array({ maxLength: 300 }).map((a) => Buffer.from(a)),
);
const form = fc.array(
  fc.oneof(
    fc
      .tuple(fc.constantFrom('_csrf', 'kind', 'note', 'a b', 'ü'), text)
      .map(([k, v]) => ({ field: k, value: v })),
    fc
      .tuple(
        fc.constantFrom('files', 'other'),
        fc.constantFrom('a.csv', 'ü ñ.csv', 'x"y.csv', 'p;q.json'),
        bytes,
      )
      .map(([k, name, content]) => ({ field: k, name, content })),
  ),
  { maxLength: 5 },
);

type Entry = { field: string; value: string } | { field: string; name: string; content: Buffer };

async function encode(entries: Entry[]): Promise<{ body: Buffer; boundary: string; request: Request }> {
  const fd = new FormData();
  for (const e of entries)
    if ('value' in e) fd.append(e.field, e.value);
    else fd.append(e.field, new File([e.content], e.name, { type: 'application/octet-stream' }));
  const request = new Request('http://x/', { method: 'POST', body: fd });
  const boundary = multipartBoundary(request.headers.get('content-type'));
  if (!boundary) throw new Error('undici sent no boundary');
  return { body: Buffer.from(await request.clone().arrayBuffer()), boundary, request };
}

async function* chunked(b: Buffer, size: number): AsyncIterable<Uint8Array> {
  for (let i = 0; i < b.length; i += size) yield b.subarray(i, Math.min(b.length, i + size));
}

/** A body changed a little: cut, a byte changed, or junk spliced in. */
function damage(b: Buffer, how: number, at: number, junk: Buffer): Buffer {
  const k = b.length === 0 ? 0 : at % b.length;
  if (how === 0) return b.subarray(0, k);
  if (how === 1) {
    const c = Buffer.from(b);
    if (c.length > 0) c[k] = (c[k]! + 1) % 256;
    return c;
  }
  return Buffer.concat([b.subarray(0, k), junk, b.subarray(k)]);
}

describe('readMultipart on generated bodies', () => {
  it(`${RUNS} bodies: a whole body reads as undici reads it; a damaged one is read or refused, never a crash`, async () => {
    await fc.assert(
      fc.asyncProperty(
        form,
        fc.integer({ min: 1, max: 400 }),
        fc.option(
          fc.tuple(
            fc.integer({ min: 0, max: 2 }),
            fc.nat(),
            fc.constantFrom(
              ...['\r\n', '--', 'Content-Disposition: x\r\n\r\n', '\u0000'].map((s) => Buffer.from(s)),
            ),
          ),
          { freq: 2 },
        ),
        async (entries, size, harm) => {
          const { body, boundary, request } = await encode(entries);
          const input = harm ? damage(body, harm[0], harm[1], harm[2]) : body;
          let result: Awaited<ReturnType<typeof readMultipart>> | null = null;
          try {
            result = await readMultipart(chunked(input, size), { boundary, limitBytes: 1e6, dir });
          } catch (e) {
            if (!(e instanceof UploadError)) throw e;
            expect(e.message.length).toBeGreaterThan(0);
            // A refused body leaves nothing behind.
            expect(readdirSync(dir)).toEqual([]);
          }
          if (!harm) {
            expect(result).not.toBeNull();
            const reference = await request.formData();
            const refFields = [...reference.entries()].filter(([, v]) => typeof v === 'string');
            const ours = [...result!.fields.entries()].flatMap(([k, vs]) => vs.map((v) => [k, v]));
            expect(ours.sort()).toEqual(refFields.map(([k, v]) => [k, v]).sort());
            const refFiles = [...reference.entries()].filter(([, v]) => typeof v !== 'string') as [
              string,
              File,
            ][];
            // undici keeps a file input left empty; the reader drops one with no name and no bytes.
            const kept = refFiles.filter(([, f]) => !(f.name === '' && f.size === 0));
            expect(result!.files.map((f) => [f.field, f.filename, f.size])).toEqual(
              kept.map(([k, f]) => [k, f.name, f.size]),
            );
            for (const [i, f] of result!.files.entries())
              expect(readFileSync(f.path).equals(Buffer.from(await kept[i]![1].arrayBuffer()))).toBe(true);
          }
          for (const f of result?.files ?? []) rmSync(f.path);
          expect(readdirSync(dir)).toEqual([]);
        },
      ),
      { seed: 14_301, numRuns: RUNS },
    );
  }, 120_000);
});
