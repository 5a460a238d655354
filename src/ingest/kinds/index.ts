/**
 * The registry of import kinds. Each kind lives in its own file (`./<kind>.ts`) and is listed here
 * once; `importFile` finds it by name. To add a kind: import it below and add it to KINDS.
 */
import type { ImportKind, ImportKindName } from '../types.ts';
import { counterSamples } from './counter-samples.ts';
import { locations } from './locations.ts';
// — kinds of the ingest core above; further kinds below, one import line each —
import { products } from './products.ts';
import { scans } from './scans.ts';
import { tools } from './tools.ts';

export const KINDS: readonly ImportKind[] = [
  locations,
  counterSamples,
  // — further kinds below, one line each —
  products,
  tools,
  scans,
];

export function getKind(name: string): ImportKind | undefined {
  return KINDS.find((k) => k.name === name);
}

export type { ImportKindName };
