import { describe, expect, it } from 'vitest';
import { fmtSize } from '../../../src/engine/format.ts';

describe('fmtSize', () => {
  it('keeps the zeros of a whole number and drops those after the point', () => {
    expect(fmtSize(500e-9)).toBe('500 nm');
    expect(fmtSize(0.5e-6)).toBe('500 nm');
    expect(fmtSize(45e-9)).toBe('45 nm');
    expect(fmtSize(1e-6)).toBe('1 µm');
    expect(fmtSize(2.5e-6)).toBe('2.5 µm');
    expect(fmtSize(100e-6)).toBe('100 µm');
    expect(fmtSize(2.94e-3)).toBe('2.94 mm');
  });
});
