/**
 * The added cost of an excursion (pure part): the location's counter series with the excursion's
 * excess removed, and the difference of two assessments of a pair — as measured, and with the
 * excess removed. The chain from air to voids is linear in the deposited particles, so the
 * difference is the voids and die loss the excess added (methods.md §6 [D]).
 *
 * **Excess (Choice):** within the excursion, each sample's concentration at each channel above the
 * location's baseline (the median of its hourly means over the week before the excursion) is
 * lowered to the baseline; a sample already at or below it is left as measured. Cumulative
 * concentrations stay non-increasing in size (the minimum of two non-increasing sequences).
 */
import type { CounterSeriesInput, PairAssessment } from '../types.ts';

/** A copy of `series` with every sample starting in [fromMs, toMs) capped at `baselinePerM3` per channel. */
export function withoutExcess(
  series: CounterSeriesInput,
  fromMs: number,
  toMs: number,
  baselinePerM3: readonly number[],
): CounterSeriesInput {
  const k = series.channelSizesM.length;
  const out = Float64Array.from(series.cumulativePerM3);
  for (let i = 0; i < series.startMs.length; i++) {
    const t = series.startMs[i]!;
    if (t < fromMs || t >= toMs) continue;
    for (let c = 0; c < k; c++) {
      const b = baselinePerM3[c];
      if (b !== undefined && Number.isFinite(b) && out[i * k + c]! > b) out[i * k + c] = b;
    }
  }
  return { ...series, cumulativePerM3: out };
}

/** Die loss of an assessment: the negative-binomial killed dies (as the lot summary), else Poisson, else 0. */
export function dieLossOf(a: PairAssessment): number {
  return a.figures.dieKillsNB?.value ?? a.figures.dieKillsPoisson?.value ?? 0;
}

export interface PairDelta {
  pairId: string;
  lotId: string;
  addedVoids: number;
  addedDieLoss: number;
  /** Per wafer of the pair: added expected particles from its waits at the given locations. */
  addedParticles: Map<string, number>;
}

/** as measured − excess removed, for one pair. */
export function pairDelta(
  asMeasured: PairAssessment,
  withoutIt: PairAssessment,
  locationIds: readonly string[],
): PairDelta {
  const before = new Map(withoutIt.contributions.map((c) => [c.key, c]));
  const added = new Map<string, number>();
  for (const c of asMeasured.contributions) {
    if (c.kind !== 'wait' || c.locationId === null || !locationIds.includes(c.locationId)) continue;
    const b = before.get(c.key)?.particles ?? 0;
    added.set(c.waferId, (added.get(c.waferId) ?? 0) + (c.particles - b));
  }
  return {
    pairId: asMeasured.pairId,
    lotId: asMeasured.lotId,
    addedVoids: asMeasured.figures.voids.value - withoutIt.figures.voids.value,
    addedDieLoss: dieLossOf(asMeasured) - dieLossOf(withoutIt),
    addedParticles: added,
  };
}
