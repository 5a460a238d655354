/**
 * Control charts per location and channel, over points that are subgroups of counter samples (the
 * audit uses the hourly aggregates: counts summed over an hour, their sampled volume the area of
 * opportunity). Pure over its input.
 *
 * Which chart (Choice, stated on the chart as `decidedBy`):
 *   1. Pearson's dispersion statistic X² = Σ zᵢ², zᵢ = (uᵢ − ū)/√(ū/nᵢ), is compared with χ²(N − 1):
 *      with p < 0.01 and Laney's σ_z > 1 the counts vary more than Poisson counts can, and the
 *      chart is Laney's u′ (limits widened by σ_z; Laney 2002).
 *   2. Otherwise the u chart (ū ± 3√(ū/nᵢ)); when every point sampled the same volume (within
 *      1 %), the c chart on counts (c̄ ± 3√c̄), which it then equals (NIST/SEMATECH §6.3.3.1).
 * Underdispersed counts (σ_z < 1) keep the u chart rather than narrowing its limits.
 *
 * **Phase I baseline.** The chart's kind, centre line, σ_z and so its limits come from a baseline
 * (Phase I), and the charted points are judged against them (Phase II; NIST/SEMATECH e-Handbook
 * §6.3.1): a period that holds a large excursion would otherwise raise its own centre and widen its own
 * limits, and flag its clean hours as runs below the centre. The baseline is given by the caller (the
 * audit: the window the location's derived levels were set from, else one the user chose); without one,
 * or with fewer than `MIN_BASELINE_POINTS` usable hours in it, the limits come from the charted points
 * themselves, and the chart says so. The c chart needs equal volumes in the baseline and the charted
 * hours alike; otherwise the u chart.
 */
import {
  cChartLimits,
  chartRuleFlags,
  chiSquareSurvival,
  laneyUPrime,
  uChartLimits,
} from '../../model/index.ts';
import type { AuditPeriod, ChartKind, ChartPoint, ControlChart } from './types.ts';

/** One subgroup: an hour of one location and channel. */
export interface ChartInputPoint {
  startMs: number;
  count: number;
  volumeM3: number;
  /** Instrument fault or sentinel samples only: plotted but left out of the centre and the rules. */
  excluded: boolean;
}

/** Significance of the dispersion test that switches to Laney's u′ (Choice). */
export const OVERDISPERSION_P = 0.01;
/** Relative spread of volumes under which the c chart is used (Choice). */
export const EQUAL_VOLUME_TOLERANCE = 0.01;
/**
 * Fewest usable hours a baseline needs to set the limits (Choice: the 20 to 25 subgroups usually asked
 * of a Phase I study, Montgomery, Introduction to Statistical Quality Control, 7th ed., §6.2).
 */
export const MIN_BASELINE_POINTS = 20;

/** A Phase I baseline: its points (hours of the same location and channel) and where it comes from. */
export interface ChartBaseline {
  points: readonly ChartInputPoint[];
  source: 'levels' | 'chosen';
  window: AuditPeriod;
  /** Whose window it is, in words ("the window of the levels “October baseline” v2"). */
  words: string;
}

const PERIOD_NOTE =
  'limits from the charted period itself (no baseline window: neither derived levels nor a chosen one); an excursion in the period raises the centre line and widens the limits';

/**
 * The control chart of one location and channel.
 *
 * @param locationId the location
 * @param diameterM the channel (≥ size, m)
 * @param points subgroups in time order
 */
