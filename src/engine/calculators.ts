/**
 * Calculators: single models an engineer wants by hand, with inputs in the units of the trade
 * (µm, mm, °C, J/m²) converted to SI here at the edge. The CLI (`voidcast calc <id>`) and the
 * Calculators page read this one table, so they cannot disagree.
 *
 * Each calculator states its formula and its published source beside the result.
 */
import {
  cunninghamSlip,
  depositionVelocity,
  meanFreePath,
  settlingVelocity,
  stagnationDiffusionVelocity,
} from '../model/aerosol.ts';
import { cc1246CountPer01m2 } from '../model/cc1246.ts';
import {
  ISO_TABLE1_SIZES_NM,
  isoClassLimit,
  isoTable1Cell,
  minimumSampleVolumeM3,
  samplingLocations,
} from '../model/iso14644.ts';
import { garwoodInterval } from '../model/stats/garwood.ts';
import { cToK, M3_PER_FT3, m3ToL, mmToM, umToM } from '../model/units.ts';
import { particleHeight, SI100_PLATE_MODULUS_PA, voidRadius, workOfAdhesion } from '../model/void.ts';
import { criticalAreaRectangle, murphyYield, negativeBinomialYield, poissonYield } from '../model/yield.ts';
import { type CalcChoice, type CalcResult, type Calculator, exactWholeUnits } from './calc-core.ts';

export {
  type CalcChoice,
  type CalcField,
  CalcInputError,
  type CalcOutput,
  type CalcRange,
  type CalcResult,
  type Calculator,
  describeRange,
  formatCalcValue,
  parseCalcValues,
  runCalculator,
} from './calc-core.ts';

const num = (v: number | string): number => v as number;
/** ISO 14644-1:2015: classes 1 to 9 (steps of 0.1), sizes 0.1 to 5 µm. */
const ISO_CLASS_RANGE = { min: 1, max: 9 };
const ISO_SIZE_RANGE_UM = { min: 0.1, max: 5 };
const str = (v: number | string): string => v as string;

const classLimit: Calculator = {
  id: 'class-limit',
  title: 'ISO 14644-1 class limit',
  summary: 'Maximum permitted airborne concentration of particles at or above a size, for an ISO class.',
  formula: 'Cₙ = 10ᴺ · (0.1 / D)^2.08',
  symbols: 'Cₙ particles per m³ of size ≥ D; N ISO class (1–9, steps of 0.1); D threshold size in µm (0.1–5)',
  source: 'ISO 14644-1:2015, eq. (1) and Table 1',
  fields: [
    { name: 'class', label: 'ISO class N', unit: '', default: '5', range: ISO_CLASS_RANGE },
    { name: 'size', label: 'Particle size D', unit: 'µm', default: '0.5', range: ISO_SIZE_RANGE_UM },
  ],
  compute(v, text) {
    // Decided on the decimals typed: a size of whole nanometres is used as exactly that (100 nm,
    // not 0.1 / 1e6 m = 1.0000000000000001e-7 m), and Table 1 is looked up on the integers.
    const sizeNm = exactWholeUnits(text.size!, 3);
    const classInt = exactWholeUnits(text.class!, 0);
    const d = sizeNm !== null ? sizeNm / 1e9 : umToM(num(v.size!));
    const c = isoClassLimit(num(v.class!), d);
    const cell =
      classInt !== null && sizeNm !== null && ISO_TABLE1_SIZES_NM.includes(sizeNm)
        ? isoTable1Cell(classInt, sizeNm)
        : null;
    const table: CalcResult['outputs'][number] = cell
      ? cell.blank
        ? { label: 'Table 1 value', value: `blank — ${cell.words}`, unit: '' }
        : { label: 'Table 1 value', value: cell.valuePerM3, unit: 'particles/m³' }
      : {
          label: 'Table 1 value',
          value:
            classInt === null
              ? 'none: Table 1 lists whole classes only (the formula applies)'
              : 'none: Table 1 lists 0.1, 0.2, 0.3, 0.5, 1 and 5 µm only (the formula applies)',
          unit: '',
        };
    return {
      outputs: [
        { label: 'Class limit', value: c, unit: 'particles/m³', digits: 6 },
        { label: 'Class limit', value: c * M3_PER_FT3, unit: 'particles/ft³', digits: 4 },
        table,
      ],
      notes: [
        'Table 1 rounds the formula to a whole number with at most three significant figures; cells it leaves blank are marked "not applicable" (very high concentration, note c) or "classification inappropriate" (too few particles, notes d and e).',
        ...(cell && !cell.blank && cell.notes.includes('b')
          ? [
              'Table 1 note b: this concentration needs large air sample volumes; sequential sampling (Annex D) may be applied.',
            ]
          : []),
      ],
    };
  },
};

