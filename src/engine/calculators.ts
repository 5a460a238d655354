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

/** Every calculator, in the order the page and `voidcast calc --help` list them. */
export const CALCULATORS: Calculator[] = [
  classLimit,
  sampleVolume,
  locations,
  deposition,
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
