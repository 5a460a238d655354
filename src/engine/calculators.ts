/**
 * Calculators: single models an engineer wants by hand, with inputs in the units of the trade
 * (µm, mm, °C, J/m²) converted to SI here at the edge. The CLI (`voidcast calc <id>`) and the
 * Calculators page read this one table, so they cannot disagree.
 *
 * Each calculator states its formula and its published source beside the result.
 */
import { z } from 'zod';
import {
  cunninghamSlip,
  depositionVelocity,
  meanFreePath,
  settlingVelocity,
  stagnationDiffusionVelocity,
} from '../model/aerosol.ts';
import { cc1246CountPer01m2 } from '../model/cc1246.ts';
import { ModelInputError } from '../model/errors.ts';
import {
  isoClassLimit,
  isoTable1Value,
  minimumSampleVolumeM3,
  samplingLocations,
} from '../model/iso14644.ts';
import { garwoodInterval } from '../model/stats/garwood.ts';
import { cToK, M3_PER_FT3, m3ToL, mmToM, umToM } from '../model/units.ts';
import { particleHeight, SI100_PLATE_MODULUS_PA, voidRadius, workOfAdhesion } from '../model/void.ts';
import { criticalAreaRectangle, murphyYield, negativeBinomialYield, poissonYield } from '../model/yield.ts';

export interface CalcChoice {
  value: string;
  label: string;
}

export interface CalcField {
  /** Name of the CLI option (`--name`) and of the form field. */
  name: string;
  label: string;
  /** Unit shown beside the input ('' when dimensionless). */
  unit: string;
  default: string;
  /** Choices for a select; absent for a number. */
  choices?: CalcChoice[];
  help?: string;
}

export interface CalcOutput {
  label: string;
  value: number | string | null;
  unit: string;
  /** Significant figures to show for a number. */
  digits?: number;
}

export interface CalcResult {
  outputs: CalcOutput[];
  notes: string[];
}

export interface Calculator {
  id: string;
  title: string;
  summary: string;
  /** The formula, plain text with Unicode symbols. */
  formula: string;
  /** Symbols with their units. */
  symbols: string;
  source: string;
  fields: CalcField[];
  compute: (values: Record<string, number | string>) => CalcResult;
}

/** A bad input to a calculator: which field, and the rule broken. */
export class CalcInputError extends Error {
  override readonly name = 'CalcInputError';
  constructor(
    readonly field: string,
    message: string,
  ) {
    super(message);
  }
}

const numberText = z
  .string()
  .trim()
  .min(1, 'is required')
  .regex(/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/, 'must be a number (use a point for decimals, e.g. 0.5)')
  .transform(Number)
  .refine(Number.isFinite, 'must be a finite number');

/**
 * Checks raw text values against a calculator's fields; missing values take the defaults.
 * Returns numbers for number fields and the chosen value for choice fields.
 */
export function parseCalcValues(
  calc: Calculator,
  raw: Record<string, string | undefined>,
): Record<string, number | string> {
  const out: Record<string, number | string> = {};
  for (const f of calc.fields) {
    const text = raw[f.name] ?? f.default;
    if (f.choices) {
      if (!f.choices.some((c) => c.value === text))
        throw new CalcInputError(
          f.name,
          `${f.name} must be one of ${f.choices.map((c) => c.value).join(', ')}; got "${text}"`,
        );
      out[f.name] = text;
    } else {
      const r = numberText.safeParse(text);
      if (!r.success)
        throw new CalcInputError(
          f.name,
          `${f.name} ${r.error.issues[0]?.message ?? 'is invalid'}; got "${text}"`,
        );
      out[f.name] = r.data;
    }
  }
  return out;
}

/** Runs a calculator on raw text values; a model's range error comes back as a CalcInputError. */
export function runCalculator(calc: Calculator, raw: Record<string, string | undefined>): CalcResult {
  const values = parseCalcValues(calc, raw);
  try {
    return calc.compute(values);
  } catch (e) {
    if (e instanceof ModelInputError) throw new CalcInputError(e.param, e.message);
    throw e;
  }
}

const num = (v: number | string): number => v as number;
const str = (v: number | string): string => v as string;

