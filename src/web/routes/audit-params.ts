/**
 * The parameters of the audit pages, read through src/web/params.ts: the area, the period
 * (`from`, `to`: UTC ms or ISO 8601 with its zone), the occupancy state, the ISO 14644-1 edition and
 * the control charts' baseline window (`limitsFrom`, `limitsTo`).
 * A bad value is a 400 naming it; an unknown area a 404. Without a period the audit covers the 30
 * days up to the area's newest counter sample (or up to now, without samples).
 */
import type { Context } from 'hono';
import type { AuditQuery } from '../../../views/pages/audit-area.tsx';
import { OCCUPANCY_CHOICES } from '../../../views/pages/audit-area.tsx';
import { AuditInputError, loadAreaMembers } from '../../engine/audit/index.ts';
import type { AuditPeriod, OccupancySelection } from '../../engine/audit/types.ts';
import type { LocationRecord } from '../../store/locations.ts';
import { sampleSpan } from '../../store/views-areas.ts';
import type { AppContext } from '../context.ts';
import { asOfValue, BadParamError, choiceValue } from '../params.ts';

const HOUR_MS = 3_600_000;
const DAY_MS = 86_400_000;
/** The longest period an audit page covers (a year and a bit: an annual re-classification). */
export const MAX_PERIOD_MS = 400 * DAY_MS;
export const DEFAULT_PERIOD_MS = 30 * DAY_MS;

export interface AreaRef {
  id: string;
  name: string;
  /** The locations in the area's air (the area and its same-environment descendants). */
  locations: LocationRecord[];
}

/**
 * The area (a room, or a zone such as a mini-environment) named in the path, with the locations in
 * its air (src/engine/audit/loader.ts loadAreaMembers); 404 when no location has that id.
 */
export function pathArea(ctx: AppContext, c: Context): AreaRef {
  const id = c.req.param('id') ?? '';
  try {
    const m = loadAreaMembers(ctx.db, id);
    return { id, name: m.area.name, locations: m.inAir };
  } catch (err) {
    if (err instanceof AuditInputError)
      throw new BadParamError('area', `names no location: "${id.slice(0, 60)}"`, 404);
    throw err;
  }
}

/** ISO 8601 UTC as the period form shows it: to the minute, with seconds and milliseconds where they are not 0. */
export function minuteIso(ms: number): string {
  const iso = new Date(ms).toISOString();
  return ms % 60_000 === 0 ? `${iso.slice(0, 16)}Z` : iso;
}

/** The period from `from` and `to` (or the default), checked: from before to, at most MAX_PERIOD_MS. */
export function periodOf(
  fromText: string | undefined,
  toText: string | undefined,
  defaultEndMs: () => number,
): AuditPeriod {
  const to = asOfValue('to', toText);
  const from = asOfValue('from', fromText);
  const toMs = to ?? (from !== null ? from + DEFAULT_PERIOD_MS : defaultEndMs());
  const fromMs = from ?? toMs - DEFAULT_PERIOD_MS;
  if (fromMs >= toMs)
    throw new BadParamError('to', `must be after from (${minuteIso(fromMs)}); got ${minuteIso(toMs)}`);
  if (toMs - fromMs > MAX_PERIOD_MS)
    throw new BadParamError('to', `must be at most ${MAX_PERIOD_MS / DAY_MS} days after from`);
  return { fromMs, toMs };
}

/**
 * The control charts' baseline window (`limitsFrom`, `limitsTo`: UTC ms or ISO 8601 with its zone),
 * both or neither: the window the chart limits come from where a location has no derived levels with a
 * window of their own. One without the other, an end not after the start or a window longer than
 * MAX_PERIOD_MS is a 400.
 */
export function limitsWindowOf(fromText: string | undefined, toText: string | undefined): AuditPeriod | null {
  const from = asOfValue('limitsFrom', fromText);
  const to = asOfValue('limitsTo', toText);
  if (from === null && to === null) return null;
  if (from === null)
    throw new BadParamError('limitsFrom', 'is needed with limitsTo (the baseline window’s start)');
  if (to === null)
    throw new BadParamError('limitsTo', 'is needed with limitsFrom (the baseline window’s end)');
  if (from >= to)
    throw new BadParamError(
      'limitsTo',
      `must be after limitsFrom (${minuteIso(from)}); got ${minuteIso(to)}`,
    );
  if (to - from > MAX_PERIOD_MS)
    throw new BadParamError('limitsTo', `must be at most ${MAX_PERIOD_MS / DAY_MS} days after limitsFrom`);
  return { fromMs: from, toMs: to };
}

/** `occupancy`, `edition`, the period and the charts' baseline window of an audit request. */
export function auditQuery(
  ctx: AppContext,
  get: (param: string) => string | undefined,
  area: AreaRef,
): {
  query: AuditQuery;
  period: AuditPeriod;
  occupancy: OccupancySelection;
  edition: 2015 | 1999;
  limits: AuditPeriod | null;
} {
  const occupancy = choiceValue('occupancy', get('occupancy'), OCCUPANCY_CHOICES) ?? 'operational';
  const edition = Number(choiceValue('edition', get('edition'), ['2015', '1999'] as const) ?? '2015') as
    | 2015
    | 1999;
  const period = periodOf(get('from'), get('to'), () => {
    let last: number | null = null;
    for (const l of area.locations) {
      const s = sampleSpan(ctx.db, l.locationId);
      if (s.lastMs !== null) last = Math.max(last ?? s.lastMs, s.lastMs);
    }
    return last === null
      ? Math.ceil(Date.now() / HOUR_MS) * HOUR_MS
      : Math.floor(last / HOUR_MS) * HOUR_MS + HOUR_MS;
  });
  const limits = limitsWindowOf(get('limitsFrom'), get('limitsTo'));
  return {
    query: {
      from: minuteIso(period.fromMs),
      to: minuteIso(period.toMs),
      occupancy,
      edition,
      ...(limits ? { limitsFrom: minuteIso(limits.fromMs), limitsTo: minuteIso(limits.toMs) } : {}),
    },
    period,
    occupancy,
    edition,
    limits,
  };
}
