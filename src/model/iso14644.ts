/**
 * Cleanroom air classification by particle concentration, ISO 14644-1:2015 (with the 1999
 * edition's upper-confidence-limit rule as an option).
 *
 * Sizes are threshold diameters D in metres (the standard states them in µm; they are converted
 * here, at the edge of the formula). Concentrations are particles per m³ of size ≥ D.
 *
 * Tags on facts: [V] checked against the published standard (ISO 14644-1:2015 Table 1, cells of
 * classes 3, 5 and 7; the 52 m² → 10 and > 1000 m² steps of Table A.1; the 95 %/90 % basis of the
 * location count; the 1999 UCL rule being dropped in 2015); [M] recalled from the standard, not
 * re-verified here (other Table 1 cells, the intermediate steps of Table A.1, the minimum sample
 * volume wording, the 1999 edition's t table); [D] derived from a stated formula.
 */
import { finiteResult, ModelInputError, requireNumber } from './errors.ts';

const FN_LIMIT = 'isoClassLimit';
const D_MIN_M = 0.1e-6;
const D_MAX_M = 5e-6;

function requireClass(fn: string, classN: unknown): number {
  return requireNumber(fn, 'classN', classN, '', { min: 1, max: 9 });
}
function requireIsoSize(fn: string, param: string, d: unknown): number {
  return requireNumber(fn, param, d, 'm', { min: D_MIN_M, max: D_MAX_M });
}

/**
 * ISO 14644-1:2015 class limit: maximum permitted concentration of particles ≥ D.
 *
 *   C_n = 10^N · (0.1 / D)^2.08           (ISO 14644-1:2015 eq. (1)) [V]
 *
 * C_n particles per m³ of size ≥ D; N the ISO class number; D the threshold size in µm
 * (this function takes metres and converts). Valid 0.1 µm ≤ D ≤ 5 µm and 1 ≤ N ≤ 9. The standard
 * allows intermediate classes in steps of 0.1 (N = 1, 1.1, …, 9); this function accepts any value
 * in [1, 9] and leaves the choice of step to the caller (bestClassAchieved uses 0.1).
 * The value is unrounded; Table 1 rounds it (isoTable1Value, roundIsoLimit).
 *
 * @param classN ISO class N, 1–9
 * @param diameterM threshold size D in m, 1e-7 – 5e-6 (0.1–5 µm)
 * @returns C_n in particles per m³
 * @throws ModelInputError when N or D is out of range or not finite
 * @example isoClassLimit(5, 0.5e-6) // 3516.757… (Table 1 rounds it to 3520)
 */
export function isoClassLimit(classN: number, diameterM: number): number {
  const n = requireClass(FN_LIMIT, classN);
  const d = requireIsoSize(FN_LIMIT, 'diameterM', diameterM);
  return 10 ** n * (D_MIN_M / d) ** 2.08;
}

/**
 * Rounds a class limit the way ISO 14644-1:2015 Table 1 prints it: to a whole number with at
 * most three significant figures [D — the rule reproduces every [V] cell: 237, 102, 35, 3520, 832,
 * 352 000, 83 200, 2930].
 *
 *   v < 1000:  round to the nearest whole number (23.65 → 24, 236.5… → 237)
 *   v ≥ 1000:  round to three significant figures (3516.76 → 3520, 83 176 → 83 200)
 *
 * @param valuePerM3 an unrounded limit, finite and ≥ 0
 * @returns the rounded limit
 * @throws ModelInputError when the value is negative or not finite
 * @example roundIsoLimit(3516.757) // 3520
 */
export function roundIsoLimit(valuePerM3: number): number {
  const v = requireNumber('roundIsoLimit', 'valuePerM3', valuePerM3, 'per m³', { min: 0 });
  if (v < 1000) return Math.round(v);
  const step = 10 ** (Math.floor(Math.log10(v)) - 2);
  return finiteResult('roundIsoLimit', Math.round(v / step) * step);
}

/**
 * The six threshold sizes of ISO 14644-1:2015 Table 1 in nanometres (0.1, 0.2, 0.3, 0.5, 1 and
 * 5 µm), exact integers: which column a size falls in is decided on these, never on a size that
 * went through a floating-point unit conversion (0.1 µm / 1e6 is 1.0000000000000001e-7 m).
 */
