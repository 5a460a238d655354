/**
 * The shared text helpers of the charts: number grouping, width estimates and the room an axis
 * needs. Widths are checked against DejaVu Sans advance widths (the font's own metrics, as
 * Chromium sets them at 11 px: "0" is 0.636 em = 7.0 px, a space 0.318 em = 3.5 px).
 */
import { describe, expect, it } from 'vitest';
import {
  DIGIT_GROUP,
  fitText,
  fmtNum,
  groupDigits,
  LINE_BOX_PX,
  textWidth,
  yAxisDepth,
} from '../../../views/charts/svg.tsx';

describe('fmtNum and groupDigits', () => {
  it('groups digits in threes with a narrow no-break space, never a comma (SI Brochure 9th ed., 5.4.4)', () => {
    expect(fmtNum(100_000)).toBe(`100${DIGIT_GROUP}000`);
    expect(fmtNum(352_000)).toBe(`352${DIGIT_GROUP}000`);
    expect(groupDigits(1_234_567.5)).toBe(`1${DIGIT_GROUP}234${DIGIT_GROUP}567.5`);
    expect(fmtNum(100_000)).not.toContain(',');
  });
  it('leaves four-digit numbers and decimals ungrouped (the SI Brochure allows it for four digits)', () => {
    expect(fmtNum(3520)).toBe('3520');
    expect(fmtNum(0.0123)).toBe('0.0123');
    expect(fmtNum(-12_500)).toBe(`-12${DIGIT_GROUP}500`);
  });
});

describe('textWidth and fitText', () => {
  it('adds DejaVu Sans advance widths at 11 px', () => {
    // "100" = 3 × 0.64 em (0.636 rounded up) × 11 px = 21.12 px (hand computation).
    expect(textWidth('100')).toBeCloseTo(21.12, 9);
    // Characters outside the table count as a full em, so a width is never underestimated.
    expect(textWidth('漢')).toBe(11);
    expect(textWidth('ab', 11, true)).toBeGreaterThan(textWidth('ab'));
  });
  it('shortens a label with an ellipsis until it fits, and keeps one that fits', () => {
    expect(fitText('short', 200)).toBe('short');
    const long = 'Undetected particles below the 37 nm threshold of scan TR2653-02-PB';
    const fitted = fitText(long, 120);
    expect(fitted.endsWith('…')).toBe(true);
    expect(textWidth(fitted)).toBeLessThanOrEqual(120);
    expect(long.startsWith(fitted.slice(0, -1))).toBe(true);
  });
});

describe('yAxisDepth', () => {
  it('makes room for the tick gap, the widest tick label and the rotated title’s line box', () => {
    const ticks = [
      { at: 0, label: '0' },
      { at: 10, label: `100${DIGIT_GROUP}000` },
      { at: 5, label: null },
    ];
    const widest = textWidth(`100${DIGIT_GROUP}000`);
    // 8 px tick gap + label + 4 px gap + line box + 1 px, rounded up (svg.tsx constants).
    expect(yAxisDepth(ticks, 'title')).toBe(Math.ceil(8 + widest + 4 + LINE_BOX_PX + 1));
    expect(yAxisDepth(ticks)).toBe(Math.ceil(8 + widest + 1));
  });
});
