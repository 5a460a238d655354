/**
 * The inputs' hash of an assessment: sha256 over a canonical serialisation of every input the
 * figures depend on — the pair and both wafers (scan header and the raw bytes of the particle
 * arrays, ledger), the product and its spec, the tools, cleans and locations the route touches, the
 * counter samples of every exposure window, the engine settings and the model version.
 *
 * The assessment time is not part of it: a sign-off re-runs the assessment at the time the signer
 * saw and checks that the data have not changed since.
 * Canonical: objects are written with sorted keys; typed arrays as their type name and raw bytes
 * (little-endian on every platform Node runs on).
 */
import { createHash, type Hash } from 'node:crypto';

/**
 * Writes the canonical serialisation into the hash. Text is gathered in `buf.text` and handed to
 * the hash in one piece before each typed array's bytes (and at the end), which gives the same
 * byte stream as writing every piece as it comes, with far fewer calls into the hash.
 */
function feed(h: Hash, buf: { text: string }, v: unknown): void {
  if (v === null || v === undefined) {
    buf.text += 'n;';
    return;
  }
  if (ArrayBuffer.isView(v)) {
    buf.text += `${v.constructor.name}:${v.byteLength}:`;
    h.update(buf.text);
    buf.text = ';';
    h.update(new Uint8Array(v.buffer, v.byteOffset, v.byteLength));
    return;
  }
  if (Array.isArray(v)) {
    buf.text += '[';
    for (const x of v) feed(h, buf, x);
    buf.text += ']';
    return;
  }
  if (typeof v === 'object') {
    buf.text += '{';
    for (const k of Object.keys(v as object).sort()) {
      const x = (v as Record<string, unknown>)[k];
      if (x === undefined) continue;
      buf.text += `${JSON.stringify(k)}:`;
      feed(h, buf, x);
    }
    buf.text += '}';
    return;
  }
  if (typeof v === 'number') {
    buf.text += `${Object.is(v, -0) ? 0 : v};`;
    return;
  }
  buf.text += `${JSON.stringify(v)};`;
}

/** sha256 (hex) of the canonical serialisation of `value`. */
export function canonicalHash(value: unknown): string {
  const h = createHash('sha256');
  const buf = { text: '' };
  feed(h, buf, value);
  h.update(buf.text);
  return h.digest('hex');
}
