/**
 * The demo's lots and each wafer's route through the line (its exposure ledger).
 *
 * Five product lots of 25 wafers of Gale-7. Slots 1–24 form twelve pairs (odd slot on top, flipped
 * about its y axis onto the next even slot); slot 25 is the lot's spare and is not bonded.
 *
 *   TR2641, TR2642  earlier lots, bonded on 7 and 9 October; their void inspections are in the files.
 *   TR2651          waiting: a clean lot rinsed on LRIN-2 (weak at small sizes) — meant to come out BOND.
 *   TR2652          waiting: activated in LACT-1 chamber B (sheds particles) — meant to come out RE-CLEAN.
 *   TR2653          waiting: parked open in Boreas bay 2 through the night of the excursion, far past its
 *                   Q-time — meant to come out HOLD.
 *
 * Plus the monitor lot TRMON1 (bare and sphere-seeded wafers through LACT-1 A/B and LRIN-1/2) that
 * backs the adder levels and removal curves stated in the tools file.
 *
 * Every wafer's route (one ledger step per row; contiguous in time, each wafer):
 *   CMP (ZCMP-1) → wait in closed FOUP → post-CMP clean (ZCLN-1) → post-clean scan (ZSCN-1, 45 nm)
 *   → stocker (ZSTK-1, closed) → wait → pre-bond scan (LSCN-1, 37 nm) → wait → pre-bond clean
 *   (megasonic rinse-dry, LRIN-1 or -2) → plasma activation with in-situ hydration (LACT-1 A or B)
 *   → wait → transfer to Boreas (closed) → Q-time wait (open cassettes in the bond queue
 *   mini-environment; TR2653: closed FOUPs on a cart in Boreas bay 2) → bond (BBND-1; earlier lots).
 */
import { at, DEMO_AS_OF_MS } from './line.ts';

export type StepKind = 'process' | 'clean' | 'activation' | 'inspection' | 'wait' | 'transfer' | 'bond';
export type Carrier = 'open' | 'closed' | 'purged' | 'in-tool';

export interface LedgerStep {
  lotId: string;
  waferId: string;
  seq: number;
  step: string;
  kind: StepKind;
  toolId: string | null;
  chamber: string | null;
  /** The clean that ran (clean steps). */
  cleanId: string | null;
  startMs: number;
  /** Null: still running at the time of the export (the waiting lots' queue). */
  endMs: number | null;
  locationId: string | null;
  carrier: Carrier;
  /** Scan taken at this step (inspection steps), for the scans file. */
  scan: ScanPoint | null;
}

export type ScanPoint = 'post-clean' | 'pre-bond';

export interface LotPlan {
  id: string;
  role: 'earlier' | 'waiting';
  /** The call the scenario is built to produce (waiting lots), and its dominant source, in words. */
  intent: { call: 'bond' | 're-clean' | 'hold'; dominant: string } | null;
  story: string;
  /**
   * Particles left on each wafer by the post-CMP clean (truth): mean count ≥ 20 nm per wafer, the
   * cumulative power-law slope of their sizes, and the negative-binomial α of the wafer-to-wafer spread.
   */
  resident: { meanAbove20nm: number; slope: number; alpha: number };
  /** Slots whose wafers carry a cluster of particles (a handling mark), and their size. */
  clusters: { slot: number; count: number; radiusM: number }[];
  /** Slots whose wafers carry an edge signature (particles within 5 mm of the edge). */
  edgeSlots: number[];
  chamber: 'A' | 'B';
  rinseTool: 'LRIN-1' | 'LRIN-2';
  /** Lot-level start of each tool step, UTC ms. */
  t: {
    cmp: number;
    clean: number;
    stockerIn: number;
    stockerOut: number;
    preBondScan: number;
    /** First wafer's pre-bond clean; each wafer is rinsed (4 min) then activated (3 min). */
    rinse: number;
    leaveLevant: number;
    /** First pair's bond start (earlier lots); null while waiting. */
    bond: number | null;
  };
  /** Where the lot waits for the bonder, and how (open cassettes on the queue shelves, or closed FOUPs). */
  queueLocationId: string;
  queueCarrier: Carrier;
  /** Re-cleans each wafer already had. */
  recleanCount: number;
}