const classLimit: Calculator = {
  id: 'class-limit',
  title: 'ISO 14644-1 class limit',
  summary: 'Maximum permitted airborne concentration of particles at or above a size, for an ISO class.',
  formula: 'Cₙ = 10ᴺ · (0.1 / D)^2.08',
  symbols: 'Cₙ particles per m³ of size ≥ D; N ISO class (1–9, steps of 0.1); D threshold size in µm (0.1–5)',
  source: 'ISO 14644-1:2015, eq. (1) and Table 1',
  fields: [
    { name: 'class', label: 'ISO class N', unit: '', default: '5' },
    { name: 'size', label: 'Particle size D', unit: 'µm', default: '0.5' },
  ],
  compute(v) {
    const d = umToM(num(v.size!));
    const c = isoClassLimit(num(v.class!), d);
    const table = Number.isInteger(num(v.class!)) ? isoTable1Value(num(v.class!), d) : null;
    return {
      outputs: [
        { label: 'Class limit', value: c, unit: 'particles/m³', digits: 6 },
        { label: 'Class limit', value: c * M3_PER_FT3, unit: 'particles/ft³', digits: 4 },
        {
          label: 'Table 1 value',
          value: table ?? 'not tabulated',
          unit: table === null ? '' : 'particles/m³',
        },
      ],
      notes: [
        'Table 1 rounds the formula to a whole number with at most three significant figures and leaves some cells not applicable.',
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
    { name: 'class', label: 'ISO class N', unit: '', default: '5' },
    { name: 'size', label: 'Largest considered size', unit: 'µm', default: '0.5' },
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
  fields: [{ name: 'area', label: 'Floor area A', unit: 'm²', default: '52' }],
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
    { name: 'size', label: 'Particle diameter d', unit: 'µm', default: '0.2' },
    { name: 'orientation', label: 'Wafer surface', unit: '', default: 'faceUp', choices: ORIENTATIONS },
    { name: 'downflow', label: 'Downflow speed U', unit: 'm/s', default: '0.3' },
    { name: 'wafer', label: 'Wafer diameter', unit: 'mm', default: '300' },
    { name: 'density', label: 'Particle density', unit: 'kg/m³', default: '1000' },
    { name: 'temperature', label: 'Air temperature', unit: '°C', default: '20' },
    {
      name: 'charge',
      label: 'Electrostatic factor',
      unit: '×',
      default: '1',
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
    { name: 'count', label: 'Observed count n', unit: '', default: '10' },
    { name: 'confidence', label: 'Confidence', unit: '', default: '0.95' },
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
    { name: 'level', label: 'Level L', unit: '', default: '100' },
    { name: 'size', label: 'Particle size x', unit: 'µm', default: '5' },
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
  title: 'Void radius around a trapped particle',
  summary: 'The unbonded ring a particle of a given size holds open between two bonded plates.',
  formula:
    'thick plate (R ≥ 2t): R⁴ = 8 D_eff h² / W, D = E′t³/12, D_eff = D₁D₂/(D₁+D₂); small gap (R < 2t): R = D_eff h² / (W t³) (continuous at R = 2t); textbook: R = [2E′t³/(3γ)]^¼ h^½',
  symbols:
    'R void radius (m); h = k_h·d particle height (m); t thickness of the thinner flexible plate (m); E′ = E/(1−ν²) plate modulus (Pa); W work of adhesion (J/m²) = 2γ',
  source:
    'Stengl et al., J. Appl. Phys. 65 (1989) 1876 [M]; Tong & Gösele, Semiconductor Wafer Bonding (1999); small-gap closure: voidcast’s own (see docs/models.md)',
  fields: [
    { name: 'size', label: 'Particle diameter d', unit: 'µm', default: '1' },
    {
      name: 'kh',
      label: 'Height factor k_h',
      unit: '',
      default: '1',
      help: '1 for compact particles, < 1 for flakes',
    },
    { name: 'model', label: 'Plates', unit: '', default: 'two-plate', choices: VOID_MODELS },
    { name: 'top', label: 'Top (or die) thickness', unit: 'µm', default: '775' },
    { name: 'bottom', label: 'Bottom thickness', unit: 'µm', default: '775' },
    {
      name: 'modulus',
      label: 'Plate modulus E′',
      unit: 'GPa',
      default: String(SI100_PLATE_MODULUS_PA / 1e9),
    },
    { name: 'energy', label: 'Interface energy', unit: 'J/m²', default: '0.1' },
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
  title: 'Die yield from a void density',
  summary: 'Expected die yield when voids of one radius are spread over the interface at a given density.',
  formula:
    'A_c = WH + 2R(W+H) + πR²; λA = density × A_c; Poisson Y = e^(−λA); negative binomial Y = (1 + λA/α)^(−α); Murphy Y = [(1 − e^(−λA))/λA]²',
  symbols:
    'A_c critical area of a W × H die (or pad array) for a void of radius R; λ voids per cm² of interface; α cluster parameter',
  source:
    'Critical area: Minkowski sum (hand geometry); negative binomial: Stapper, IBM J. Res. Dev. 27 (1983); Murphy, Proc. IEEE 52 (1964) 1537',
  fields: [
    { name: 'density', label: 'Void density λ', unit: 'per cm²', default: '0.01' },
    { name: 'radius', label: 'Void radius R', unit: 'mm', default: '1' },
    { name: 'width', label: 'Die (pad array) width W', unit: 'mm', default: '10' },
    { name: 'height', label: 'Die (pad array) height H', unit: 'mm', default: '5' },
    { name: 'alpha', label: 'Cluster parameter α', unit: '', default: '2' },
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

/** A number shown with its significant figures, plain text ("3516.76", "3.56e-6"). */
export function formatCalcValue(o: CalcOutput): string {
  if (o.value === null) return '—';
  if (typeof o.value === 'string') return o.value;
  if (Number.isInteger(o.value) && o.digits === undefined) return o.value.toLocaleString('en-US');
  const digits = o.digits ?? 4;
  const a = Math.abs(o.value);
  if (a !== 0 && (a < 1e-3 || a >= 1e7)) return o.value.toExponential(digits - 1);
  return Number(o.value.toPrecision(digits)).toLocaleString('en-US', { maximumSignificantDigits: digits });
}