const sampleVolume: Calculator = {
  id: 'sample-volume',
  title: 'Minimum single sample volume',
  summary: 'The smallest volume one sample must draw at each location when classifying a room.',
  formula: 'V_s = (20 / Cₙ,ₘ) × 1000 L, at least 2 L (and at least 1 min of sampling)',
  symbols: 'V_s sample volume in L; Cₙ,ₘ class limit (particles/m³) at the largest considered size',
  source: 'ISO 14644-1:2015, Annex A.4.4 (as recalled; not re-verified)',
  fields: [
    { name: 'class', label: 'ISO class N', unit: '', default: '5', range: ISO_CLASS_RANGE },
    { name: 'size', label: 'Largest considered size', unit: 'µm', default: '0.5', range: ISO_SIZE_RANGE_UM },
  ],
  compute(v) {
    const vs = minimumSampleVolumeM3(num(v.class!), umToM(num(v.size!)));
    return {
      outputs: [
        { label: 'Minimum sample volume', value: m3ToL(vs), unit: 'L', digits: 4 },
        { label: 'At 28.3 L/min (1 CFM)', value: m3ToL(vs) / 28.316846592, unit: 'min', digits: 3 },
      ],
      notes: ['Sample for at least one minute whatever the volume.'],
    };
  },
};

const locations: Calculator = {
  id: 'locations',
  title: 'Number of sampling locations',
  summary: 'How many locations a classification must sample for a room or zone of a given area.',
  formula: 'N_L from Table A.1 by area; above 1000 m²: N_L = 27 × A / 1000, rounded up',
  symbols: 'N_L number of locations; A floor area of the cleanroom or clean zone in m²',
  source: 'ISO 14644-1:2015, Annex A, Table A.1 (basis: 95 % confidence that ≥ 90 % of the area complies)',
  fields: [
    {
      name: 'area',
      label: 'Floor area A',
      unit: 'm²',
      default: '52',
      range: { min: 0, minExclusive: true, max: 1e7 },
    },
  ],
  compute(v) {
    return {
      outputs: [{ label: 'Sampling locations', value: samplingLocations(num(v.area!)), unit: '' }],
      notes: ['A room whose area falls between two rows of the table takes the next larger row.'],
    };
  },
};

const ORIENTATIONS: CalcChoice[] = [
  { value: 'faceUp', label: 'face up' },
  { value: 'faceDown', label: 'face down' },
  { value: 'vertical', label: 'vertical' },
];