export const LOTS: LotPlan[] = [
  {
    id: 'TR2641',
    role: 'earlier',
    intent: null,
    story: 'An ordinary lot through chamber A and LRIN-1, bonded on 7 October after a 3–5 h queue.',
    resident: { meanAbove20nm: 24, slope: 1.35, alpha: 3 },
    clusters: [{ slot: 9, count: 18, radiusM: 2.5e-3 }],
    edgeSlots: [],
    chamber: 'A',
    rinseTool: 'LRIN-1',
    t: times('2026-10-07', { bond: '14:30' }),
    queueLocationId: 'BOR-QUE-ME',
    queueCarrier: 'open',
    recleanCount: 0,
  },
  {
    id: 'TR2642',
    role: 'earlier',
    intent: null,
    story:
      'Through chamber A and LRIN-2, bonded on 9 October after a 5–6 h queue; ZCLN-1 left an edge ring on four wafers.',
    resident: { meanAbove20nm: 26, slope: 1.3, alpha: 3 },
    clusters: [],
    edgeSlots: [3, 4, 11, 18],
    chamber: 'A',
    rinseTool: 'LRIN-2',
    t: times('2026-10-09', { bond: '16:00' }),
    queueLocationId: 'BOR-QUE-ME',
    queueCarrier: 'open',
    recleanCount: 0,
  },
  {
    id: 'TR2651',
    role: 'waiting',
    intent: {
      call: 'bond',
      dominant: 'what LRIN-2 leaves at small sizes (the scan tail and detected particles)',
    },
    story:
      'A clean lot: few particles after the post-CMP clean, short queue in the bond mini-environment. It was rinsed on LRIN-2, whose megasonic is weak below ~60 nm, so what risk there is comes from small particles the rinse left.',
    resident: { meanAbove20nm: 16, slope: 1.45, alpha: 4 },
    clusters: [{ slot: 14, count: 10, radiusM: 1.5e-3 }],
    edgeSlots: [],
    chamber: 'A',
    rinseTool: 'LRIN-2',
    t: times('2026-10-18', {
      cmp: '05:00',
      clean: '07:00',
      stockerIn: '08:30',
      stockerOut: '10:30',
      preBondScan: '10:45',
      rinse: '13:00',
      leaveLevant: '15:00',
    }),
    queueLocationId: 'BOR-QUE-ME',
    queueCarrier: 'open',
    recleanCount: 0,
  },
  {
    id: 'TR2652',
    role: 'waiting',
    intent: { call: 're-clean', dominant: 'LACT-1 chamber B adders' },
    story:
      'Activated in LACT-1 chamber B, whose liner is past its cleaning interval and sheds flakes onto the freshly rinsed wafers. One more LRIN-1 rinse would take most of them off and bring the pairs within spec.',
    resident: { meanAbove20nm: 22, slope: 1.35, alpha: 3 },
    clusters: [],
    edgeSlots: [6, 7],
    chamber: 'B',
    rinseTool: 'LRIN-1',
    t: times('2026-10-18', {
      cmp: '06:45',
      clean: '08:30',
      stockerIn: '10:00',
      stockerOut: '11:30',
      preBondScan: '11:45',
      rinse: '13:10',
      leaveLevant: '15:10',
    }),
    queueLocationId: 'BOR-QUE-ME',
    queueCarrier: 'open',
    recleanCount: 0,
  },
  {
    id: 'TR2653',
    role: 'waiting',
    intent: { call: 'hold', dominant: 'the wait in Boreas bay 2' },
    story:
      'Activated on Saturday evening; the bonder went down and the lot was parked, in its closed FOUPs, on a buffer cart in Boreas bay 2. It sat there through the night the bay’s fan-filter unit failed — an action-level excursion — and is now far past its activation → bond Q-time.',
    resident: { meanAbove20nm: 24, slope: 1.35, alpha: 3 },
    clusters: [{ slot: 5, count: 14, radiusM: 2e-3 }],
    edgeSlots: [],
    chamber: 'A',
    rinseTool: 'LRIN-1',
    t: times('2026-10-17', {
      cmp: '10:00',
      clean: '12:00',
      stockerIn: '13:30',
      stockerOut: '15:30',
      preBondScan: '15:45',
      rinse: '17:05',
      leaveLevant: '19:00',
    }),
    queueLocationId: 'BOR-B2',
    queueCarrier: 'closed',
    recleanCount: 0,
  },
];

function times(
  day: string,
  o: Partial<
    Record<
      | 'cmp'
      | 'clean'
      | 'stockerIn'
      | 'stockerOut'
      | 'preBondScan'
      | 'activation'
      | 'rinse'
      | 'leaveLevant'
      | 'bond',
      string
    >
  >,
): LotPlan['t'] {
  const t = (hm: string) => at(`${day}T${hm}:00Z`);
  return {
    cmp: t(o.cmp ?? '04:00'),
    clean: t(o.clean ?? '06:00'),
    stockerIn: t(o.stockerIn ?? '07:30'),
    stockerOut: t(o.stockerOut ?? '09:30'),
    preBondScan: t(o.preBondScan ?? '09:45'),
    rinse: t(o.rinse ?? '11:05'),
    leaveLevant: t(o.leaveLevant ?? '13:00'),
    bond: o.bond ? t(o.bond) : null,
  };
}

