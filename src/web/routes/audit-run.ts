/**
 * The audit pages' one door to the engine (src/engine/audit/): make an area's audit. An area the
 * engine cannot audit comes back with its reason in words; an unknown one is a 404.
 */
import type { AuditView } from '../../../views/pages/audit-tables.ts';
import { AuditInputError } from '../../engine/audit/errors.ts';
import { classifyAreaFromDb } from '../../engine/audit/loader.ts';
import type { AuditPeriod, OccupancySelection } from '../../engine/audit/types.ts';
import type { AppContext } from '../context.ts';
import { BadParamError } from '../params.ts';
import type { AreaRef } from './audit-params.ts';

/**
 * The audit of an area, or null with the engine's reason when the area cannot be audited. Parts the
 * engine does not compute yet are null, and the pages say so.
 */
export function runAreaAudit(
  ctx: AppContext,
  area: AreaRef,
  period: AuditPeriod,
  occupancy: OccupancySelection,
  edition: 2015 | 1999,
): { audit: AuditView | null; refusal: string | null } {
  try {
    const classification = classifyAreaFromDb(ctx.db, area.id, { period, occupancy, edition });
    return {
      audit: {
        areaId: area.id,
        period,
        occupancy,
        classification,
        levels: null,
        excursions: null,
        costs: null,
        charts: null,
      },
      refusal: null,
    };
  } catch (err) {
    if (!(err instanceof AuditInputError)) throw err;
    if (err.kind === 'not-found') throw new BadParamError('area', err.message, 404);
    return { audit: null, refusal: err.message };
  }
}

/** What this version stores from the audit page's forms. */
export const AUDIT_FORMS = { levels: false, acknowledge: false } as const;