export const ISO_TABLE1_SIZES_NM: readonly number[] = [100, 200, 300, 500, 1000, 5000];

/** The six threshold sizes of ISO 14644-1:2015 Table 1, in metres (nm / 1e9, correctly rounded). */
export const ISO_TABLE1_SIZES_M: readonly number[] = ISO_TABLE1_SIZES_NM.map((nm) => nm / 1e9);

/**
 * The footnotes of ISO 14644-1:2015 Table 1 that mark its cells (the standard's letters):
 *   b  "These concentrations will lead to large air sample volumes for classification.
 *       Sequential sampling procedure may be applied; see Annex D."            (on a value)
 *   c  "Concentration limits are not applicable in this region of the table due to very high
 *       particle concentration."                                                (a blank cell)
 *   d  "Sampling and statistical limitations for particles in low concentrations make
 *       classification inappropriate."                                          (a blank cell)
 *   e  "Sample collection limitations for both particles in low concentrations and sizes
 *       greater than 1 µm make classification at this particle size inappropriate, due to
 *       potential particle losses in the sampling system."                     (a blank cell)
 *   f  "In order to specify this particle size in association with ISO Class 5, the macroparticle
 *       descriptor M may be adapted and used in conjunction with at least one other particle
 *       size (see C.7)."                                                        (class 5 at 5 µm)
 * Wording as recalled from the standard [M]; which cells carry them is in ISO_TABLE1_NOTES.
 */
export type IsoTable1Note = 'b' | 'c' | 'd' | 'e' | 'f';

/**
 * The notes of every cell of ISO 14644-1:2015 Table 1, rows class 1–9, columns the six sizes
 * (ISO_TABLE1_SIZES_NM). A cell is blank exactly when it carries c, d or e; b marks a value.
 * Rows of classes 3, 5 and 7 are [V] for which cells are blank; the letters and the other rows
 * are as recalled from the standard [M]. The blank cells are a decision of the standard, written
 * here as it prints them, not derived: the formula would give class 5 at 5 µm = 29 (printed in the
 * 1999 edition) and class 7 at 0.3 µm = 10 200 000.
 */
export const ISO_TABLE1_NOTES: readonly (readonly (readonly IsoTable1Note[])[])[] = [
  /* class 1 */ [['b'], ['d'], ['d'], ['d'], ['d'], ['e']],
  /* class 2 */ [[], ['b'], ['b'], ['d'], ['d'], ['e']],
  /* class 3 */ [[], [], [], ['b'], ['d'], ['e']],
  /* class 4 */ [[], [], [], [], ['b'], ['e']],
  /* class 5 */ [[], [], [], [], [], ['d', 'e', 'f']],
  /* class 6 */ [[], [], [], [], [], []],
  /* class 7 */ [['c'], ['c'], ['c'], [], [], []],
  /* class 8 */ [['c'], ['c'], ['c'], [], [], []],
  /* class 9 */ [['c'], ['c'], ['c'], [], [], []],
];

/** A cell of ISO 14644-1:2015 Table 1: its printed value, or a blank cell with the reason. */
export type IsoTable1Cell =
  | { blank: false; valuePerM3: number; notes: readonly IsoTable1Note[] }
  | { blank: true; notes: readonly IsoTable1Note[]; words: string };

const BLANK_WORDS: Record<'c' | 'd' | 'e', string> = {
  c: 'not applicable: the particle concentration is very high (Table 1 note c)',
  d: 'classification inappropriate: too few particles for sampling and statistics (Table 1 note d)',
  e: 'classification inappropriate at this size: few particles above 1 µm and their losses in sampling (Table 1 note e)',
};

/**
 * A cell of ISO 14644-1:2015 Table 1 on exact inputs: an integer class and a size in whole
 * nanometres. The value is the formula on the exact ratio 100 nm / D, C = 10^N (100/D_nm)^2.08,
 * rounded as the table prints it (roundIsoLimit); a blank cell says what the standard calls it —
 * "not applicable" (note c) or "classification inappropriate" (notes d, e) — and why.
 *
 * @param classN integer 1–9
 * @param sizeNm one of 100, 200, 300, 500, 1000, 5000 (nm)
 * @throws ModelInputError when classN is not an integer 1–9 or sizeNm is not a Table 1 column
 * @example isoTable1Cell(1, 100) // { blank: false, valuePerM3: 10, notes: ['b'] }
 * @example isoTable1Cell(7, 100).words // 'not applicable: the particle concentration is very high (Table 1 note c)'
 */
