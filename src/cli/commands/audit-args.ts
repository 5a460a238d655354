/**
 * Options shared by `voidcast audit`, `voidcast levels` and `voidcast excursions`: times, sizes,
 * occupancy states, and how an AuditInputError becomes an exit code.
 */

import { parseAsOfText } from '../../engine/as-of.ts';
import { OCCUPANCY_STATES } from '../../engine/audit/common.ts';
import { AuditInputError } from '../../engine/audit/errors.ts';
import type { OccupancySelection } from '../../engine/audit/types.ts';
import { type CliIo, EXIT, UsageError } from '../io.ts';

/** A time option: ISO 8601 with its zone, or UTC ms (the assessment-time rule). */
export function timeOption(name: string, value: string | undefined, required = true): number | null {
  if (value === undefined) {
    if (required)
      throw new UsageError(`--${name} is required: ISO 8601 with its zone (2026-10-18T00:00Z) or UTC ms`);
    return null;
  }
  const r = parseAsOfText(value);
  if (!r.ok) throw new UsageError(`--${name} ${r.reason}`);
  return r.ms;
}

/** A size: "0.5", "0.5um", "0.5µm" (µm) or "500nm"; returns m. */
export function sizeOption(name: string, value: string | undefined): number {
  if (value === undefined) throw new UsageError(`--${name} is required: a size in µm such as 0.5 (or 500nm)`);
  const m = /^\s*([0-9]*\.?[0-9]+)\s*(um|µm|nm)?\s*$/.exec(value);
  const v = m ? Number(m[1]) : Number.NaN;
  if (!m || !(v > 0))
    throw new UsageError(`--${name} must be a size such as 0.5 (µm) or 500nm, got "${value}"`);
  const metres = m[2] === 'nm' ? v / 1e9 : v / 1e6;
  if (metres < 1e-8 || metres > 1e-4)
    throw new UsageError(`--${name} must be between 0.01 and 100 µm, got "${value}"`);
  return metres;
}

export function occupancyOption(value: string | undefined): OccupancySelection {
  const v = value ?? 'operational';
  if (!(OCCUPANCY_STATES as readonly string[]).includes(v))
    throw new UsageError(`--occupancy must be one of ${OCCUPANCY_STATES.join(', ')}, got "${v}"`);
  return v as OccupancySelection;
}

export function numberOption(name: string, value: string | undefined): number | undefined {
  if (value === undefined) return undefined;
  const v = Number(value);
  if (value.trim() === '' || !Number.isFinite(v))
    throw new UsageError(`--${name} must be a number, got "${value}"`);
  return v;
}

/** Runs a command body; an AuditInputError becomes a message and exit 4 (not found) or 3 (refused). */
export function withAuditErrors(cmd: string, io: CliIo, body: () => number): number {
  try {
    return body();
  } catch (e) {
    if (e instanceof AuditInputError) {
      io.err(`voidcast ${cmd}: ${e.message}\n`);
      return e.kind === 'not-found' ? EXIT.notFound : EXIT.rejected;
    }
    throw e;
  }
}

export const fmt = (v: number | null, digits = 3): string =>
  v === null ? '—' : Math.abs(v) >= 1000 ? v.toFixed(0) : v === 0 ? '0' : v.toPrecision(digits);
export const um = (m: number): string => `${Number((m * 1e6).toPrecision(3))} µm`;
export const iso = (ms: number): string => new Date(ms).toISOString().replace(':00.000Z', 'Z');