export const WAFERS_PER_LOT = 25;
export const PAIRS_PER_LOT = 12;
const MIN = 60_000;

export const waferId = (lotId: string, slot: number) => `${lotId}-${String(slot).padStart(2, '0')}`;
export const pairId = (lotId: string, p: number) => `${lotId}-P${String(p + 1).padStart(2, '0')}`;

/** Pair p (0-based) of a lot: top = slot 2p+1, bottom = slot 2p+2. */
export function pairSlots(p: number): { top: number; bottom: number } {
  return { top: 2 * p + 1, bottom: 2 * p + 2 };
}

/** Bond start of pair p of a lot (12 min per pair on BBND-1), or null while waiting. */
export function bondStartMs(lot: LotPlan, p: number): number | null {
  return lot.t.bond === null ? null : lot.t.bond + p * 12 * MIN;
}
export const BOND_DURATION_MS = 12 * MIN;

/** The ledger of one wafer of a lot (slot 1–25). */
export function waferLedger(lot: LotPlan, slot: number): LedgerStep[] {
  const i = slot - 1;
  const id = waferId(lot.id, slot);
  const steps: LedgerStep[] = [];
  let seq = 0;
  let now: number | null = null;
  const push = (s: Omit<LedgerStep, 'lotId' | 'waferId' | 'seq' | 'scan'> & { scan?: ScanPoint }) => {
    seq += 10;
    steps.push({ lotId: lot.id, waferId: id, seq, scan: null, ...s });
    now = s.endMs;
  };
  const waitUntil = (endMs: number, locationId: string, step = 'wait in FOUP') => {
    if (now !== null && endMs > now)
      push({
        step,
        kind: 'wait',
        toolId: null,
        chamber: null,
        cleanId: null,
        startMs: now,
        endMs,
        locationId,
        carrier: 'closed',
      });
  };
  const tool = (
    startMs: number,
    durMin: number,
    s: Pick<LedgerStep, 'step' | 'kind' | 'toolId' | 'chamber' | 'cleanId' | 'locationId'> & {
      scan?: ScanPoint;
    },
    waitLocationId: string,
  ) => {
    waitUntil(startMs, waitLocationId);
    push({ ...s, startMs, endMs: startMs + durMin * MIN, carrier: 'in-tool' });
  };
  const T = lot.t;
  tool(
    T.cmp + 4 * i * MIN,
    6,
    {
      step: 'dielectric/Cu CMP',
      kind: 'process',
      toolId: 'ZCMP-1',
      chamber: null,
      cleanId: null,
      locationId: 'ZEP-B1',
    },
    'ZEP-B1',
  );
  tool(
    T.clean + 3 * i * MIN,
    5,
    {
      step: 'post-CMP clean',
      kind: 'clean',
      toolId: 'ZCLN-1',
      chamber: null,
      cleanId: 'CLN-PCMP',
      locationId: 'ZEP-CLN-ME',
    },
    'ZEP-B2',
  );
  tool(
    T.clean + (3 * i + 5) * MIN,
    2,
    {
      step: 'post-clean inspection',
      kind: 'inspection',
      toolId: 'ZSCN-1',
      chamber: null,
      cleanId: null,
      locationId: 'ZEP-CLN-ME',
      scan: 'post-clean',
    },
    'ZEP-CLN-ME',
  );
  waitUntil(T.stockerIn, 'ZEP-B2');
  push({
    step: 'stocker',
    kind: 'transfer',
    toolId: 'ZSTK-1',
    chamber: null,
    cleanId: null,
    startMs: T.stockerIn,
    endMs: T.stockerOut,
    locationId: 'ZEP-STK',
    carrier: 'closed',
  });
  tool(
    T.preBondScan + 2 * i * MIN,
    2,
    {
      step: 'pre-bond inspection',
      kind: 'inspection',
      toolId: 'LSCN-1',
      chamber: null,
      cleanId: null,
      locationId: 'LEV-SCN-ME',
      scan: 'pre-bond',
    },
    'LEV-B1',
  );
  // The pre-bond clean (megasonic rinse and dry), then plasma activation with in-situ hydration.
  const rinseStart = T.rinse + 4 * i * MIN;
  waitUntil(rinseStart, 'LEV-B1');
  push({
    step: 'megasonic rinse and dry',
    kind: 'clean',
    toolId: lot.rinseTool,
    chamber: null,
    cleanId: lot.rinseTool === 'LRIN-1' ? 'CLN-RIN1' : 'CLN-RIN2',
    startMs: rinseStart,
    endMs: rinseStart + 4 * MIN,
    locationId: 'LEV-RIN-ME',
    carrier: 'in-tool',
  });
  push({
    step: 'plasma activation',
    kind: 'activation',
    toolId: 'LACT-1',
    chamber: lot.chamber,
    cleanId: null,
    startMs: rinseStart + 4 * MIN,
    endMs: rinseStart + 7 * MIN,
    locationId: 'LEV-ACT-ME',
    carrier: 'in-tool',
  });
  waitUntil(T.leaveLevant, 'LEV-B1');
  push({
    step: 'transfer to Boreas',
    kind: 'transfer',
    toolId: null,
    chamber: null,
    cleanId: null,
    startMs: T.leaveLevant,
    endMs: T.leaveLevant + 20 * MIN,
    locationId: 'BOR-B1',
    carrier: 'closed',
  });
  if (slot > PAIRS_PER_LOT * 2) return steps; // the spare goes back to the stocker: its route ends here
  const p = Math.floor(i / 2);
  const bond = bondStartMs(lot, p);
  const queueStep =
    lot.queueLocationId === 'BOR-B2' ? 'parked on buffer cart (bonder down)' : 'Q-time wait in bond queue';
  push({
    step: queueStep,
    kind: 'wait',
    toolId: null,
    chamber: null,
    cleanId: null,
    startMs: now!,
    endMs: bond,
    locationId: lot.queueLocationId,
    carrier: lot.queueCarrier,
  });
  if (bond !== null)
    push({
      step: 'bond',
      kind: 'bond',
      toolId: 'BBND-1',
      chamber: null,
      cleanId: null,
      startMs: bond,
      endMs: bond + BOND_DURATION_MS,
      locationId: 'BOR-BND-EFEM',
      carrier: 'in-tool',
    });
  return steps;
}

