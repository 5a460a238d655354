import { createRequire } from 'node:module';
import { describe, expect, it } from 'vitest';
import { ModelInputError } from '../../../src/model/errors.ts';
import {
  bestClassAchieved,
  classifyLocations,
  ISO_TABLE_A1,
  ISO_TABLE1_SIZES_M,
  ISO_TABLE1_SIZES_NM,
  ISO1999_T95,
  iso1999Ucl95,
  isoClassLimit,
  isoTable1Cell,
  isoTable1ColumnNm,
  isoTable1Value,
  minimumSampleVolumeM3,
  roundIsoLimit,
  samplingLocations,
} from '../../../src/model/iso14644.ts';
import { umToM } from '../../../src/model/units.ts';

// jstat (reference library, devDependency) has no type declarations; the one function used is typed here.
const jstat = createRequire(import.meta.url)('jstat') as {
  studentt: { inv(p: number, dof: number): number };
};

const um = (x: number) => x * 1e-6;
const [D01, , D03, D05, D1, D5] = ISO_TABLE1_SIZES_M as [number, number, number, number, number, number];

describe('isoClassLimit (ISO 14644-1:2015 formula C_n = 10^N (0.1/D)^2.08)', () => {
  it('class 5 at 0.5 µm unrounded is 3516.76 [D, recomputed: 1e5 · 0.2^2.08]', () => {
    expect(isoClassLimit(5, D05)).toBeCloseTo(3516.757, 2);
    expect(isoClassLimit(5, D05)).toBe(1e5 * 0.2 ** 2.08);
  });

  it('at 0.1 µm the limit is 10^N exactly (definition of the class number)', () => {
    for (let n = 1; n <= 9; n++) expect(isoClassLimit(n, D01)).toBeCloseTo(10 ** n, 6);
  });

  it('invariants: one class step is a factor 10; the limit falls as D^−2.08; fractional classes interpolate', () => {
    for (const d of ISO_TABLE1_SIZES_M) {
      expect(isoClassLimit(6, d) / isoClassLimit(5, d)).toBeCloseTo(10, 10);
      expect(isoClassLimit(5.5, d) / isoClassLimit(5, d)).toBeCloseTo(Math.sqrt(10), 10);
    }
    expect(isoClassLimit(5, D1) / isoClassLimit(5, D05)).toBeCloseTo(2 ** -2.08, 12);
  });
});

/**
 * ISO 14644-1:2015 Table 1, every cell: the printed value, or the footnote letters of a blank cell
 * (c "not applicable", d and e "classification inappropriate"; f the M descriptor at class 5, 5 µm;
 * b marks values needing large sample volumes). Rows 3, 5 and 7 — values and which cells are blank —
 * are [V] (checked against the standard, as in /work/shared/reference/models.md); the other rows and
 * the note letters are from memory of the standard [M].
 */
const TABLE1: Record<number, (number | string)[]> = {
  //      0.1 µm        0.2 µm      0.3 µm      0.5 µm       1 µm        5 µm
  1: ['10 b', 'd', 'd', 'd', 'd', 'e'], // [M]
  2: [100, '24 b', '10 b', 'd', 'd', 'e'], // [M]
  3: [1000, 237, 102, '35 b', 'd', 'e'], // [V] values and blanks; letters [M]
  4: [10000, 2370, 1020, 352, '83 b', 'e'], // [M]
  5: [100000, 23700, 10200, 3520, 832, 'd e f'], // [V] values and blanks; letters [M]
  6: [1000000, 237000, 102000, 35200, 8320, 293], // [M]
  7: ['c', 'c', 'c', 352000, 83200, 2930], // [V] values and blanks; letters [M]
  8: ['c', 'c', 'c', 3520000, 832000, 29300], // [M]
  9: ['c', 'c', 'c', 35200000, 8320000, 293000], // [M]
};
const SIZES_UM = [0.1, 0.2, 0.3, 0.5, 1, 5];

/** A Table 1 entry as [value or null, note letters]. */
function entry(e: number | string): [number | null, string[]] {
  if (typeof e === 'number') return [e, []];
  const parts = e.split(' ');
  return /^\d+$/.test(parts[0]!) ? [Number(parts[0]), parts.slice(1)] : [null, parts];
}