export function isoTable1Cell(classN: number, sizeNm: number): IsoTable1Cell {
  const fn = 'isoTable1Cell';
  const n = requireNumber(fn, 'classN', classN, '', { min: 1, max: 9, integer: true });
  const col = ISO_TABLE1_SIZES_NM.indexOf(sizeNm);
  if (col < 0)
    throw new ModelInputError(fn, 'sizeNm', 'nm', 'one of 100, 200, 300, 500, 1000, 5000 nm', sizeNm);
  const notes = ISO_TABLE1_NOTES[n - 1]![col]!;
  const blankNotes = notes.filter((x): x is 'c' | 'd' | 'e' => x === 'c' || x === 'd' || x === 'e');
  if (blankNotes.length > 0) {
    // The most specific reason first: e (size) before d (low concentration); f adds the M descriptor.
    const main = blankNotes.includes('e') ? 'e' : blankNotes[0]!;
    const words =
      BLANK_WORDS[main] +
      (notes.includes('f')
        ? '; the macroparticle descriptor M may be used instead (Table 1 note f, C.7)'
        : '');
    return { blank: true, notes, words };
  }
  return { blank: false, valuePerM3: roundIsoLimit(10 ** n * (100 / sizeNm) ** 2.08), notes };
}

/**
 * The Table 1 column of a size in metres, in whole nanometres, or null when the size is not one
 * of the six columns. The size is matched to the nearest whole nanometre with a relative
 * tolerance of 1e-9 — far wider than the 1e-16 a unit conversion's rounding moves a size, far
 * narrower than any two sizes a counter reports — so 0.1 µm converted to m (1.0000000000000001e-7)
 * is the 100 nm column.
 *
 * @example isoTable1ColumnNm(0.1 / 1e6) // 100
 * @example isoTable1ColumnNm(4e-7) // null
 */
export function isoTable1ColumnNm(diameterM: number): number | null {
  const d = requireNumber('isoTable1ColumnNm', 'diameterM', diameterM, 'm', { min: 0, minExclusive: true });
  const nm = Math.round(d * 1e9);
  return ISO_TABLE1_SIZES_NM.includes(nm) && Math.abs(nm / 1e9 - d) <= 1e-9 * d ? nm : null;
}

/**
 * A cell of ISO 14644-1:2015 Table 1 for a size in metres: the printed value, or null for a blank
 * cell (isoTable1Cell says which and why). The size is matched to its column by
 * isoTable1ColumnNm, so a size that went through a unit conversion finds its column exactly.
 * Only integer classes are tabulated in Table 1 (intermediate classes are in Table E.1, not
 * reproduced here); use isoClassLimit and roundIsoLimit for those.
 *
 * @param classN integer 1–9
 * @param diameterM one of ISO_TABLE1_SIZES_M (0.1, 0.2, 0.3, 0.5, 1, 5 µm), matched to 1e-9 relative
 * @returns the Table 1 value in particles per m³, or null for a blank cell
 * @throws ModelInputError when classN is not an integer 1–9 or diameterM is not a Table 1 size
 * @example isoTable1Value(5, 0.5e-6) // 3520;  isoTable1Value(1, 0.1 / 1e6) // 10;  isoTable1Value(7, 0.1e-6) // null
 */
export function isoTable1Value(classN: number, diameterM: number): number | null {
  const fn = 'isoTable1Value';
  requireNumber(fn, 'classN', classN, '', { min: 1, max: 9, integer: true });
  const d = requireIsoSize(fn, 'diameterM', diameterM);
  const nm = isoTable1ColumnNm(d);
  if (nm === null)
    throw new ModelInputError(fn, 'diameterM', 'm', 'one of 1e-7, 2e-7, 3e-7, 5e-7, 1e-6, 5e-6 m', diameterM);
  const cell = isoTable1Cell(classN, nm);
  return cell.blank ? null : cell.valuePerM3;
}

