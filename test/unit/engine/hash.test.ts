import { createHash } from 'node:crypto';
import { describe, expect, it } from 'vitest';
import { canonicalHash } from '../../../src/engine/hash.ts';

describe('canonicalHash', () => {
  it('is sha256 of the documented serialisation: sorted keys, typed arrays as name, length and raw bytes', () => {
    const t = Float64Array.of(1.5, -2);
    const value = { b: 1, a: [null, 'x', -0], t, u: undefined };
    // hand-written serialisation (src/engine/hash.ts): {"a":[n;"x";0;]"b":1;"t":Float64Array:16:<bytes>;}
    const expected = createHash('sha256')
      .update('{"a":[n;"x";0;]"b":1;"t":Float64Array:16:')
      .update(new Uint8Array(t.buffer))
      .update(';}')
      .digest('hex');
    expect(canonicalHash(value)).toBe(expected);
  });

  it('does not depend on key order, and changes with one byte of an array', () => {
    const a = Float64Array.of(1, 2, 3);
    expect(canonicalHash({ x: 1, y: a })).toBe(canonicalHash({ y: a, x: 1 }));
    expect(canonicalHash({ x: 1, y: Float64Array.of(1, 2, 3 + 1e-12) })).not.toBe(
      canonicalHash({ x: 1, y: a }),
    );
  });

  it('hashes a view by its own bytes only', () => {
    const big = Float64Array.of(9, 1, 2, 9);
    expect(canonicalHash(big.subarray(1, 3))).toBe(canonicalHash(Float64Array.of(1, 2)));
  });
});
