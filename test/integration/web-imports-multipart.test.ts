/**
 * The streaming multipart reader (src/web/upload.ts) against an outside reference: Node's own
 * fetch implementation (undici, following the WHATWG Fetch standard) serialises FormData into a
 * multipart body and parses it back with Request.formData(). Our reader must agree with it for
 * every way the body can be cut into chunks, and refuse hostile bodies with a clear message.
 */
import { mkdtempSync, readdirSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { migrate, openDatabase } from '../../src/store/db.ts';
import { setSetting } from '../../src/store/settings.ts';
import {
  DEFAULT_UPLOAD_LIMIT_BYTES,
  formatBytes,
  multipartBoundary,
  parseByteSize,
  parseDisposition,
  readMultipart,
  UploadError,
  uploadLimitBytes,
} from '../../src/web/upload.ts';

let dir: string;
beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-mp-'));
});
afterEach(() => {
  rmSync(dir, { recursive: true, force: true });
});

/** Serialises a FormData with undici (the reference encoder) and returns its bytes and boundary. */
async function encode(fd: FormData): Promise<{ bytes: Uint8Array; boundary: string; request: Request }> {
  const req = new Request('http://x/', { method: 'POST', body: fd });
  const boundary = multipartBoundary(req.headers.get('content-type'));
  if (!boundary) throw new Error('undici sent no boundary');
  const bytes = new Uint8Array(await req.clone().arrayBuffer());
  return { bytes, boundary, request: req };
}

/** The same bytes delivered in pieces of `size` bytes. */
async function* chunked(bytes: Uint8Array, size: number): AsyncIterable<Uint8Array> {
  for (let i = 0; i < bytes.length; i += size) yield bytes.subarray(i, Math.min(bytes.length, i + size));
}

function sampleForm(): FormData {
  const fd = new FormData();
  fd.append('_csrf', 'tok-123');
  fd.append('kind', 'counter-samples');
  fd.append('note', 'line 1\r\nline 2 --not-a-boundary\r\n');
  // Content that contains CRLF, dashes and the start of a delimiter must come through byte for byte.
  const csv = 'counter,location\r\n--\r\n\r\n--x\r\nA-1,"bay ""3"""\r\n';
  fd.append('files', new File([csv], 'one.csv', { type: 'text/csv' }));
  const binary = new Uint8Array(3000);
  for (let i = 0; i < binary.length; i++) binary[i] = (i * 37 + 11) % 256;
  fd.append('files', new File([binary], 'two.bin', { type: 'application/octet-stream' }));
  fd.append('files', new File(['µm ≥ 0.1 — größe'], 'ünïcødé 名前.csv', { type: 'text/csv' }));
  return fd;
}

describe('readMultipart agrees with the WHATWG Fetch FormData parser (undici)', () => {
  it('for every chunk size from 1 byte to the whole body', async () => {
    const { bytes, boundary, request } = await encode(sampleForm());
    const reference = await request.formData();
    const refFiles = reference.getAll('files') as File[];
    const refBytes = await Promise.all(refFiles.map(async (f) => Buffer.from(await f.arrayBuffer())));
    // Chunk sizes: every size up to 80 (the delimiter is ~44 bytes, so every split position of a
    // delimiter and of the header terminator is crossed), then a few large ones.
    const sizes = [...Array.from({ length: 80 }, (_, i) => i + 1), 127, 1000, 4096, bytes.length];
    for (const size of sizes) {
      const sub = mkdtempSync(join(dir, 'c'));
      const res = await readMultipart(chunked(bytes, size), { boundary, limitBytes: bytes.length, dir: sub });
      expect(res.bytes).toBe(bytes.length);
      expect(res.fields.get('_csrf')).toEqual(['tok-123']);
      expect(res.fields.get('kind')).toEqual([reference.get('kind')]);
      expect(res.fields.get('note')).toEqual([reference.get('note')]);
      expect(res.files.map((f) => f.filename)).toEqual(refFiles.map((f) => f.name));
      expect(res.files.map((f) => f.contentType)).toEqual(refFiles.map((f) => f.type));
      res.files.forEach((f, i) => {
        expect(f.field).toBe('files');
        expect(f.size).toBe(refBytes[i]!.length);
        expect(readFileSync(f.path).equals(refBytes[i]!)).toBe(true);
      });
    }
  });

  it('drops a file input left empty (empty file name, no bytes), as browsers send it', async () => {
    const fd = new FormData();
    fd.append('kind', 'scans');
    fd.append('files', new File([], ''));
    const { bytes, boundary } = await encode(fd);
    const res = await readMultipart(chunked(bytes, 7), { boundary, limitBytes: 1e6, dir });
    expect(res.files).toEqual([]);
    expect(readdirSync(dir)).toEqual([]);
  });

  it('reads a web ReadableStream without cancelling it', async () => {
    const { bytes, boundary } = await encode(sampleForm());
    const stream = new Blob([bytes]).stream();
    const res = await readMultipart(stream, { boundary, limitBytes: bytes.length, dir });
    expect(res.files).toHaveLength(3);
    expect(stream.locked).toBe(false);
  });
});