/** Every production wafer's ledger, lot by lot, slot by slot. */
export function allLedgers(): LedgerStep[] {
  const out: LedgerStep[] = [];
  for (const lot of LOTS) for (let s = 1; s <= WAFERS_PER_LOT; s++) out.push(...waferLedger(lot, s));
  return out;
}

// ───────────────────────────── the monitor lot ─────────────────────────────

/**
 * Monitor wafers of 12 October: each is scanned on LSCN-1 (recipe MON-40, 40 nm), passes once through
 * one tool, and is scanned again. Bare wafers measure adders; sphere-seeded wafers measure removal.
 */
export interface MonitorPlan {
  waferId: string;
  toolId: string;
  chamber: string | null;
  cleanId: string | null;
  /** Spheres seeded before the pre-scan (removal monitors), count ≥ 40 nm; 0 for adder monitors. */
  seededAbove40nm: number;
  preScanMs: number;
  passMs: number;
  postScanMs: number;
}

export const MONITOR_LOT = 'TRMON1';
export const MONITORS: MonitorPlan[] = [
  monitor(1, 'LACT-1', 'A', null, 0, '08:00'),
  monitor(2, 'LACT-1', 'A', null, 0, '08:10'),
  monitor(3, 'LACT-1', 'B', null, 0, '08:20'),
  monitor(4, 'LACT-1', 'B', null, 0, '08:30'),
  monitor(5, 'LRIN-1', null, 'CLN-RIN1', 900, '09:00'),
  monitor(6, 'LRIN-1', null, 'CLN-RIN1', 900, '09:10'),
  monitor(7, 'LRIN-2', null, 'CLN-RIN2', 900, '09:20'),
  monitor(8, 'LRIN-2', null, 'CLN-RIN2', 900, '09:30'),
];

function monitor(
  n: number,
  toolId: string,
  chamber: string | null,
  cleanId: string | null,
  seeded: number,
  hm: string,
): MonitorPlan {
  const t0 = at(`2026-10-12T${hm}:00Z`);
  return {
    waferId: `${MONITOR_LOT}-${String(n).padStart(2, '0')}`,
    toolId,
    chamber,
    cleanId,
    seededAbove40nm: seeded,
    preScanMs: t0,
    passMs: t0 + 3 * MIN,
    postScanMs: t0 + 7 * MIN,
  };
}

export { DEMO_AS_OF_MS };
