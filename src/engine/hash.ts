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

function feed(h: Hash, v: unknown): void {
  if (v === null || v === undefined) {
    h.update('n;');
    return;
  }
  if (ArrayBuffer.isView(v)) {
    const name = v.constructor.name;
    h.update(`${name}:${v.byteLength}:`);
    h.update(new Uint8Array(v.buffer, v.byteOffset, v.byteLength));
    h.update(';');
    return;
  }
  if (Array.isArray(v)) {
    h.update('[');
    for (const x of v) feed(h, x);
    h.update(']');
    return;
  }
  if (typeof v === 'object') {
    h.update('{');
    for (const k of Object.keys(v as object).sort()) {
      const x = (v as Record<string, unknown>)[k];
      if (x === undefined) continue;
      h.update(`${JSON.stringify(k)}:`);
      feed(h, x);
    }
    h.update('}');
    return;
  }
  if (typeof v === 'number') {
    h.update(`${Object.is(v, -0) ? 0 : v};`);
    return;
  }
  h.update(`${JSON.stringify(v)};`);
}

/** sha256 (hex) of the canonical serialisation of `value`. */
export function canonicalHash(value: unknown): string {
  const h = createHash('sha256');
  feed(h, value);
  return h.digest('hex');
}