const deposition: Calculator = {
  id: 'deposition-velocity',
  title: 'Deposition velocity onto a wafer',
  summary: 'How fast airborne particles of one size land on a wafer in laminar downflow.',
  formula:
    'face up v_d = v_s / (1 − e^(−v_s/v_diff)); face down v_d = v_s / (e^(v_s/v_diff) − 1); vertical v_d = v_diff; v_diff = 0.850 (aν)^½ Sc^(−2/3), a = 4U/(πD_w)',
  symbols:
    'v_s Stokes settling velocity (m/s) with Cunningham slip; v_diff Brownian transfer velocity (m/s); ν kinematic viscosity of air; Sc = ν/D_B; U downflow speed; D_w wafer diameter',
  source:
    'Hinds, Aerosol Technology, 2nd ed. (1999), ch. 3 and 7; stagnation-flow mass transfer (Homann 1936 flow, Lévêque layer)',
  fields: [
    // aerosol.ts: 1 nm – 100 µm, 0 < U ≤ 10 m/s, wafer 0.01–1 m, 1–25 000 kg/m³, 200–500 K, factor 0–100.
    {
      name: 'size',
      label: 'Particle diameter d',
      unit: 'µm',
      default: '0.2',
      range: { min: 0.001, max: 100 },
    },
    { name: 'orientation', label: 'Wafer surface', unit: '', default: 'faceUp', choices: ORIENTATIONS },
    {
      name: 'downflow',
      label: 'Downflow speed U',
      unit: 'm/s',
      default: '0.3',
      range: { min: 0, minExclusive: true, max: 10 },
    },
    { name: 'wafer', label: 'Wafer diameter', unit: 'mm', default: '300', range: { min: 10, max: 1000 } },
    {
      name: 'density',
      label: 'Particle density',
      unit: 'kg/m³',
      default: '1000',
      range: { min: 1, max: 25000 },
    },
    {
      name: 'temperature',
      label: 'Air temperature',
      unit: '°C',
      default: '20',
      range: { min: -73.15, max: 226.85 },
    },
    {
      name: 'charge',
      label: 'Electrostatic factor',
      unit: '×',
      default: '1',
      range: { min: 0, minExclusive: true, max: 100 },
      help: 'multiplies the diffusive part',
    },
  ],
  compute(v) {
    const d = umToM(num(v.size!));
    const common = {
      downflowMps: num(v.downflow!),
      waferDiameterM: mmToM(num(v.wafer!)),
      temperatureK: cToK(num(v.temperature!)),
      densityKgM3: num(v.density!),
    };
    const vd = depositionVelocity(d, {
      ...common,
      orientation: str(v.orientation!) as 'faceUp',
      electrostaticFactor: num(v.charge!),
    });
    const vs = settlingVelocity(d, { densityKgM3: common.densityKgM3, temperatureK: common.temperatureK });
    const vdiff = stagnationDiffusionVelocity(d, common);
    const cc = cunninghamSlip(d, meanFreePath(common.temperatureK, 101325), 'hinds');
    return {
      outputs: [
        { label: 'Deposition velocity v_d', value: vd, unit: 'm/s', digits: 3 },
        { label: 'Settling velocity v_s', value: vs, unit: 'm/s', digits: 3 },
        { label: 'Diffusive velocity v_diff', value: vdiff, unit: 'm/s', digits: 3 },
        { label: 'Cunningham slip C_c', value: cc, unit: '', digits: 4 },
        {
          label: 'Fallout per hour at 100 /m³',
          value: vd * 100 * 3600 * Math.PI * (common.waferDiameterM / 2) ** 2,
          unit: 'particles per wafer',
          digits: 3,
        },
      ],
      notes: [
        'Electrostatic charge can raise sub-micron deposition by about an order of magnitude; set the factor explicitly.',
      ],
    };
  },
};

const poissonInterval: Calculator = {
  id: 'poisson-interval',
  title: 'Exact Poisson interval for a count',
  summary: 'Confidence limits of the mean when you counted n particles, voids or dies.',
  formula: 'lower = ½ χ²(α/2; 2n) (0 when n = 0), upper = ½ χ²(1 − α/2; 2n + 2)',
  symbols: 'n observed count; α = 1 − confidence; χ²(p; k) the chi-square quantile with k degrees of freedom',
  source: 'Garwood, Biometrika 28 (1936) 437',
  fields: [
    {
      name: 'count',
      label: 'Observed count n',
      unit: '',
      default: '10',
      range: { min: 0, max: 1e8, integer: true },
    },
    {
      name: 'confidence',
      label: 'Confidence',
      unit: '',
      default: '0.95',
      range: { min: 0, minExclusive: true, max: 1, maxExclusive: true },
    },
  ],
  compute(v) {
    const r = garwoodInterval(num(v.count!), num(v.confidence!));
    return {
      outputs: [
        { label: 'Lower limit', value: r.lower, unit: '', digits: 5 },
        { label: 'Upper limit', value: r.upper, unit: '', digits: 5 },
      ],
      notes: [],
    };
  },
};