describe('ISO 14644-1:2015 Table 1, every cell', () => {
  it('isoTable1Cell on exact inputs (integer class, size in whole nm) gives each printed value and blank cell', () => {
    for (let n = 1; n <= 9; n++)
      ISO_TABLE1_SIZES_NM.forEach((nm, j) => {
        const [value, notes] = entry(TABLE1[n]![j]!);
        const cell = isoTable1Cell(n, nm);
        expect(cell.notes, `class ${n} at ${nm} nm`).toEqual(notes);
        if (value === null) {
          expect(cell.blank, `class ${n} at ${nm} nm is blank`).toBe(true);
          if (cell.blank)
            expect(cell.words).toMatch(
              notes.includes('c') ? /^not applicable/ : /^classification inappropriate/,
            );
        } else expect(cell).toEqual({ blank: false, valuePerM3: value, notes });
      });
  });

  it('isoTable1Value finds every cell from a size in metres however it was converted (µm / 1e6, µm × 1e-6, nm × 1e-9, umToM)', () => {
    for (let n = 1; n <= 9; n++)
      SIZES_UM.forEach((um, j) => {
        const [value] = entry(TABLE1[n]![j]!);
        const nm = Math.round(um * 1000);
        for (const d of [um / 1e6, um * 1e-6, nm * 1e-9, umToM(um), ISO_TABLE1_SIZES_M[j]!])
          expect(isoTable1Value(n, d), `class ${n} at ${um} µm given as ${d} m`).toBe(value);
      });
  });

  it('class 1 at 0.1 µm is 10 although 0.1 µm / 1e6 = 1.0000000000000001e-7 m puts the formula at 9.999999999999998', () => {
    const d = 0.1 / 1e6;
    expect(d).not.toBe(1e-7);
    expect(isoClassLimit(1, d)).toBeLessThan(10);
    expect(isoTable1Value(1, d)).toBe(10);
    expect(isoTable1ColumnNm(d)).toBe(100);
  });

  it('names the blank cells as the standard does: c not applicable; d, e classification inappropriate; f the M descriptor', () => {
    const c = isoTable1Cell(7, 100);
    const d = isoTable1Cell(1, 200);
    const e = isoTable1Cell(4, 5000);
    const f = isoTable1Cell(5, 5000);
    expect(c.blank && c.words).toContain('not applicable: the particle concentration is very high');
    expect(d.blank && d.words).toContain('classification inappropriate: too few particles');
    expect(e.blank && e.words).toContain('classification inappropriate at this size');
    expect(f.blank && f.words).toContain('macroparticle descriptor M');
  });

  it("the 1999 edition's class 5 at 5 µm, dropped in 2015, was 29 = the rounded formula [V, ISO 14644-1:1999 Table 1]", () => {
    expect(isoTable1Value(5, D5)).toBeNull();
    expect(roundIsoLimit(isoClassLimit(5, D5))).toBe(29);
  });

  it('isoTable1ColumnNm: only the six columns, within 1e-9 relative', () => {
    expect(ISO_TABLE1_SIZES_M.map(isoTable1ColumnNm)).toEqual([100, 200, 300, 500, 1000, 5000]);
    expect(isoTable1ColumnNm(4e-7)).toBeNull();
    expect(isoTable1ColumnNm(1.001e-7)).toBeNull();
    expect(isoTable1ColumnNm(1e-7 * (1 + 5e-10))).toBe(100);
    expect(() => isoTable1ColumnNm(-1)).toThrow(ModelInputError);
  });

  it('every applicable cell is the formula rounded to a whole number with at most three significant figures [D]', () => {
    for (let n = 1; n <= 9; n++)
      for (const d of ISO_TABLE1_SIZES_M) {
        const v = isoTable1Value(n, d);
        if (v === null) continue;
        const exact = isoClassLimit(n, d);
        expect(Number.isInteger(v)).toBe(true);
        expect(String(v).replace(/0+$/, '').length).toBeLessThanOrEqual(3);
        // whole-number rounding moves a value by ≤ 0.5, three-figure rounding by ≤ 0.5 % of it
        expect(Math.abs(v - exact)).toBeLessThanOrEqual(Math.max(0.5, 0.005 * exact));
      }
  });

  it('roundIsoLimit: whole numbers below 1000, three figures above (hand-rounded examples)', () => {
    expect(roundIsoLimit(23.65)).toBe(24);
    expect(roundIsoLimit(236.5)).toBe(237);
    expect(roundIsoLimit(3516.757)).toBe(3520);
    expect(roundIsoLimit(83176.4)).toBe(83200);
    expect(roundIsoLimit(35167570)).toBe(35200000);
    expect(roundIsoLimit(0.4)).toBe(0);
  });

  it('rejects fractional classes and sizes that are not Table 1 columns', () => {
    expect(() => isoTable1Value(5.5, D05)).toThrow(
      'isoTable1Value: classN = 5.5 is out of range; allowed an integer ≥ 1 and ≤ 9',
    );
    expect(() => isoTable1Value(5, um(0.4))).toThrow('isoTable1Value: diameterM = 4e-7 m');
    expect(() => isoTable1Value(10, D05)).toThrow(ModelInputError);
    expect(() => isoTable1Cell(5, 400)).toThrow('isoTable1Cell: sizeNm = 400 nm is out of range');
    expect(() => isoTable1Cell(0, 100)).toThrow(ModelInputError);
  });
});

