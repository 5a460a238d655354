/**
 * The audit pages' one door to the engine (src/engine/audit/): make an area's audit, derive levels
 * from the levels form, acknowledge an excursion from the acknowledge form. An area the engine
 * cannot audit comes back with its reason in words; an unknown one is a 404.
 */
import type { Context } from 'hono';
import type { AuditView } from '../../../views/pages/audit-tables.ts';
import {
  AuditInputError,
  acknowledgeExcursion,
  deriveAndStoreLevels,
  LEVEL_METHODS,
  OCCUPANCY_STATES,
} from '../../engine/audit/index.ts';
import type {
  AuditPeriod,
  ChamberHistory,
  ExcursionAck,
  LevelRecord,
  LineParetoEntry,
  OccupancySelection,
} from '../../engine/audit/types.ts';
import { onViewThread } from '../../engine/view-thread.ts';
import { pageClockMs } from '../../store/settings.ts';
import { actorName } from '../auth/audit.ts';
import type { AppContext } from '../context.ts';
import { asOfValue, BadParamError, choiceValue, positiveNumberValue } from '../params.ts';
import type { AreaRef } from './audit-params.ts';

/** The audit of an area (src/engine/audit/audit.ts), or null with the engine's reason when it cannot be made. */
export async function runAreaAudit(
  ctx: AppContext,
  area: AreaRef,
  period: AuditPeriod,
  occupancy: OccupancySelection,
  edition: 2015 | 1999,
  chartBaseline: AuditPeriod | null = null,
): Promise<{ audit: AuditView | null; refusal: string | null }> {
  try {
    // on the pages' thread, at the pages' minute (src/engine/view-thread.ts)
    const opts = { period, occupancy, edition, chartBaseline, asOfMs: pageClockMs(ctx.db) };
    const audit = await onViewThread(ctx.db, 'areaAudit', { areaId: area.id, opts });
    return {
      audit,
      refusal: null,
    };
  } catch (err) {
    if (!(err instanceof AuditInputError)) throw err;
    if (err.kind === 'not-found') throw new BadParamError('area', err.message, 404);
    return { audit: null, refusal: err.message };
  }
}

/**
 * A form the engine refused (a baseline shorter than the method needs, parameters out of range, an
 * empty comment): a 400 with the page and the message that says what to change.
 */
export class FormRefusal extends Error {
  constructor(
    message: string,
    readonly status: 400 | 422 = 422,
  ) {
    super(message);
    this.name = 'FormRefusal';
  }
}

const field = (body: Record<string, unknown>, k: string): string | undefined =>
  typeof body[k] === 'string' ? (body[k] as string) : undefined;

/**
 * Derives and stores levels from the levels form (one location and channel): fields through
 * src/web/params.ts (a malformed value is a 400 naming it); what the engine refuses — a baseline
 * shorter than the method needs, parameters out of range, a channel the counters lack — is a
 * FormRefusal shown on the page.
 */
export function deriveLevelsFromForm(
  ctx: AppContext,
  c: Context,
  area: AreaRef,
  body: Record<string, unknown>,
): LevelRecord {
  const method = choiceValue('method', field(body, 'method'), LEVEL_METHODS);
  if (method === null) throw new BadParamError('method', `is required: one of ${LEVEL_METHODS.join(', ')}`);
  const location = (field(body, 'location') ?? '').trim();
  if (!area.locations.some((l) => l.locationId === location))
    throw new BadParamError(
      'location',
      `must name a location of area ${area.id}; got "${location.slice(0, 60)}"`,
    );
  const channelUm = positiveNumberValue('channel', field(body, 'channel'), 1000);
  if (channelUm === null) throw new BadParamError('channel', 'is required (a size in µm, e.g. 0.5)');
  const fromMs = asOfValue('baselineFrom', field(body, 'baselineFrom'));
  const toMs = asOfValue('baselineTo', field(body, 'baselineTo'));
  if ((fromMs === null) !== (toMs === null))
    throw new BadParamError(
      fromMs === null ? 'baselineFrom' : 'baselineTo',
      'is required with the other end of the window',
    );
  const alert = nonNegativeValue('alertParameter', field(body, 'alertParameter'));
  const action = nonNegativeValue('actionParameter', field(body, 'actionParameter'));
  const name = (field(body, 'name') ?? '').trim();
  if (name.length > 80) throw new BadParamError('name', 'must be at most 80 characters');
  const parameters: Record<string, number> = {};
  if (alert !== null) parameters.alert = alert;
  if (action !== null) parameters.action = action;
  try {
    return deriveAndStoreLevels(ctx.db, {
      locationId: location,
      diameterM: channelUm * 1e-6,
      method,
      window: fromMs === null || toMs === null ? null : { fromMs, toMs },
      occupancy: choiceValue('occupancy', field(body, 'occupancy'), OCCUPANCY_STATES) ?? 'operational',
      parameters,
      name,
      setBy: actorName(c, field(body, 'openName')),
      nowMs: Date.now(),
    });
  } catch (err) {
    if (err instanceof AuditInputError) throw new FormRefusal(`Levels not stored: ${err.message}.`, 400);
    throw err;
  }
}

/** A number ≥ 0 (a method parameter: k, a probability, a fraction), or null when not given. */
function nonNegativeValue(param: string, value: string | undefined): number | null {
  if (value !== undefined && value.trim() === '0') return 0;
  return positiveNumberValue(param, value, 1e6);
}

/** Stores an acknowledgement from the acknowledge form; the engine refuses an empty comment. */
export function acknowledgeFromForm(
  ctx: AppContext,
  c: Context,
  body: Record<string, unknown>,
): ExcursionAck {
  const excursionId = (field(body, 'excursion') ?? '').trim();
  if (excursionId === '' || excursionId.length > 300)
    throw new BadParamError('excursion', 'is required: the id of an excursion on this page');
  try {
    return acknowledgeExcursion(
      ctx.db,
      excursionId,
      field(body, 'comment') ?? '',
      actorName(c, field(body, 'openName')),
      Date.now(),
    );
  } catch (err) {
    if (err instanceof AuditInputError) throw new FormRefusal(`Not acknowledged: ${err.message}.`, 400);
    throw err;
  }
}

/**
 * The line view over a period: the Pareto of expected voids across the lots assessed in it, each
 * tool chamber's passes in it (chambers without a pass left out), and the engine's notes.
 */
export async function runLineView(
  ctx: AppContext,
  period: AuditPeriod,
): Promise<{
  pareto: LineParetoEntry[];
  particleVoids: number;
  unexplainedVoids: number;
  histories: ChamberHistory[];
  lots: string[];
  problems: string[];
}> {
  try {
    // At the minute, as the other pages assess (and as the page is kept: src/web/page-cache.ts),
    // on the pages' thread (src/engine/view-thread.ts).
    const v = await onViewThread(ctx.db, 'line', { period, asOfMs: pageClockMs(ctx.db) });
    const p = v.pareto;
    const histories = v.histories.filter((h) => h.points.length > 0);
    const problems = [...p.notes];
    if (p.lots.length === 0)
      problems.push('No lot with pairs has a ledger step in this period: nothing to assess.');
    return {
      pareto: p.entries,
      particleVoids: p.particleVoids,
      unexplainedVoids: p.unexplainedVoids,
      histories,
      lots: p.lots,
      problems,
    };
  } catch (err) {
    if (!(err instanceof AuditInputError)) throw err;
    return {
      pareto: [],
      particleVoids: 0,
      unexplainedVoids: 0,
      histories: [],
      lots: [],
      problems: [err.message],
    };
  }
}
