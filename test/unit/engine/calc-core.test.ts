/**
 * The calculators' reading of typed text (src/engine/calc-core.ts). Expected values are hand
 * computations on the decimal digits (0.1 µm = 100 nm exactly, whatever binary double 0.1 is).
 */
import { describe, expect, it } from 'vitest';
import { describeRange, exactWholeUnits } from '../../../src/engine/calc-core.ts';

describe('exactWholeUnits', () => {
  it('turns decimals typed in µm into whole nm on the digits (hand computation)', () => {
    expect(exactWholeUnits('0.1', 3)).toBe(100);
    expect(exactWholeUnits('1e-1', 3)).toBe(100);
    expect(exactWholeUnits('.1', 3)).toBe(100);
    expect(exactWholeUnits('0.10000', 3)).toBe(100);
    expect(exactWholeUnits('+5', 3)).toBe(5000);
    expect(exactWholeUnits('5.', 3)).toBe(5000);
    expect(exactWholeUnits('0.0005e3', 3)).toBe(500);
    expect(exactWholeUnits('0', 3)).toBe(0);
    expect(exactWholeUnits('7', 0)).toBe(7);
  });

  it('is null where the text is not a whole number of the smaller unit, or not a plain decimal', () => {
    expect(exactWholeUnits('0.1234', 3)).toBeNull();
    expect(exactWholeUnits('5.5', 0)).toBeNull();
    expect(exactWholeUnits('4.99999999999999999', 0)).toBeNull(); // Number() would give 5
    expect(exactWholeUnits('-1', 3)).toBeNull();
    expect(exactWholeUnits('abc', 3)).toBeNull();
    expect(exactWholeUnits('', 3)).toBeNull();
    expect(exactWholeUnits('.', 3)).toBeNull();
    expect(exactWholeUnits('1e400', 3)).toBeNull();
  });
});

describe('describeRange', () => {
  it('says the range in words with the unit', () => {
    expect(describeRange({ min: 0, minExclusive: true, max: 10000 }, 'µm')).toBe(
      'positive and at most 10000 µm',
    );
    expect(describeRange({ min: 1, max: 9 }, '')).toBe('at least 1 and at most 9');
    expect(describeRange({ min: 0, max: 1e8, integer: true }, '')).toBe('a whole number from 0 to 100000000');
    expect(describeRange({ min: 0, minExclusive: true, max: 1, maxExclusive: true }, '')).toBe(
      'positive and below 1',
    );
  });
});