describe('minimumSampleVolumeM3 (ISO 14644-1:2015 A.4.4: V_s = 20/C_n,m × 1000 L, ≥ 2 L)', () => {
  it('ISO 5 at 0.5 µm → 5.69 L [D from the formula]', () => {
    expect(minimumSampleVolumeM3(5, D05) * 1000).toBeCloseTo(5.687, 3);
    expect(minimumSampleVolumeM3(5, D05)).toBe(20 / isoClassLimit(5, D05));
  });

  it('never below 2 L: ISO 8 at 0.5 µm would need 5.7 mL', () => {
    expect(minimumSampleVolumeM3(8, D05)).toBe(0.002);
  });

  it('ISO 5 at 5 µm (29.3 per m³) needs 0.682 m³ — why the 2015 table drops that cell [D]', () => {
    expect(minimumSampleVolumeM3(5, D5)).toBeCloseTo(20 / 29.33, 2);
  });
});

describe('samplingLocations (ISO 14644-1:2015 Table A.1)', () => {
  it('52 m² → 10 locations [V]; 53 m² takes the next row', () => {
    expect(samplingLocations(52)).toBe(10);
    expect(samplingLocations(53)).toBe(11);
  });

  it('1000 m² → 27; above 1000 m² N_L = ⌈27·A/1000⌉ [V]', () => {
    expect(samplingLocations(1000)).toBe(27);
    expect(samplingLocations(1001)).toBe(28); // 27.027 → 28
    expect(samplingLocations(1500)).toBe(41); // 40.5 → 41
    expect(samplingLocations(2000)).toBe(54); // exactly 54, not rounded up
  });

  it('the recalled intermediate steps [M]: 1 location up to 2 m², 5 up to 10 m², 20 up to 156 m², 26 up to 636 m²', () => {
    expect(samplingLocations(0.5)).toBe(1);
    expect(samplingLocations(2)).toBe(1);
    expect(samplingLocations(2.01)).toBe(2);
    expect(samplingLocations(10)).toBe(5);
    expect(samplingLocations(156)).toBe(20);
    expect(samplingLocations(636)).toBe(26);
  });

  it('invariants: non-decreasing in area, one more location per row, continuous at 1000 m²', () => {
    let prev = 0;
    for (let a = 0.25; a <= 5000; a *= 1.01) {
      const n = samplingLocations(a);
      expect(n).toBeGreaterThanOrEqual(prev);
      prev = n;
    }
    ISO_TABLE_A1.forEach(([, n], i) => {
      expect(n).toBe(i + 1);
    });
    expect(Math.ceil((27 * 1000) / 1000)).toBe(samplingLocations(1000));
  });

  it('rejects zero, negative and non-finite areas', () => {
    for (const a of [0, -1, Number.NaN, Number.POSITIVE_INFINITY, 1e8])
      expect(() => samplingLocations(a)).toThrow(ModelInputError);
    expect(() => samplingLocations(0)).toThrow(
      'samplingLocations: areaM2 = 0 m² is out of range; allowed > 0 m² and ≤ 10000000 m²',
    );
  });
});