const cc1246: Calculator = {
  id: 'cc1246',
  title: 'Surface cleanliness level (IEST-STD-CC1246)',
  summary: 'Particles at or above a size per 0.1 m² for a product cleanliness level.',
  formula: 'log₁₀ N = 0.926 · (log₁₀² L − log₁₀² x)',
  symbols: 'N particles ≥ x per 0.1 m²; L cleanliness level; x particle size in µm (≥ 1)',
  source: 'IEST-STD-CC1246E, Product Cleanliness Levels',
  fields: [
    { name: 'level', label: 'Level L', unit: '', default: '100', range: { min: 1, max: 10000 } },
    { name: 'size', label: 'Particle size x', unit: 'µm', default: '5', range: { min: 1, max: 10000 } },
  ],
  compute(v) {
    const n = cc1246CountPer01m2(num(v.level!), num(v.size!));
    return {
      outputs: [
        { label: 'Particles ≥ x', value: n, unit: 'per 0.1 m²', digits: 4 },
        { label: 'On a 300 mm wafer', value: n * 10 * Math.PI * 0.15 ** 2, unit: 'per wafer', digits: 4 },
      ],
      notes: [],
    };
  },
};

const VOID_MODELS: CalcChoice[] = [
  { value: 'two-plate', label: 'two flexible wafers' },
  { value: 'textbook', label: 'textbook preset (one wafer on a rigid flat, W read as γ)' },
  { value: 'rigid-partner', label: 'die on a rigid wafer' },
];
const CONVENTIONS: CalcChoice[] = [
  { value: 'per-surface-gamma', label: 'per-surface γ (razor blade): W = 2γ' },
  { value: 'work-of-adhesion', label: 'work of adhesion W' },
];

const voidRadiusCalc: Calculator = {
  id: 'void-radius',
  jointLimits:
    'the particle height k_h × d must be below the thickness of the thinner flexible plate, and the work of adhesion at most 100 J/m² (W = 2γ with the per-surface convention, so γ at most 50 J/m²)',
  title: 'Void radius around a trapped particle',
  summary: 'The unbonded ring a particle of a given size holds open between two bonded plates.',
  formula:
    'thick plate (R ≥ 2t): R⁴ = 8 D_eff h² / W, D = E′t³/12, D_eff = D₁D₂/(D₁+D₂); small gap (R < 2t): R = D_eff h² / (W t³) (continuous at R = 2t); textbook: R = [2E′t³/(3γ)]^¼ h^½',
  symbols:
    'R void radius (m); h = k_h·d particle height (m); t thickness of the thinner flexible plate (m); E′ = E/(1−ν²) plate modulus (Pa); W work of adhesion (J/m²) = 2γ',
  source:
    'Stengl et al., J. Appl. Phys. 65 (1989) 1876 [M]; Tong & Gösele, Semiconductor Wafer Bonding (1999); small-gap closure: voidcast’s own (see docs/models.md)',
  fields: [
    // void.ts: sizes and thicknesses above 0 and at most 10 mm, E′ ≤ 1e13 Pa, W ≤ 100 J/m², 0 < k_h ≤ 1.
    {
      name: 'size',
      label: 'Particle diameter d',
      unit: 'µm',
      default: '1',
      range: { min: 0, minExclusive: true, max: 10000 },
    },
    {
      name: 'kh',
      label: 'Height factor k_h',
      unit: '',
      default: '1',
      range: { min: 0, minExclusive: true, max: 1 },
      help: '1 for compact particles, < 1 for flakes',
    },
    { name: 'model', label: 'Plates', unit: '', default: 'two-plate', choices: VOID_MODELS },
    {
      name: 'top',
      label: 'Top (or die) thickness',
      unit: 'µm',
      default: '775',
      range: { min: 0, minExclusive: true, max: 10000 },
    },
    {
      name: 'bottom',
      label: 'Bottom thickness',
      unit: 'µm',
      default: '775',
      range: { min: 0, minExclusive: true, max: 10000 },
    },
    {
      name: 'modulus',
      label: 'Plate modulus E′',
      unit: 'GPa',
      default: String(SI100_PLATE_MODULUS_PA / 1e9),
      range: { min: 0, minExclusive: true, max: 10000 },
    },
    {
      name: 'energy',
      label: 'Interface energy',
      unit: 'J/m²',
      default: '0.1',
      range: { min: 0, minExclusive: true, max: 100 },
    },
    {
      name: 'convention',
      label: 'Energy convention',
      unit: '',
      default: 'work-of-adhesion',
      choices: CONVENTIONS,
    },
  ],
  compute(v) {
    const E = num(v.modulus!) * 1e9;
    const w = workOfAdhesion(num(v.energy!), str(v.convention!) as 'work-of-adhesion');
    const r = voidRadius({
      heightM: particleHeight(umToM(num(v.size!)), num(v.kh!)),
      workOfAdhesionJm2: w,
      model: str(v.model!) as 'two-plate',
      top: { thicknessM: umToM(num(v.top!)), plateModulusPa: E },
      bottom: { thicknessM: umToM(num(v.bottom!)), plateModulusPa: E },
    });
    return {
      outputs: [
        { label: 'Void radius R', value: r.radiusM * 1e3, unit: 'mm', digits: 4 },
        { label: 'Void diameter', value: 2 * r.radiusM * 1e3, unit: 'mm', digits: 4 },
        {
          label: 'Regime',
          value: r.regime === 'thick-plate' ? 'thick plate (R ≥ 2t)' : 'small gap (R < 2t)',
          unit: '',
        },
        { label: 'Crossover height', value: r.crossoverHeightM * 1e9, unit: 'nm', digits: 3 },
        { label: 'Unbonded area', value: Math.PI * r.radiusM ** 2 * 1e6, unit: 'mm²', digits: 4 },
      ],
      notes: [
        'The interface energies of surface preparations are literature values from memory; measure your own (razor-blade test) and enter them.',
        ...(r.heightToThickness > 0.05
          ? ['The particle is not small against the plate: the plate model loses accuracy.']
          : []),
      ],
    };
  },
};

