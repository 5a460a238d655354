/**
 * The registry of import kinds. Each kind lives in its own file (`./<kind>.ts`) and is listed here
 * once; `importFile` finds it by name. To add a kind: import it below and add it to KINDS.
 */
import type { ImportKind, ImportKindName } from '../types.ts';
import { counterSamples } from './counter-samples.ts';
import { ledger } from './ledger.ts';
import { locations } from './locations.ts';
import { pairs } from './pairs.ts';
import { products } from './products.ts';
import { scans } from './scans.ts';
import { tools } from './tools.ts';
import { voidInspections } from './void-inspections.ts';

export const KINDS: readonly ImportKind[] = [
  locations,
  counterSamples,
  // — further kinds below, one line each —
  products,
  tools,
  scans,
  ledger,
  pairs,
  voidInspections,
];

export function getKind(name: string): ImportKind | undefined {
  return KINDS.find((k) => k.name === name);
}

export type { ImportKindName };
