/**
 * Alert and action levels from a baseline window (ISO 14644-2:2015: set by the user from data, the
 * method stated [V]). Pure: takes the baseline's hourly points of one location and channel.
 *
 * Levels apply to hourly means (Σ counts / Σ volume of the usable samples in an hour), the points
 * the excursion rules and control charts use.
 *
 * Methods and what each needs (Choice — a shorter baseline is refused with a message, never a
 * level from too little):
 *   percentile        alert and action percentiles of the hourly means (default 95th, 99th);
 *                     needs ≥ max(24, ⌈1/(1 − p_action)⌉) hours, so the action percentile lies
 *                     inside the data (99th: 100 hours)
 *   log-mean-k-sigma  exp(mean + k·sd) of ln((count + 1)/volume) (default k 2 and 3); ≥ 24 hours
 *   poisson-quantile  Poisson quantiles (default 0.95, 0.99) of the count in a typical hour's volume
 *                     at the pooled rate, divided by that volume; ≥ 24 hours
 *   negbin-quantile   the same with a negative binomial fitted by moments to the hourly counts
 *                     (scaled to the typical volume); ≥ 24 hours; with no overdispersion seen
 *                     (variance ≤ mean) it is the Poisson quantile, and says so
 *   class-fraction    fractions of the ISO class limit (default 0.5 alert, 1.0 action) of the
 *                     location's target class; needs no window, but a class and a size of 0.1–5 µm
 */
import {
  classFractionLevel,
  logMeanKSigmaLevel,
  negativeBinomialQuantile,
  percentileOf,
  poissonQuantile,
} from '../../model/index.ts';
import { sizeWords } from './common.ts';
import { AuditInputError } from './errors.ts';
import type { LevelMethod } from './types.ts';

export type DerivedMethod = Exclude<LevelMethod, 'typed'>;

export const LEVEL_METHODS: readonly DerivedMethod[] = [
  'percentile',
  'log-mean-k-sigma',
  'poisson-quantile',
  'negbin-quantile',
  'class-fraction',
];

/** Default parameters of each method. */
export const LEVEL_DEFAULTS: Record<DerivedMethod, Record<string, number>> = {
  percentile: { alert: 0.95, action: 0.99 },
  'log-mean-k-sigma': { alert: 2, action: 3 },
  'poisson-quantile': { alert: 0.95, action: 0.99 },
  'negbin-quantile': { alert: 0.95, action: 0.99 },
  'class-fraction': { alert: 0.5, action: 1 },
};

/** Fewest baseline hours for the window methods (Choice). */
export const MIN_BASELINE_HOURS = 24;

export interface BaselinePoint {
  count: number;
  volumeM3: number;
}

export interface DerivedLevels {
  alertPerM3: number;
  actionPerM3: number;
  parameters: Record<string, number>;
  basis: string;
}

export interface DeriveInput {
  method: DerivedMethod;
  /** Usable hourly points of the baseline window (volume > 0). */
  points: readonly BaselinePoint[];
  /** Overrides of the method's defaults (alert, action). */
  parameters?: Record<string, number>;
  /** Channel size, m. */
  diameterM: number;
  /** The location's target ISO class (class-fraction only). */
  classN: number | null;
  /** Words of the window, for the basis. */
  windowWords: string;
}

function median(xs: number[]): number {
  const a = [...xs].sort((p, q) => p - q);
  const m = a.length >> 1;
  return a.length % 2 ? a[m]! : (a[m - 1]! + a[m]!) / 2;
}

function minimumHours(method: DerivedMethod, p: Record<string, number>): number {
  if (method === 'percentile') return Math.max(MIN_BASELINE_HOURS, Math.ceil(1 / (1 - p.action!) - 1e-9));
  if (method === 'class-fraction') return 0;
  return MIN_BASELINE_HOURS;
}

function checkParameters(method: DerivedMethod, p: Record<string, number>): void {
  const { alert, action } = p as { alert: number; action: number };
  const bad = (words: string) => {
    throw new AuditInputError(`${method}: ${words}`);
  };
  if (!Number.isFinite(alert) || !Number.isFinite(action)) bad('alert and action must be numbers');
  if (method === 'log-mean-k-sigma') {
    if (!(alert >= 0 && action <= 10 && alert < action)) bad('k must satisfy 0 ≤ alert k < action k ≤ 10');
  } else if (method === 'class-fraction') {
    if (!(alert > 0 && action <= 1 && alert < action)) bad('fractions must satisfy 0 < alert < action ≤ 1');
  } else if (!(alert > 0 && action < 1 && alert < action))
    bad('probabilities must satisfy 0 < alert < action < 1 (e.g. 0.95 and 0.99)');
}

