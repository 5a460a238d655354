/**
 * The earlier lots after their pre-bond scan: the truth of each wafer through activation, rinse,
 * waits and the bonder to the bond interface, and the voids the post-bond inspections report.
 *
 * Per wafer, following its ledger after the pre-bond scan (the same rules the engine applies):
 *   activation / tool step  + a Poisson draw of the tool's (chamber's) adders per pass
 *   clean                   each particle stays with probability 1 − PRE(d) (src/model/clean.ts),
 *                           then the clean tool's adders
 *   wait / transfer         + a Poisson draw per size bin of the expected deposit (physics.ts)
 *   bond                    + the bonder's adders
 * The top wafer is flipped about its y axis onto the bottom wafer: (x, y) → (−x, y) in the bond frame.
 * Each interface particle holds a void of radius R(d) (src/model/void.ts, two flexible 775 µm plates,
 * at the line's true γ = 0.5 J/m², not the product file's typed 0.8 — line.ts TRUE_INTERFACE_ENERGY_JM2); overlapping discs merge into one void of the union's area (approximated by the sum
 * of the disc areas) at their area-weighted centre.
 *
 * Voids no particle explains are added on purpose: edge voids at the bevel (both inspections) and
 * anneal bubbles (outgassing, acoustic inspection after anneal only).
 */

import { SPECTRUM_BIN_COUNT, SPECTRUM_EDGES_M } from '../../src/model/spectrum.ts';
import { airPath } from './air.ts';
import { lineClean, lineTool, location } from './line.ts';
import { BOND_DURATION_MS, type LedgerStep, type LotPlan, pairSlots, waferId } from './lots.ts';
import { expectedDeposit, survivalThrough, voidRadiusOf } from './physics.ts';
import { lognormal, pointInAnnulus, type Rng, stream } from './random.ts';
import { drawAdders, type TruthParticle } from './surfaces.ts';

/** Follows one wafer's truth from its pre-bond scan to the interface. */
export function toInterface(
  rng: Rng,
  start: readonly TruthParticle[],
  ledger: readonly LedgerStep[],
): TruthParticle[] {
  let ps = [...start];
  const scanIdx = ledger.findIndex((s) => s.scan === 'pre-bond');
  for (const step of ledger.slice(scanIdx + 1)) {
    if (step.kind === 'clean' && step.cleanId) {
      const clean = lineClean(step.cleanId);
      ps = ps.filter((p) => rng.uniform() < survivalThrough(clean, p.dM));
      const t = lineTool(clean.toolId);
      if (t.adders) ps.push(...drawAdders(rng, t.adders, 'rinse'));
      continue;
    }
    if (step.kind === 'wait' || step.kind === 'transfer') {
      if (step.locationId && step.endMs !== null) {
        const loc = location(step.locationId);
        const exp = expectedDeposit(
          airPath(loc),
          loc,
          step.startMs,
          step.endMs,
          step.carrier === 'closed' ? 1000 : 1,
        );
        for (let k = 0; k < SPECTRUM_BIN_COUNT; k++) {
          const n = rng.poisson(exp[k]!);
          const lo = SPECTRUM_EDGES_M[k]!;
          const hi = SPECTRUM_EDGES_M[k + 1]!;
          for (let j = 0; j < n; j++) {
            const [xM, yM] = pointInAnnulus(rng, 0, 0.15);
            ps.push({ xM, yM, dM: lo * (hi / lo) ** rng.uniform(), origin: 'deposit' });
          }
        }
      }
      if (step.toolId) {
        const t = lineTool(step.toolId);
        if (t.adders) ps.push(...drawAdders(rng, t.adders, 'deposit'));
      }
      continue;
    }
    if (step.toolId && (step.kind === 'activation' || step.kind === 'bond' || step.kind === 'process')) {
      const t = lineTool(step.toolId, step.chamber);
      if (t.adders) ps.push(...drawAdders(rng, t.adders, step.kind === 'bond' ? 'bonder' : 'activation'));
    }
  }
  return ps;
}

export type VoidClass = 'particle' | 'edge' | 'bubble';

export interface VoidRecord {
  /** Centre in the bond frame (bottom wafer), m. */
  xM: number;
  yM: number;
  diameterM: number;
  cls: VoidClass;
}

export interface InterfaceTruth {
  pairIndex: number;
  topWaferId: string;
  bottomWaferId: string;
  bondStartMs: number;
  /** Interface particles in the bond frame, with the wafer they sat on. */
  particles: (TruthParticle & { wafer: 'top' | 'bottom' })[];
  /** Particle voids as discs (before merging). */
  discs: { xM: number; yM: number; rM: number }[];
}