describe('the 1999 edition UCL rule (ISO 14644-1:1999 Annex C)', () => {
  it('t_0.95 table equals the 95 % quantile of Student t for 1–8 degrees of freedom (jStat reference)', () => {
    // Tolerance 0.006, not 0.005: the recalled 1.90 for 7 degrees of freedom is 1.8946 rounded
    // twice (1.895 → 1.90); every other entry is the quantile rounded to two decimals.
    ISO1999_T95.forEach((t, i) => {
      expect(Math.abs(t - jstat.studentt.inv(0.95, i + 1))).toBeLessThanOrEqual(0.006);
    });
  });

  it('UCL = M + t·s/√m, hand computation for means 2000, 3000, 3300 per m³', () => {
    // M = 2766.67, s = 680.686, t(2) = 2.92 → UCL = 2766.67 + 2.92 · 680.686 / √3 = 3914.2
    expect(iso1999Ucl95([2000, 3000, 3300])).toBeCloseTo(3914.2, 1);
  });

  it('UCL of identical means is that mean; it is never below the mean (invariants)', () => {
    expect(iso1999Ucl95([1234, 1234, 1234, 1234])).toBe(1234);
    expect(iso1999Ucl95([10, 20])).toBeGreaterThan(15);
  });

  it('needs 2–9 non-negative finite means', () => {
    for (const bad of [[1], Array(10).fill(1), [1, -1], [1, Number.NaN], 'x'])
      expect(() => iso1999Ucl95(bad as number[])).toThrow(ModelInputError);
  });
});

describe('classifyLocations', () => {
  const three = { sizesM: [D05], locationMeansPerM3: [[2000], [3000], [3300]] };

  it('2015 rule: every location ≤ the Table 1 limit → pass; the 1999 UCL rule fails the same data', () => {
    const r15 = classifyLocations({ ...three, classN: 5 });
    expect(r15.pass).toBe(true);
    expect(r15.sizes[0]!.limitPerM3).toBe(3520);
    expect(r15.sizes[0]!.ucl95PerM3).toBeNull();
    const r99 = classifyLocations({ ...three, classN: 5, edition: 1999 });
    expect(r99.sizes[0]!.ucl95PerM3).toBeCloseTo(3914.2, 1);
    expect(r99.pass).toBe(false);
    expect(r99.locations.every((l) => l.pass)).toBe(true); // each location passes, the UCL does not
  });

  it('the 1999 UCL is not applied to one location or to 10 and more', () => {
    expect(
      classifyLocations({ sizesM: [D05], locationMeansPerM3: [[3500]], classN: 5, edition: 1999 }).sizes[0]!
        .ucl95PerM3,
    ).toBeNull();
    const ten = Array.from({ length: 10 }, (_, i) => [i % 2 ? 3500 : 100]);
    const r = classifyLocations({ sizesM: [D05], locationMeansPerM3: ten, classN: 5, edition: 1999 });
    expect(r.sizes[0]!.ucl95PerM3).toBeNull();
    expect(r.pass).toBe(true);
  });

  it('reports pass/fail per size and per location; the limit compared is the rounded Table 1 value', () => {
    const r = classifyLocations({
      sizesM: [D03, D05],
      locationMeansPerM3: [
        [9000, 3520], // 3520 = the Table 1 value: passes, although the unrounded limit is 3516.76
        [10300, 1000], // fails at 0.3 µm (limit 10 200)
      ],
      classN: 5,
    });
    expect(r.pass).toBe(false);
    expect(r.sizes.map((s) => s.pass)).toEqual([false, true]);
    expect(r.sizes.map((s) => s.limitPerM3)).toEqual([10200, 3520]);
    expect(r.locations).toEqual([
      { pass: true, passBySize: [true, true] },
      { pass: false, passBySize: [false, true] },
    ]);
    expect(r.sizes[0]!.meanOfMeansPerM3).toBe(9650);
  });

  it('zero counts pass every class (zeros are valid data in ISO 1–4 air, practice)', () => {
    expect(classifyLocations({ sizesM: [D01, D05], locationMeansPerM3: [[0, 0]], classN: 1 }).pass).toBe(
      true,
    );
  });

  it('rejects bad input with ModelInputError naming the parameter', () => {
    const ok = { sizesM: [D05], locationMeansPerM3: [[1]], classN: 5 };
    expect(() => classifyLocations({ ...ok, classN: 0.5 })).toThrow('classifyLocations: classN = 0.5');
    expect(() => classifyLocations({ ...ok, classN: Number.NaN })).toThrow(ModelInputError);
    expect(() => classifyLocations({ ...ok, sizesM: [] })).toThrow('classifyLocations: sizesM');
    expect(() => classifyLocations({ ...ok, sizesM: [um(0.05)] })).toThrow(
      'classifyLocations: sizesM[0] = 5e-8 m',
    );
    expect(() => classifyLocations({ ...ok, sizesM: [D05, D03], locationMeansPerM3: [[1, 1]] })).toThrow(
      'classifyLocations: sizesM[1]',
    );
    expect(() => classifyLocations({ ...ok, locationMeansPerM3: [] })).toThrow(
      'classifyLocations: locationMeansPerM3',
    );
    expect(() => classifyLocations({ ...ok, locationMeansPerM3: [[1, 2]] })).toThrow('locationMeansPerM3[0]');
    expect(() => classifyLocations({ ...ok, locationMeansPerM3: [[-1]] })).toThrow(
      'classifyLocations: locationMeansPerM3[0][0] = -1 per m³',
    );
    expect(() => classifyLocations({ ...ok, locationMeansPerM3: [[Number.POSITIVE_INFINITY]] })).toThrow(
      ModelInputError,
    );
    expect(() => classifyLocations({ ...ok, edition: 2001 as 2015 })).toThrow(
      'classifyLocations: edition = 2001',
    );
    expect(() => classifyLocations(null as unknown as typeof ok)).toThrow(ModelInputError);
  });
});