describe('readMultipart refuses hostile bodies', () => {
  const B = 'XyZ';
  const body = (s: string) => chunked(Buffer.from(s, 'utf8'), 5);
  const ok = `--${B}\r\nContent-Disposition: form-data; name="a"\r\n\r\n1\r\n--${B}--\r\n`;

  it('accepts the minimal well-formed body, with preamble and epilogue ignored (RFC 2046 §5.1.1)', async () => {
    const res = await readMultipart(body(`preamble\r\n${ok}epilogue`), { boundary: B, limitBytes: 1e6, dir });
    expect(res.fields.get('a')).toEqual(['1']);
  });

  it('accepts transport padding after a boundary (RFC 2046 §5.1.1)', async () => {
    const padded = `--${B}  \t\r\nContent-Disposition: form-data; name="a"\r\n\r\n1\r\n--${B}--`;
    const res = await readMultipart(body(padded), { boundary: B, limitBytes: 1e6, dir });
    expect(res.fields.get('a')).toEqual(['1']);
  });

  const cases: [string, string, RegExp][] = [
    ['an empty body', '', /ends before its closing boundary/],
    [
      'no closing boundary',
      `--${B}\r\nContent-Disposition: form-data; name="a"\r\n\r\n1`,
      /ends before its closing boundary/,
    ],
    ['text after a boundary', `--${B}junk\r\n\r\n--${B}--`, /boundary line has extra text/],
    [
      'a part without Content-Disposition',
      `--${B}\r\nContent-Type: text/plain\r\n\r\n1\r\n--${B}--`,
      /no Content-Disposition/,
    ],
    [
      'a part without a name',
      `--${B}\r\nContent-Disposition: form-data\r\n\r\n1\r\n--${B}--`,
      /not named form-data/,
    ],
    [
      'a part that is not form-data',
      `--${B}\r\nContent-Disposition: attachment; name="a"\r\n\r\n1\r\n--${B}--`,
      /not named form-data/,
    ],
    [
      'headers that never end',
      `--${B}\r\nContent-Disposition: form-data; name="a"\r\n`,
      /headers do not end/,
    ],
    ['only whitespace', ' \r\n\t ', /ends before its closing boundary/],
  ];
  for (const [what, text, message] of cases)
    it(`refuses ${what}`, async () => {
      const err = await readMultipart(body(text), { boundary: B, limitBytes: 1e6, dir }).catch(
        (e: unknown) => e,
      );
      expect(err).toBeInstanceOf(UploadError);
      expect((err as UploadError).code).toBe('malformed');
      expect((err as Error).message).toMatch(message);
    });

  it('refuses a body one byte over the limit and accepts it at exactly the limit', async () => {
    const { bytes, boundary } = await encode(sampleForm());
    const at = await readMultipart(chunked(bytes, 512), {
      boundary,
      limitBytes: bytes.length,
      dir: mkdtempSync(join(dir, 'a')),
    });
    expect(at.bytes).toBe(bytes.length);
    const over = mkdtempSync(join(dir, 'b'));
    const err = await readMultipart(chunked(bytes, 512), {
      boundary,
      limitBytes: bytes.length - 1,
      dir: over,
    }).catch((e: unknown) => e);
    expect((err as UploadError).code).toBe('too-large');
    expect((err as Error).message).toContain(formatBytes(bytes.length - 1));
    // Nothing of the refused upload is left on disk.
    expect(readdirSync(over)).toEqual([]);
  });

  it('refuses a text field over its limit, too many parts and oversized headers', async () => {
    const long = `--${B}\r\nContent-Disposition: form-data; name="a"\r\n\r\n${'x'.repeat(2000)}\r\n--${B}--`;
    await expect(
      readMultipart(body(long), { boundary: B, limitBytes: 1e6, dir, maxFieldBytes: 1000 }),
    ).rejects.toThrow(/field "a" is longer than/);
    const many = `${`--${B}\r\nContent-Disposition: form-data; name="a"\r\n\r\n1\r\n`.repeat(5)}--${B}--`;
    await expect(
      readMultipart(body(many), { boundary: B, limitBytes: 1e6, dir, maxParts: 4 }),
    ).rejects.toThrow(/more than 4 parts/);
    const fat = `--${B}\r\nContent-Disposition: form-data; name="a"\r\nX-Pad: ${'p'.repeat(300)}\r\n\r\n1\r\n--${B}--`;
    await expect(
      readMultipart(body(fat), { boundary: B, limitBytes: 1e6, dir, maxHeaderBytes: 200 }),
    ).rejects.toThrow(/headers are longer than/);
  });

  it('lets beforeFile refuse the upload before any file byte is written, and cleans up', async () => {
    const { bytes, boundary } = await encode(sampleForm());
    const seen: string[] = [];
    const err = await readMultipart(chunked(bytes, 64), {
      boundary,
      limitBytes: bytes.length,
      dir,
      beforeFile: (fields) => {
        seen.push(...fields.keys());
        throw new UploadError('refused', 'no');
      },
    }).catch((e: unknown) => e);
    expect((err as UploadError).code).toBe('refused');
    // The fields before the first file were available to the check.
    expect(seen).toEqual(['_csrf', 'kind', 'note']);
    expect(readdirSync(dir)).toEqual([]);
  });
});