/**
 * Minimum single sample volume per location (ISO 14644-1:2015 A.4.4) [M].
 *
 *   V_s = (20 / C_n,m) × 1000   litres,  and at least 2 L (sampling time at least 1 min)
 *
 * C_n,m the class limit (per m³) at the largest considered size; 20 is the number of particles
 * that would be counted if the concentration were at the class limit. In m³: V_s = 20 / C_n,m.
 * voidcast uses the unrounded formula limit (ISO 5 at 0.5 µm: 20 / 3516.76 m³ = 5.69 L; the
 * rounded 3520 would give 5.68 L). The 1-minute minimum time is the caller's to enforce.
 *
 * @param classN 1–9
 * @param diameterM the largest considered size, 0.1–5 µm (in m)
 * @returns V_s in m³ (≥ 0.002)
 * @throws ModelInputError when N or D is out of range
 * @example minimumSampleVolumeM3(5, 0.5e-6) // 0.005687 m³ = 5.69 L
 */
export function minimumSampleVolumeM3(classN: number, diameterM: number): number {
  const fn = 'minimumSampleVolumeM3';
  const n = requireClass(fn, classN);
  const d = requireIsoSize(fn, 'diameterM', diameterM);
  return Math.max(20 / isoClassLimit(n, d), 0.002);
}

/**
 * ISO 14644-1:2015 Annex A Table A.1: minimum number of sampling locations for a cleanroom or
 * clean zone of area A (m²), rows as [largest area of the row in m², locations]. A room whose area
 * falls between two rows takes the next larger row. Basis: at least 95 % confidence that at least
 * 90 % of the area does not exceed the class limit [V]. 52 m² → 10 and 1000 m² → 27 are [V]; the
 * other steps are as recalled from the standard [M].
 */
export const ISO_TABLE_A1: readonly (readonly [areaM2: number, locations: number])[] = [
  [2, 1],
  [4, 2],
  [6, 3],
  [8, 4],
  [10, 5],
  [24, 6],
  [28, 7],
  [32, 8],
  [36, 9],
  [52, 10],
  [56, 11],
  [64, 12],
  [68, 13],
  [72, 14],
  [76, 15],
  [104, 16],
  [108, 17],
  [116, 18],
  [148, 19],
  [156, 20],
  [192, 21],
  [232, 22],
  [276, 23],
  [352, 24],
  [436, 25],
  [636, 26],
  [1000, 27],
];

/**
 * Minimum number of sampling locations N_L for classification (ISO 14644-1:2015 A.4.1).
 *
 *   A ≤ 1000 m²: the row of Table A.1 whose area is the smallest ≥ A
 *   A > 1000 m²: N_L = ⌈27 × A / 1000⌉                                           [V]
 *
 * @param areaM2 floor area of the cleanroom or clean zone, m², > 0 and ≤ 1e7
 * @returns the minimum number of locations (integer ≥ 1)
 * @throws ModelInputError when areaM2 is not > 0, too large, or not finite
 * @example samplingLocations(52) // 10;  samplingLocations(1500) // 41
 */
export function samplingLocations(areaM2: number): number {
  const a = requireNumber('samplingLocations', 'areaM2', areaM2, 'm²', {
    min: 0,
    minExclusive: true,
    max: 1e7,
  });
  for (const [maxArea, n] of ISO_TABLE_A1) if (a <= maxArea) return n;
  // (27 × A) / 1000 rather than 27 × (A / 1000): exact for whole square metres, so that e.g.
  // 2000 m² gives 54 and not a rounding-up to 55.
  return Math.ceil((27 * a) / 1000);
}

/**
 * One-sided Student t quantiles t_0.95 for m − 1 = 1 … 8 degrees of freedom, as in ISO 14644-1:1999
 * Table C.1 [M]; equal to the 95 % quantile of Student's t to the printed figures (checked
 * against jStat in the tests).
 */
export const ISO1999_T95: readonly number[] = [6.31, 2.92, 2.35, 2.13, 2.02, 1.94, 1.9, 1.86];

/** Which pass rule to apply. */
export type IsoEdition = 2015 | 1999;

