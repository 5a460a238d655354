import { describe, expect, it } from 'vitest';
import { countBound, fmtCount, fmtCountBound, fmtPercent, fmtSize } from '../../../src/engine/format.ts';

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

describe('countBound and fmtCount', () => {
  // Hand computation: nearest whole count, a tie going outward (src/engine/format.ts).
  it('rounds a bound of a count interval to the nearest whole count, ties outward', () => {
    expect(countBound(7.98, 'low')).toBe(8);
    expect(countBound(8.02, 'low')).toBe(8);
    expect(countBound(7.5, 'low')).toBe(7);
    expect(countBound(46.98, 'high')).toBe(47);
    expect(countBound(47.5, 'high')).toBe(48);
    expect(countBound(47, 'high')).toBe(47);
    expect(countBound(-0.2, 'low')).toBe(0);
    expect(fmtCountBound(43.02, 'high')).toBe('43');
    expect(fmtCountBound(Number.NaN, 'high')).toBe('—');
  });
  it('writes a whole count without a decimal', () => {
    expect(fmtCount(12)).toBe('12');
    expect(fmtCount(43.5)).toBe('43.5');
    expect(fmtCount(7.531)).toBe('7.53');
  });
});

describe('fmtPercent', () => {
  it('writes a small share in plain decimals with two significant figures, not in e-notation', () => {
    // Hand computation: 7.1e-5 of a whole is 0.0071 %.
    expect(fmtPercent(7.1e-5)).toBe('0.0071 %');
    expect(fmtPercent(1.23e-7)).toBe('0.000012 %');
    expect(fmtPercent(0.0083)).toBe('0.83 %');
    expect(fmtPercent(0.853)).toBe('85.3 %');
  });
});