describe('file names and boundaries', () => {
  it('decodes %22 to a quote as the WHATWG HTML form encoding writes it, keeps <, > and & literally', () => {
    expect(parseDisposition('form-data; name="files"; filename="a%22b<script>&amp;.csv"')).toEqual({
      type: 'form-data',
      name: 'files',
      filename: 'a"b<script>&amp;.csv',
    });
  });

  it('prefers an RFC 8187 filename* and removes control characters', () => {
    expect(
      parseDisposition(`form-data; name="f"; filename="x.csv"; filename*=UTF-8''%C2%B5m%20file.csv`).filename,
    ).toBe('µm file.csv');
    expect(parseDisposition('form-data; name="f"; filename="a\u0007b\u001b.csv"').filename).toBe('ab.csv');
    expect(parseDisposition('form-data; name="f"; filename="semi;colon.csv"').filename).toBe(
      'semi;colon.csv',
    );
    expect(parseDisposition('form-data; name="f"').filename).toBeNull();
  });

  it('reads the boundary of multipart/form-data and nothing else (RFC 2046: 1–70 characters)', () => {
    expect(multipartBoundary('multipart/form-data; boundary=----WebKitFormBoundaryAbC')).toBe(
      '----WebKitFormBoundaryAbC',
    );
    expect(multipartBoundary('Multipart/Form-Data; charset=utf-8; boundary="a b:c"')).toBe('a b:c');
    for (const bad of [
      undefined,
      '',
      'text/plain',
      'multipart/form-data',
      'multipart/form-data; boundary=',
      `multipart/form-data; boundary=${'a'.repeat(71)}`,
      'multipart/mixed; boundary=abc',
      'multipart/form-data; boundary=a<b',
    ])
      expect(multipartBoundary(bad)).toBeNull();
  });
});

describe('byte sizes', () => {
  it('parses SI (10³ⁿ) and IEC 80000-13 binary (2¹⁰ⁿ) units', () => {
    expect(parseByteSize('512 MiB')).toBe(536_870_912);
    expect(parseByteSize('512MB')).toBe(512_000_000);
    expect(parseByteSize('1.5 KiB')).toBe(1536);
    expect(parseByteSize(' 2gib ')).toBe(2 * 1024 ** 3);
    expect(parseByteSize('1048576')).toBe(1_048_576);
    expect(parseByteSize('1 b')).toBe(1);
  });

  it('refuses empty, zero, negative, fractional bytes, NaN, Infinity and unknown units', () => {
    for (const bad of [
      '',
      '   ',
      '0',
      '-5',
      '-5 MB',
      '1.5',
      'NaN',
      'Infinity',
      '1e9',
      '12 parsecs',
      'MB',
      '1,5 MB',
      '9'.repeat(30),
    ])
      expect(parseByteSize(bad)).toBeNull();
  });

  it('formats for people in binary units', () => {
    expect(formatBytes(0)).toBe('0 bytes');
    expect(formatBytes(1)).toBe('1 byte');
    expect(formatBytes(1023)).toBe('1023 bytes');
    expect(formatBytes(1024)).toBe('1 KiB');
    expect(formatBytes(1536)).toBe('1.5 KiB');
    expect(formatBytes(DEFAULT_UPLOAD_LIMIT_BYTES)).toBe('512 MiB');
    expect(formatBytes(Number.NaN)).toBe('—');
  });

  it('takes the limit from the environment, else the installation setting, else 512 MiB', () => {
    const db = openDatabase(':memory:');
    migrate(db);
    expect(uploadLimitBytes(db, {})).toBe(DEFAULT_UPLOAD_LIMIT_BYTES);
    setSetting(db, 'web.upload_limit', '2 MiB');
    expect(uploadLimitBytes(db, {})).toBe(2 * 1024 ** 2);
    expect(uploadLimitBytes(db, { VOIDCAST_UPLOAD_LIMIT: '64 KiB' })).toBe(65_536);
    // An unreadable value falls through to the next source rather than lifting the limit.
    expect(uploadLimitBytes(db, { VOIDCAST_UPLOAD_LIMIT: 'lots' })).toBe(2 * 1024 ** 2);
    setSetting(db, 'web.upload_limit', 'unlimited');
    expect(uploadLimitBytes(db, {})).toBe(DEFAULT_UPLOAD_LIMIT_BYTES);
  });
});