/** Input of bestClassAchieved (and, with classN, of classifyLocations). */
export interface IsoLocationData {
  /** Considered threshold sizes, m, strictly increasing, each 0.1–5 µm. */
  sizesM: readonly number[];
  /** Per location, per size: the location's mean concentration (particles ≥ size per m³). */
  locationMeansPerM3: readonly (readonly number[])[];
  /**
   * 2015 (default): every location mean ≤ the limit at every considered size.
   * 1999: that, and for 2–9 locations also the 95 % UCL of the mean of the location means
   * (ISO 14644-1:1999 Annex C).
   */
  edition?: IsoEdition;
}

/** Input of classifyLocations: the data and the ISO class to test (1–9). */
export interface IsoClassTest extends IsoLocationData {
  classN: number;
}

/** Per-size outcome. */
export interface IsoSizeResult {
  diameterM: number;
  /** The class limit at this size, rounded as Table 1 rounds it. */
  limitPerM3: number;
  /** Mean of the location means, particles per m³. */
  meanOfMeansPerM3: number;
  /** 95 % UCL of the mean of means (edition 1999 with 2–9 locations), else null. */
  ucl95PerM3: number | null;
  pass: boolean;
}

/** Result of a classification test. */
export interface IsoClassification {
  classN: number;
  edition: IsoEdition;
  pass: boolean;
  sizes: IsoSizeResult[];
  /** Per location: pass at every size, and pass per size (same order as sizesM). */
  locations: { pass: boolean; passBySize: boolean[] }[];
}

function checkData(
  fn: string,
  data: IsoLocationData,
): { sizes: number[]; means: number[][]; edition: IsoEdition } {
  if (data === null || typeof data !== 'object') throw new ModelInputError(fn, 'data', '', 'an object', data);
  const edition = data.edition ?? 2015;
  if (edition !== 2015 && edition !== 1999)
    throw new ModelInputError(fn, 'edition', '', 'one of 2015, 1999', edition);
  if (!Array.isArray(data.sizesM) || data.sizesM.length === 0)
    throw new ModelInputError(fn, 'sizesM', 'm', 'a non-empty array of sizes 0.1–5 µm', data.sizesM);
  const sizes = data.sizesM.map((d, j) => requireIsoSize(fn, `sizesM[${j}]`, d));
  for (let j = 1; j < sizes.length; j++)
    if (!(sizes[j]! > sizes[j - 1]!))
      throw new ModelInputError(
        fn,
        `sizesM[${j}]`,
        'm',
        `> sizesM[${j - 1}] = ${sizes[j - 1]} m (strictly increasing)`,
        sizes[j],
      );
  const rows = data.locationMeansPerM3;
  if (!Array.isArray(rows) || rows.length === 0)
    throw new ModelInputError(fn, 'locationMeansPerM3', 'per m³', 'at least one location', rows);
  const means = rows.map((row, i) => {
    if (!Array.isArray(row) || row.length !== sizes.length)
      throw new ModelInputError(
        fn,
        `locationMeansPerM3[${i}]`,
        'per m³',
        `an array of ${sizes.length} means`,
        row,
      );
    return row.map((v, j) => requireNumber(fn, `locationMeansPerM3[${i}][${j}]`, v, 'per m³', { min: 0 }));
  });
  return { sizes, means, edition };
}

/**
 * 95 % upper confidence limit of the mean of m location means (ISO 14644-1:1999 C.3) [M]:
 *
 *   UCL = M + t_0.95(m − 1) · s / √m,   M = Σ x_i / m,   s² = Σ (x_i − M)² / (m − 1)
 *
 * Defined for 2 ≤ m ≤ 9 (the 1999 edition applies it only then).
 *
 * @param locationMeansPerM3 2–9 location means, each ≥ 0, particles per m³
 * @returns the UCL, particles per m³
 * @throws ModelInputError for fewer than 2 or more than 9 means, or a negative / non-finite mean
 * @example iso1999Ucl95([2000, 3000, 3300]) // 3914.2
 */
