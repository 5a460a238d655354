/**
 * Hourly series of an area's locations and channels, as the excursion rules and control charts read
 * them: the store's hourly aggregate rows with the occupancy states of one hour summed.
 */

/** One hour of one location and channel (occupancy states already summed). */
export interface HourPoint {
  hourMs: number;
  countSum: number;
  volumeM3: number;
  maxPerM3: number | null;
  n: number;
  nUsable: number;
  nFault: number;
  nLowerBound: number;
  nSentinel: number;
  nZeroRun: number;
  nGap: number;
}

export interface ChannelSeries {
  locationId: string;
  diameterNm: number;
  /** In hour order. */
  hours: HourPoint[];
}

/** Hourly rows of the store (any occupancy states) as channel series, states summed per hour. */
export function seriesFromRows(
  rows: readonly {
    locationId: string;
    diameterNm: number;
    hourMs: number;
    countSum: number;
    volumeM3: number;
    maxPerM3: number | null;
    n: number;
    nUsable: number;
    nFault: number;
    nLowerBound: number;
    nSentinel: number;
    nZeroRun: number;
    nGap: number;
  }[],
): ChannelSeries[] {
  const map = new Map<string, ChannelSeries>();
  for (const r of rows) {
    const key = `${r.locationId}|${r.diameterNm}`;
    let s = map.get(key);
    if (!s) {
      s = { locationId: r.locationId, diameterNm: r.diameterNm, hours: [] };
      map.set(key, s);
    }
    const last = s.hours.at(-1);
    if (last && last.hourMs === r.hourMs) {
      last.countSum += r.countSum;
      last.volumeM3 += r.volumeM3;
      last.maxPerM3 = r.maxPerM3 === null ? last.maxPerM3 : Math.max(last.maxPerM3 ?? r.maxPerM3, r.maxPerM3);
      last.n += r.n;
      last.nUsable += r.nUsable;
      last.nFault += r.nFault;
      last.nLowerBound += r.nLowerBound;
      last.nSentinel += r.nSentinel;
      last.nZeroRun += r.nZeroRun;
      last.nGap += r.nGap;
    } else
      s.hours.push({
        hourMs: r.hourMs,
        countSum: r.countSum,
        volumeM3: r.volumeM3,
        maxPerM3: r.maxPerM3,
        n: r.n,
        nUsable: r.nUsable,
        nFault: r.nFault,
        nLowerBound: r.nLowerBound,
        nSentinel: r.nSentinel,
        nZeroRun: r.nZeroRun,
        nGap: r.nGap,
      });
  }
  for (const s of map.values()) s.hours.sort((a, b) => a.hourMs - b.hourMs);
  return [...map.values()];
}
