/**
 * Units as files write them (header suffixes and `# units:` entries) and their conversion to SI.
 * Factors are those of src/model/units.ts (SI prefixes; 1 ft³ = 0.3048³ m³ exactly, NIST SP 811).
 * A value converts as `si = value / perSi` for prefixed units (division by an exact power of ten keeps
 * 0.5 µm → 5e-7 m exact to the double) or `si = value * toSi` otherwise.
 */
import { M3_PER_FT3 } from '../model/units.ts';

export interface UnitDef {
  /** As written (lower-cased for matching). */
  name: string;
  /** How docs show it. */
  shown: string;
  /** SI = value / divide * multiply. */
  divide: number;
  multiply: number;
}

const u = (name: string, shown: string, divide: number, multiply = 1): UnitDef => ({
  name,
  shown,
  divide,
  multiply,
});

export const SIZE_UNITS: readonly UnitDef[] = [u('um', 'µm', 1e6), u('µm', 'µm', 1e6), u('nm', 'nm', 1e9)];
export const VOLUME_UNITS: readonly UnitDef[] = [
  u('l', 'L', 1e3),
  u('m3', 'm³', 1),
  u('ft3', 'ft³', 1, M3_PER_FT3),
];
export const DURATION_UNITS: readonly UnitDef[] = [
  u('s', 's', 1),
  u('min', 'min', 1, 60),
  u('h', 'h', 1, 3600),
];
/** Flow rates: L/min, m³/s, ft³/min (CFM). */
export const FLOW_UNITS: readonly UnitDef[] = [
  u('l_min', 'L/min', 1e3 * 60),
  u('m3_s', 'm³/s', 1),
  u('ft3_min', 'ft³/min', 60, M3_PER_FT3),
];
/** Concentrations (counts written per volume): per m³, per L, per ft³ → per m³. */
export const CONCENTRATION_UNITS: readonly UnitDef[] = [
  u('per_m3', 'per m³', 1),
  u('per_l', 'per L', 1, 1e3),
  u('per_ft3', 'per ft³', M3_PER_FT3),
];

export function findUnit(table: readonly UnitDef[], written: string): UnitDef | null {
  const w = written.trim().toLowerCase().replace('/', '_');
  return table.find((t) => t.name === w) ?? null;
}

export function toSi(value: number, unit: UnitDef): number {
  const v = unit.divide === 1 ? value : value / unit.divide;
  return unit.multiply === 1 ? v : v * unit.multiply;
}

/** A size as written in a header, e.g. `0.1um`, `100nm`, `0.3µm` → metres; null if not a size. */
export function parseSize(text: string): { m: number; shown: string } | null {
  const m = /^(\d+(?:\.\d+)?)(um|µm|nm)$/.exec(text);
  if (!m) return null;
  const unit = findUnit(SIZE_UNITS, m[2]!)!;
  // Shifting the decimal exponent in the text gives the double nearest to the exact size
  // ("0.1e-6" → 1e-7), which dividing 0.1 by 1e6 does not.
  const v = Number(`${m[1]}e-${unit.divide === 1e6 ? 6 : 9}`);
  if (!(v > 0)) return null;
  return { m: v, shown: `${m[1]} ${unit.shown}` };
}