export function pairInterface(
  lot: LotPlan,
  p: number,
  preBond: (slot: number) => readonly TruthParticle[],
  ledger: (slot: number) => readonly LedgerStep[],
): InterfaceTruth {
  const { top, bottom } = pairSlots(p);
  const rng = stream(`interface:${lot.id}:${p}`);
  const topPs = toInterface(rng, preBond(top), ledger(top)).map((q) => ({
    ...q,
    xM: -q.xM,
    wafer: 'top' as const,
  }));
  const botPs = toInterface(rng, preBond(bottom), ledger(bottom)).map((q) => ({
    ...q,
    wafer: 'bottom' as const,
  }));
  const particles = [...topPs, ...botPs];
  const discs = particles.map((q) => ({ xM: q.xM, yM: q.yM, rM: voidRadiusOf(q.dM) }));
  const bond = ledger(bottom).find((s) => s.kind === 'bond');
  return {
    pairIndex: p,
    topWaferId: waferId(lot.id, top),
    bottomWaferId: waferId(lot.id, bottom),
    bondStartMs: bond ? bond.startMs : Number.NaN,
    particles,
    discs,
  };
}

/** Merges overlapping discs (union–find) into voids of equivalent diameter. */
export function mergeDiscs(
  discs: readonly { xM: number; yM: number; rM: number }[],
): { xM: number; yM: number; diameterM: number }[] {
  const parent = discs.map((_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (let i = 0; i < discs.length; i++)
    for (let j = i + 1; j < discs.length; j++) {
      const a = discs[i]!;
      const b = discs[j]!;
      if (Math.hypot(a.xM - b.xM, a.yM - b.yM) < a.rM + b.rM) parent[find(i)] = find(j);
    }
  const groups = new Map<number, { area: number; sx: number; sy: number; first: number }>();
  discs.forEach((d, i) => {
    const g = find(i);
    const area = Math.PI * d.rM * d.rM;
    const e = groups.get(g) ?? { area: 0, sx: 0, sy: 0, first: i };
    e.area += area;
    e.sx += area * d.xM;
    e.sy += area * d.yM;
    groups.set(g, e);
  });
  return [...groups.values()]
    .sort((a, b) => a.first - b.first)
    .map((e) => ({ xM: e.sx / e.area, yM: e.sy / e.area, diameterM: 2 * Math.sqrt(e.area / Math.PI) }));
}

export interface InspectionSpec {
  stage: 'after-contact' | 'after-anneal';
  method: 'infrared' | 'acoustic';
  toolId: string;
  /** Smallest void reported, equivalent diameter, m. */
  smallestM: number;
  /** Position error (1 σ), m, and relative sizing error. */
  positionSigmaM: number;
  sizeSigma: number;
}

export const INSPECTIONS: InspectionSpec[] = [
  {
    stage: 'after-contact',
    method: 'infrared',
    toolId: 'BIRI-1',
    smallestM: 0.5e-3,
    positionSigmaM: 0.15e-3,
    sizeSigma: 0.08,
  },
  {
    stage: 'after-anneal',
    method: 'acoustic',
    toolId: 'BSAM-1',
    smallestM: 0.1e-3,
    positionSigmaM: 0.05e-3,
    sizeSigma: 0.05,
  },
];

/** When each inspection of pair p of an earlier lot ran. */
export function inspectionTimeMs(truth: InterfaceTruth, spec: InspectionSpec): number {
  if (spec.stage === 'after-contact') return truth.bondStartMs + BOND_DURATION_MS + 5 * 60_000;
  // Anneal overnight (BANL-1, 300 °C, 18:00–24:00 of the bond day), acoustic inspection the next morning.
  const day = new Date(truth.bondStartMs);
  return (
    Date.UTC(day.getUTCFullYear(), day.getUTCMonth(), day.getUTCDate() + 1, 8, 0, 0) +
    truth.pairIndex * 10 * 60_000
  );
}

/** The voids one inspection reports for a pair: particle voids plus edge voids and anneal bubbles. */
export function inspectVoids(lotId: string, truth: InterfaceTruth, spec: InspectionSpec): VoidRecord[] {
  const merged = mergeDiscs(truth.discs);
  // Edge voids and bubbles are the pair's own (the same edge voids at both inspections).
  const own = stream(`unexplained:${lotId}:${truth.pairIndex}`);
  const edge: VoidRecord[] = [];
  for (let k = own.poisson(0.9); k > 0; k--) {
    const [xM, yM] = pointInAnnulus(own, 0.1465, 0.1495);
    edge.push({ xM, yM, diameterM: 0.6e-3 * lognormal(own, 0.45), cls: 'edge' });
  }
  const bubbles: VoidRecord[] = [];
  for (let k = own.poisson(1.4); k > 0; k--) {
    const [xM, yM] = pointInAnnulus(own, 0, 0.145);
    bubbles.push({ xM, yM, diameterM: 0.25e-3 * lognormal(own, 0.4), cls: 'bubble' });
  }
  const rng = stream(`inspect:${lotId}:${truth.pairIndex}:${spec.stage}`);
  const seen: VoidRecord[] = [];
  const all: VoidRecord[] = [
    ...merged.map((v) => ({ ...v, cls: 'particle' as const })),
    ...edge,
    ...(spec.stage === 'after-anneal' ? bubbles : []),
  ];
  for (const v of all) {
    const d = v.diameterM * lognormal(rng, spec.sizeSigma);
    const xM = v.xM + spec.positionSigmaM * rng.normal();
    const yM = v.yM + spec.positionSigmaM * rng.normal();
    if (d < spec.smallestM || Math.hypot(xM, yM) > 0.15) continue;
    seen.push({ xM, yM, diameterM: d, cls: v.cls });
  }
  return seen;
}
