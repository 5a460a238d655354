/**
 * Packed defect columns (src/store/scans.ts): little-endian IEEE 754 binary64 and one class byte per
 * defect. Round trips, views on aligned buffers and copies of misaligned ones.
 */
import { describe, expect, it } from 'vitest';
import { packFloat64, packUint8, unpackFloat64, unpackUint8 } from '../../../src/store/scans.ts';

describe('packed columns', () => {
  it('round-trips every double bit for bit, including signed zero and subnormals', () => {
    const v = Float64Array.from([0, -0, 1e-310, -0.0402, 0.15, 45e-9, Number.MAX_VALUE]);
    const back = unpackFloat64(packFloat64(v));
    expect(Array.from(back)).toEqual(Array.from(v));
    expect(Object.is(back[1], -0)).toBe(true);
  });

  it('writes little-endian binary64 (IEEE 754-2019 §3.4): 1.0 is 00 00 00 00 00 00 f0 3f', () => {
    expect(packFloat64(Float64Array.of(1)).toString('hex')).toBe('000000000000f03f');
  });

  it('reads a misaligned BLOB by copying', () => {
    const bytes = Buffer.alloc(8 * 3 + 1);
    const body = packFloat64(Float64Array.of(1.5, -2.25, 3e-9));
    body.copy(bytes, 1);
    const odd = bytes.subarray(1);
    expect(odd.byteOffset % 8).not.toBe(0);
    expect(Array.from(unpackFloat64(odd))).toEqual([1.5, -2.25, 3e-9]);
  });

  it('refuses a BLOB whose length is not a multiple of 8', () => {
    expect(() => unpackFloat64(Buffer.alloc(12))).toThrow(
      'packed Float64 column of 12 bytes is not a multiple of 8',
    );
  });

  it('round-trips class codes', () => {
    const c = Uint8Array.of(0, 5, 3, 1);
    expect(Array.from(unpackUint8(packUint8(c)))).toEqual([0, 5, 3, 1]);
  });
});