const dieYield: Calculator = {
  id: 'die-yield',
  jointLimits:
    'the expected voids per die, λ × critical area, must be at most 1 000 000 (lower the density or the sizes)',
  title: 'Die yield from a void density',
  summary: 'Expected die yield when voids of one radius are spread over the interface at a given density.',
  formula:
    'A_c = WH + 2R(W+H) + πR²; λA = density × A_c; Poisson Y = e^(−λA); negative binomial Y = (1 + λA/α)^(−α); Murphy Y = [(1 − e^(−λA))/λA]²',
  symbols:
    'A_c critical area of a W × H die (or pad array) for a void of radius R; λ voids per cm² of interface; α cluster parameter',
  source:
    'Critical area: Minkowski sum (hand geometry); negative binomial: Stapper, IBM J. Res. Dev. 27 (1983); Murphy, Proc. IEEE 52 (1964) 1537',
  fields: [
    // yield.ts: lengths 0–1 m, λA ≤ 1e6 per die, 1e-3 ≤ α ≤ 1e12.
    { name: 'density', label: 'Void density λ', unit: 'per cm²', default: '0.01', range: { min: 0 } },
    { name: 'radius', label: 'Void radius R', unit: 'mm', default: '1', range: { min: 0, max: 1000 } },
    {
      name: 'width',
      label: 'Die (pad array) width W',
      unit: 'mm',
      default: '10',
      range: { min: 0, max: 1000 },
    },
    {
      name: 'height',
      label: 'Die (pad array) height H',
      unit: 'mm',
      default: '5',
      range: { min: 0, max: 1000 },
    },
    { name: 'alpha', label: 'Cluster parameter α', unit: '', default: '2', range: { min: 0.001, max: 1e12 } },
  ],
  compute(v) {
    const ac = criticalAreaRectangle(mmToM(num(v.width!)), mmToM(num(v.height!)), mmToM(num(v.radius!)));
    const ad = num(v.density!) * 1e4 * ac;
    return {
      outputs: [
        { label: 'Critical area A_c', value: ac * 1e6, unit: 'mm²', digits: 6 },
        { label: 'Expected voids per die λA', value: ad, unit: '', digits: 4 },
        { label: 'Poisson yield', value: poissonYield(ad), unit: '', digits: 4 },
        {
          label: 'Negative binomial yield',
          value: negativeBinomialYield(ad, num(v.alpha!)),
          unit: '',
          digits: 4,
        },
        { label: 'Murphy yield', value: murphyYield(ad), unit: '', digits: 4 },
      ],
      notes: ['In hybrid bonding one void in the pad array kills the die: use the pad-array rectangle.'],
    };
  },
};

/** Every calculator, in the order the page and `voidcast calc --help` list them. */
export const CALCULATORS: Calculator[] = [
  classLimit,
  sampleVolume,
  locations,
  deposition,
  voidRadiusCalc,
  dieYield,
  poissonInterval,
  cc1246,
];

export function findCalculator(id: string): Calculator | undefined {
  return CALCULATORS.find((c) => c.id === id);
}
