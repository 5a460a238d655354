import { describe, expect, it } from 'vitest';
import { DEFECT_CLASS_CODE, type ScanDefects, selectDefects } from '../../../src/store/scans.ts';

const defects = (codes: number[]): ScanDefects => ({
  count: codes.length,
  xM: Float64Array.from(codes, (_, i) => i * 1e-3),
  yM: Float64Array.from(codes, (_, i) => -i * 1e-3),
  diameterM: Float64Array.from(codes, (_, i) => (50 + i) * 1e-9),
  classCode: Uint8Array.from(codes),
});

describe('selectDefects', () => {
  it('keeps the defects of the classes asked for, in order, as compact arrays', () => {
    const { particle, pit, unknown } = DEFECT_CLASS_CODE;
    const d = defects([particle, pit, unknown, pit, particle]);
    const s = selectDefects(d, ['particle', 'unknown']);
    expect(s.count).toBe(3);
    expect(Array.from(s.xM)).toEqual([0, 2e-3, 4e-3]);
    expect(Array.from(s.yM)).toEqual([-0, -2e-3, -4e-3]);
    expect(Array.from(s.diameterM)).toEqual([d.diameterM[0], d.diameterM[2], d.diameterM[4]]);
    expect(s.xM).not.toBe(d.xM);
  });

  it('hands back the stored arrays themselves when every defect is kept (no copy)', () => {
    const d = defects([DEFECT_CLASS_CODE.particle, DEFECT_CLASS_CODE.particle]);
    const s = selectDefects(d, ['particle']);
    expect(s.count).toBe(2);
    expect(s.xM).toBe(d.xM);
    expect(s.yM).toBe(d.yM);
    expect(s.diameterM).toBe(d.diameterM);
  });
});