export function iso1999Ucl95(locationMeansPerM3: readonly number[]): number {
  const fn = 'iso1999Ucl95';
  if (!Array.isArray(locationMeansPerM3) || locationMeansPerM3.length < 2 || locationMeansPerM3.length > 9)
    throw new ModelInputError(
      fn,
      'locationMeansPerM3',
      'per m³',
      'an array of 2–9 location means',
      locationMeansPerM3,
    );
  const x = locationMeansPerM3.map((v, i) =>
    requireNumber(fn, `locationMeansPerM3[${i}]`, v, 'per m³', { min: 0 }),
  );
  const m = x.length;
  const mean = x.reduce((a, b) => a + b, 0) / m;
  const s = Math.sqrt(x.reduce((a, b) => a + (b - mean) ** 2, 0) / (m - 1));
  return finiteResult(fn, mean + (ISO1999_T95[m - 2]! * s) / Math.sqrt(m));
}

function classify(
  classN: number,
  sizes: number[],
  means: number[][],
  edition: IsoEdition,
): IsoClassification {
  const m = means.length;
  const sizeResults: IsoSizeResult[] = sizes.map((d, j) => {
    const limit = roundIsoLimit(isoClassLimit(classN, d));
    const column = means.map((row) => row[j]!);
    const meanOfMeans = column.reduce((a, b) => a + b, 0) / m;
    const ucl = edition === 1999 && m >= 2 && m <= 9 ? iso1999Ucl95(column) : null;
    const pass = column.every((v) => v <= limit) && (ucl === null || ucl <= limit);
    return { diameterM: d, limitPerM3: limit, meanOfMeansPerM3: meanOfMeans, ucl95PerM3: ucl, pass };
  });
  const locations = means.map((row) => {
    const passBySize = row.map((v, j) => v <= sizeResults[j]!.limitPerM3);
    return { pass: passBySize.every(Boolean), passBySize };
  });
  return { classN, edition, pass: sizeResults.every((s) => s.pass), sizes: sizeResults, locations };
}

/**
 * Tests whether measured location means meet ISO class N at every considered size.
 *
 * 2015 rule (ISO 14644-1:2015 A.6.2) [M]: the area meets the class if the mean concentration at
 * every sampling location is ≤ the class limit at every considered size. The limit compared with
 * is the class limit rounded as in Table 1 (whole number, at most three significant figures).
 * 1999 rule (optional, edition: 1999): additionally, with 2–9 locations, the 95 % UCL of the mean
 * of the location means must be ≤ the limit (ISO 14644-1:1999 Annex C) [M]; the 2015 edition
 * dropped this [V]. The 1999 edition let one outlying location be left out of the UCL when its
 * cause (a procedural error or a malfunction) was documented and the location sampled again [M]:
 * a judgement on evidence outside the counts, so it is the caller's — leave that location out of
 * `locationMeansPerM3`.
 * Whether a cell is applicable in Table 1 is not checked here (see isoTable1Value).
 *
 * @param test sizes (m), location means (per m³) per location and size, the class N (1–9), edition
 * @returns pass overall, per size (limit, mean of means, UCL) and per location
 * @throws ModelInputError for bad sizes, a ragged or negative matrix, N out of range, unknown edition
 * @example classifyLocations({ sizesM: [5e-7], locationMeansPerM3: [[2000], [3000], [3300]], classN: 5 }).pass // true
 */
export function classifyLocations(test: IsoClassTest): IsoClassification {
  const fn = 'classifyLocations';
  const { sizes, means, edition } = checkData(fn, test);
  return classify(requireClass(fn, test.classN), sizes, means, edition);
}

/**
 * The cleanest ISO class the data meet: the lowest N in steps of 0.1 from 1 to 9 for which
 * classifyLocations passes (same rule and edition). Concentrations rise with N at every size, so
 * the first passing N is the answer; null when even class 9 fails.
 *
 * @param data sizes (m), location means (per m³), edition
 * @returns N with one decimal (1, 1.1, …, 9), or null
 * @throws ModelInputError as classifyLocations
 * @example bestClassAchieved({ sizesM: [5e-7], locationMeansPerM3: [[3520]] }) // 5
 */
export function bestClassAchieved(data: IsoLocationData): number | null {
  const { sizes, means, edition } = checkData('bestClassAchieved', data);
  for (let k = 10; k <= 90; k++) {
    const n = k / 10;
    if (classify(n, sizes, means, edition).pass) return n;
  }
  return null;
}