describe('bestClassAchieved', () => {
  it('the Table 1 value itself achieves its class: 3520 per m³ ≥ 0.5 µm → ISO 5', () => {
    expect(bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[3520]] })).toBe(5);
    expect(bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[3530]] })).toBe(5.1);
  });

  it('it is the lowest 0.1 step that passes: that class passes, 0.1 below fails (definition)', () => {
    const data = {
      sizesM: [D01, D03, D05, D1],
      locationMeansPerM3: [
        [52000, 4100, 1700, 310],
        [61000, 3900, 2300, 120],
      ],
    };
    const n = bestClassAchieved(data)!;
    expect(classifyLocations({ ...data, classN: n }).pass).toBe(true);
    expect(classifyLocations({ ...data, classN: Math.round(n * 10 - 1) / 10 }).pass).toBe(false);
    // 61 000 at 0.1 µm needs 10^N ≥ 61 000 (N ≥ 4.79); 2300 at 0.5 µm needs N ≥ 4.82 → N = 4.9
    expect(n).toBe(4.9);
  });

  it('ten times the concentration is exactly one class worse (invariant; values ≥ 1000 so rounding scales)', () => {
    for (const x of [1200, 4567, 25000, 333333]) {
      const a = bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[x]] })!;
      const b = bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[10 * x]] })!;
      expect(Math.round((b - a) * 10)).toBe(10);
    }
  });

  it('zero air is ISO 1; air dirtier than ISO 9 gives null', () => {
    expect(bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[0]] })).toBe(1);
    expect(bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[4e7]] })).toBeNull();
  });

  it('the 1999 UCL rule can only make the best class worse, never better (invariant)', () => {
    const data = { sizesM: [D05], locationMeansPerM3: [[2000], [3000], [3300]] };
    expect(bestClassAchieved(data)).toBe(5);
    expect(bestClassAchieved({ ...data, edition: 1999 })!).toBeGreaterThan(5);
  });

  it('rejects bad input with ModelInputError', () => {
    expect(() => bestClassAchieved({ sizesM: [um(6)], locationMeansPerM3: [[1]] })).toThrow(
      'bestClassAchieved: sizesM[0]',
    );
    expect(() => bestClassAchieved({ sizesM: [D05], locationMeansPerM3: [[Number.NaN]] })).toThrow(
      ModelInputError,
    );
  });
});

describe('isoClassLimit and minimumSampleVolumeM3 reject bad input', () => {
  it.each([
    [0.9, D05],
    [9.1, D05],
    [Number.NaN, D05],
    [5, um(0.09)],
    [5, um(5.1)],
    [5, Number.POSITIVE_INFINITY],
    [5, -D05],
  ])('class %s at %s m', (n, d) => {
    expect(() => isoClassLimit(n, d)).toThrow(ModelInputError);
    expect(() => minimumSampleVolumeM3(n, d)).toThrow(ModelInputError);
  });

  it('messages name function, parameter, unit and range', () => {
    expect(() => isoClassLimit(5, 1e-5)).toThrow(
      'isoClassLimit: diameterM = 0.00001 m is out of range; allowed ≥ 1e-7 m and ≤ 0.000005 m',
    );
    expect(() => roundIsoLimit(-1)).toThrow('roundIsoLimit: valuePerM3 = -1 per m³');
  });
});