/**
 * Alert and action levels of one location and channel by a stated method.
 *
 * @throws AuditInputError for a baseline shorter than the method needs, bad parameters, or a
 *   class-fraction level without a class or outside 0.1–5 µm
 */
export function deriveLevels(input: DeriveInput): DerivedLevels {
  const { method, diameterM } = input;
  if (!LEVEL_METHODS.includes(method))
    throw new AuditInputError(`unknown level method "${method}": use one of ${LEVEL_METHODS.join(', ')}`);
  const p = { ...LEVEL_DEFAULTS[method], ...(input.parameters ?? {}) };
  checkParameters(method, p);
  const pts = input.points.filter((x) => x.volumeM3 > 0);
  const need = minimumHours(method, p);
  if (pts.length < need)
    throw new AuditInputError(
      `the ${input.windowWords} holds ${pts.length} hour${pts.length === 1 ? '' : 's'} with usable samples; ${method} needs at least ${need}${method === 'percentile' ? ` for the ${p.action! * 100}th percentile` : ''} — choose a longer window`,
    );
  const size = sizeWords(diameterM);
  switch (method) {
    case 'class-fraction': {
      if (input.classN === null)
        throw new AuditInputError('class-fraction: the location has no target class registered');
      if (!(diameterM >= 1e-7 * (1 - 1e-9) && diameterM <= 5e-6 * (1 + 1e-9)))
        throw new AuditInputError(`class-fraction: ISO 14644-1 class limits cover 0.1–5 µm, not ${size}`);
      const d = Math.min(5e-6, Math.max(1e-7, diameterM));
      return {
        alertPerM3: classFractionLevel(input.classN, d, p.alert!),
        actionPerM3: classFractionLevel(input.classN, d, p.action!),
        parameters: { ...p, classN: input.classN },
        basis: `${p.alert! * 100} % and ${p.action! * 100} % of the ISO class ${input.classN} limit at ≥ ${size} (ISO 14644-1:2015 eq. (1), unrounded)`,
      };
    }
    case 'percentile': {
      const means = pts.map((x) => x.count / x.volumeM3);
      return {
        alertPerM3: percentileOf(means, p.alert!),
        actionPerM3: percentileOf(means, p.action!),
        parameters: p,
        basis: `${p.alert! * 100}th and ${p.action! * 100}th percentiles (Hyndman & Fan definition 7) of ${pts.length} hourly means ≥ ${size}, ${input.windowWords}`,
      };
    }
    case 'log-mean-k-sigma': {
      const counts = pts.map((x) => x.count);
      const vols = pts.map((x) => x.volumeM3);
      return {
        alertPerM3: logMeanKSigmaLevel(counts, vols, p.alert!),
        actionPerM3: logMeanKSigmaLevel(counts, vols, p.action!),
        parameters: p,
        basis: `exp(mean + k·sd) of ln((count + 1)/volume) over ${pts.length} hours ≥ ${size}, k = ${p.alert} and ${p.action}, ${input.windowWords}`,
      };
    }
    case 'poisson-quantile':
    case 'negbin-quantile': {
      const vTyp = median(pts.map((x) => x.volumeM3));
      const rate = pts.reduce((a, x) => a + x.count, 0) / pts.reduce((a, x) => a + x.volumeM3, 0);
      const mu = rate * vTyp;
      let r: number | null = null;
      if (method === 'negbin-quantile') {
        const scaled = pts.map((x) => (x.count * vTyp) / x.volumeM3);
        const m = scaled.reduce((a, b) => a + b, 0) / scaled.length;
        const s2 = scaled.reduce((a, b) => a + (b - m) ** 2, 0) / (scaled.length - 1);
        r = s2 > m && m > 0 ? Math.max(0.01, (m * m) / (s2 - m)) : null;
      }
      const q = (prob: number) =>
        (r !== null ? negativeBinomialQuantile(mu, r, prob) : poissonQuantile(mu, prob)) / vTyp;
      const law =
        method === 'poisson-quantile'
          ? 'Poisson'
          : r !== null
            ? `negative binomial (size r = ${r.toPrecision(3)} by moments)`
            : 'Poisson (no overdispersion seen: variance ≤ mean, so the negative binomial reduces to it)';
      return {
        alertPerM3: q(p.alert!),
        actionPerM3: q(p.action!),
        parameters: r !== null ? { ...p, size: r } : p,
        basis: `${law} quantiles ${p.alert} and ${p.action} of the count in a typical hour's ${(vTyp * 1000).toFixed(0)} L at the pooled rate ${rate.toPrecision(4)} per m³ over ${pts.length} hours ≥ ${size}, ${input.windowWords}`,
      };
    }
  }
}