export function controlChart(
  locationId: string,
  diameterM: number,
  points: readonly ChartInputPoint[],
  baseline: ChartBaseline | null = null,
): ControlChart {
  const charted = points.filter((p) => !p.excluded && p.volumeM3 > 0);
  const excludedPoints = points.length - charted.length;
  const inBaseline = baseline ? baseline.points.filter((p) => !p.excluded && p.volumeM3 > 0) : [];
  const phase1 = baseline !== null && inBaseline.length >= MIN_BASELINE_POINTS;
  const usable = phase1 ? inBaseline : charted;
  const fromPeriod = phase1
    ? null
    : baseline
      ? `${baseline.words} holds ${inBaseline.length} usable hour${inBaseline.length === 1 ? '' : 's'} (at least ${MIN_BASELINE_POINTS} are needed): limits from the charted period itself; an excursion in the period raises the centre line and widens the limits`
      : PERIOD_NOTE;
  const baselineInfo: ControlChart['baseline'] = phase1
    ? {
        source: baseline!.source,
        window: baseline!.window,
        points: inBaseline.length,
        words: baseline!.words,
      }
    : { source: 'period', window: null, points: charted.length, words: 'the charted period itself' };
  const empty = (note: string): ControlChart => ({
    locationId,
    diameterM,
    kind: 'u',
    centre: 0,
    sigmaZ: 1,
    dispersion: 0,
    decidedBy: note,
    points: points.map((p) => ({
      startMs: p.startMs,
      count: p.count,
      volumeM3: p.volumeM3,
      value: p.volumeM3 > 0 ? p.count / p.volumeM3 : 0,
      lcl: 0,
      ucl: 0,
      rules: [],
      excluded: true,
    })),
    excludedPoints: points.length,
    baseline: baselineInfo,
    notes: [note],
  });
  if (usable.length < 2)
    return empty(
      `no control limits: ${usable.length} usable point${usable.length === 1 ? '' : 's'} (at least 2 are needed)`,
    );
  const laney = laneyUPrime(
    usable.map((p) => p.count),
    usable.map((p) => p.volumeM3),
  );
  const df = laney.degreesOfFreedom;
  const pValue = laney.centre > 0 ? chiSquareSurvival(laney.pearsonX2, df) : 1;
  const dispersion = laney.pearsonX2 / df;
  const vols = [...usable, ...charted].map((p) => p.volumeM3);
  const vMin = Math.min(...vols);
  const vMax = Math.max(...vols);
  const equal = (vMax - vMin) / vMax <= EQUAL_VOLUME_TOLERANCE;
  let kind: ChartKind;
  let decidedBy: string;
  if (pValue < OVERDISPERSION_P && laney.sigmaZ > 1) {
    kind = 'laney-u';
    decidedBy = `Laney u′: the counts vary more than Poisson counts (X²/df = ${dispersion.toFixed(2)}, p = ${pValue.toExponential(1)} < ${OVERDISPERSION_P}; σ_z = ${laney.sigmaZ.toFixed(2)})`;
  } else if (equal) {
    kind = 'c';
    decidedBy = `c chart: equal sampled volumes and counts consistent with Poisson (X²/df = ${dispersion.toFixed(2)}, p = ${pValue.toFixed(3)})`;
  } else {
    kind = 'u';
    decidedBy = `u chart: counts consistent with Poisson (X²/df = ${dispersion.toFixed(2)}, p = ${pValue.toFixed(3)}), unequal sampled volumes`;
  }
  const sigmaZ = kind === 'laney-u' ? laney.sigmaZ : 1;
  const u = laney.centre;
  const cBar = usable.reduce((a, p) => a + p.count, 0) / usable.length;
  const out: ChartPoint[] = points.map((p) => {
    const n = p.volumeM3 > 0 ? p.volumeM3 : 1;
    if (kind === 'c') {
      const l = cChartLimits(cBar);
      return {
        startMs: p.startMs,
        count: p.count,
        volumeM3: p.volumeM3,
        value: p.count,
        lcl: l.lcl,
        ucl: l.ucl,
        rules: [],
        excluded: p.excluded,
      };
    }
    const l = uChartLimits(u, n);
    const h = (l.ucl - u) * sigmaZ;
    return {
      startMs: p.startMs,
      count: p.count,
      volumeM3: p.volumeM3,
      value: p.count / n,
      lcl: Math.max(0, u - h),
      ucl: u + h,
      rules: [],
      excluded: p.excluded || !(p.volumeM3 > 0),
    };
  });
  // Standardised values of the usable points, in order; rules run over them only.
  const idx: number[] = [];
  const s: number[] = [];
  out.forEach((p, i) => {
    if (p.excluded) return;
    const centre = kind === 'c' ? cBar : u;
    const sigma = (p.ucl - centre) / 3;
    let z = sigma > 0 ? (p.value - centre) / sigma : p.value > centre ? 4 : 0;
    if (p.lcl === 0) z = Math.max(z, -3);
    idx.push(i);
    s.push(z);
  });
  const flags = chartRuleFlags(s);
  flags.forEach((f, j) => {
    out[idx[j]!]!.rules = f;
  });
  return {
    locationId,
    diameterM,
    kind,
    centre: kind === 'c' ? cBar : u,
    sigmaZ,
    dispersion,
    decidedBy,
    points: out,
    excludedPoints,
    baseline: baselineInfo,
    notes: fromPeriod ? [fromPeriod] : [],
  };
}
