import { describe, expect, it } from 'vitest';
import {
  binOf,
  interpLogLin,
  sizeIndexOf,
  sizeTable,
  TABLE_DIAMETERS_M,
  TABLE_POINTS,
} from '../../../src/engine/tables.ts';
import { createRng } from '../../../src/model/rng.ts';
import {
  SPECTRUM_EDGES_M,
  SPECTRUM_MAX_DIAMETER_M,
  SPECTRUM_MIN_DIAMETER_M,
} from '../../../src/model/spectrum.ts';

/** Log-uniform diameters from 1 nm to 1 mm (beyond both ends of the grid), every bin edge and the grid's ends. */
function diameters(): Float64Array {
  const rng = createRng(3);
  const xs = Array.from({ length: 20_000 }, () => 1e-9 * 10 ** (6 * rng.uniform()));
  xs.push(...SPECTRUM_EDGES_M, SPECTRUM_MIN_DIAMETER_M, SPECTRUM_MAX_DIAMETER_M, 0);
  return Float64Array.from(xs);
}

describe('sizeIndexOf', () => {
  const d = diameters();
  const ix = sizeIndexOf(d);

  it('puts every diameter in the bin binOf gives (edges belong to the bin above), ends clamped', () => {
    const wrong: number[] = [];
    for (let j = 0; j < d.length; j++) if (ix.bin[j] !== binOf(d[j]!)) wrong.push(d[j]!);
    expect(wrong).toEqual([]);
    // counts: the histogram of those bins, every diameter once
    const hist = new Array(ix.counts.length).fill(0);
    for (const b of ix.bin) hist[b]++;
    expect(Array.from(ix.counts)).toEqual(hist);
    // edge k is the lower edge of bin k (src/model/spectrum.ts), the last edge clamps into bin 47
    for (let k = 0; k < SPECTRUM_EDGES_M.length - 1; k++) expect(binOf(SPECTRUM_EDGES_M[k]!)).toBe(k);
  });

  it('holds ln d and the table cell and weight that interpLogLin uses', () => {
    const rng = createRng(4);
    const t = Float64Array.from({ length: TABLE_POINTS }, () => rng.uniform());
    for (let j = 0; j < d.length; j++) {
      if (d[j]! > 0) expect(ix.lnD[j]).toBe(Math.log(d[j]!));
      const i = ix.cell[j]!;
      const viaIndex = t[i]! + (t[i + 1]! - t[i]!) * ix.weight[j]!;
      expect(Math.abs(viaIndex - interpLogLin(t, d[j]!))).toBeLessThan(1e-12);
    }
  });

  it('is computed once per array (the same object comes back)', () => {
    expect(sizeIndexOf(d)).toBe(ix);
  });
});

describe('interpLogLin on the 256-per-decade grid', () => {
  // Hand computation: linear interpolation of e^(p·x) over a step Δ = ln 10 / 256 errs by at most
  // (pΔ)²/8 relative (second-derivative bound of linear interpolation); the check allows 2 % over it.
  const step = Math.LN10 / 256;
  for (const p of [0.5, 1, 2]) {
    it(`interpolates a power law d^${p} within (pΔ)²/8 = ${((p * step) ** 2 / 8).toExponential(2)} relative`, () => {
      const t = sizeTable((x) => x ** p);
      const rng = createRng(Math.round(10 * p));
      let worst = 0;
      for (let j = 0; j < 20_000; j++) {
        const x = TABLE_DIAMETERS_M[0]! * 10 ** (4 * rng.uniform());
        worst = Math.max(worst, Math.abs(interpLogLin(t, x) / x ** p - 1));
      }
      expect(worst).toBeLessThan((1.02 * (p * step) ** 2) / 8);
      expect(worst).toBeGreaterThan((0.5 * (p * step) ** 2) / 8); // the bound is close to what happens
    });
  }
});
