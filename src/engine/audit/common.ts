/**
 * Shared pieces of the audit: occupancy states and their codes in the store, sizes in nm ↔ m, and
 * how a period is written.
 */
import { AuditInputError } from './errors.ts';
import type { AuditPeriod, OccupancySelection } from './types.ts';

export const OCCUPANCY_STATES: readonly OccupancySelection[] = ['as-built', 'at-rest', 'operational', 'any'];

/**
 * The stored occupancy codes a selection reads (counter_samples.room_state: 0 not stated, 1 as-built,
 * 2 at-rest, 3 operational). **Choice:** a sample whose file states no occupancy state counts as
 * operational (the usual state of monitoring data); 'any' reads every sample.
 */
export function roomStateCodes(sel: OccupancySelection): number[] | null {
  switch (sel) {
    case 'as-built':
      return [1];
    case 'at-rest':
      return [2];
    case 'operational':
      return [3, 0];
    case 'any':
      return null;
    default:
      throw new AuditInputError(
        `occupancy state "${String(sel)}" is not one of ${OCCUPANCY_STATES.join(', ')}`,
      );
  }
}

export function nmToM(nm: number): number {
  return nm / 1e9;
}
export function mToNm(m: number): number {
  return Math.round(m * 1e9);
}

/** µm text of a size in m, as on screens ("0.5 µm"). */
export function sizeWords(m: number): string {
  return `${Number((m * 1e6).toPrecision(3))} µm`;
}

export function isoTime(ms: number): string {
  return new Date(ms).toISOString().replace(':00.000Z', 'Z');
}

export function periodWords(p: AuditPeriod): string {
  return `${isoTime(p.fromMs)} – ${isoTime(p.toMs)}`;
}

/** Checks a period: finite, from < to. */
export function checkPeriod(p: AuditPeriod): AuditPeriod {
  if (!Number.isFinite(p.fromMs) || !Number.isFinite(p.toMs))
    throw new AuditInputError('the period needs a start and an end (ISO 8601 with a zone, or UTC ms)');
  if (!(p.fromMs < p.toMs))
    throw new AuditInputError(`the period must end after it starts: ${periodWords(p)}`);
  return p;
}
