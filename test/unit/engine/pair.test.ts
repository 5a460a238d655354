import { describe, expect, it } from 'vitest';
import { assessPair } from '../../../src/engine/pair.ts';
import { type LineData, type PairInput, RECLEAN_CAUTION, SAMPLE_FLAG } from '../../../src/engine/types.ts';
import {
  counterSeries,
  H,
  line,
  location,
  pair,
  product,
  someParticles,
  standardWafer,
  step,
  T0,
  tool,
  wafer,
} from '../../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
/** ISO 5-like air (ISO 14644-1:2015 class 5 limits at the six usual sizes, rounded as Table 1). */
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];

function standard(
  over: {
    line?: Partial<LineData>;
    pair?: Partial<PairInput>;
    n?: number;
    concScale?: number;
    clean?: boolean;
  } = {},
) {
  const s = over.concScale ?? 1;
  const data = line({
    counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5.map((v) => v * s)) },
    // A clean baseline: little adders, and a die-yield line that a few dozen undetected particles
    // below the scan threshold (each kills the die it lands on in hybrid bonding) can still meet.
    ...(over.clean
      ? {
          tools: { ACT: tool('ACT', 0.05), BONDER: tool('BONDER', 0.05) },
          products: { 'HB-1': product({}, { minDieYield: 0.8 }) },
        }
      : {}),
    ...over.line,
  });
  const p = pair(
    'P1',
    standardWafer('W-T', someParticles(over.n ?? 300, 1)),
    standardWafer('W-B', someParticles(over.n ?? 300, 2)),
    {
      bondTimeMs: T0 + 6 * H,
      ...over.pair,
    },
  );
  return { p, data };
}

const AS_OF = T0 + 7 * H;

describe('assessPair: invariants', () => {
  it('is linear: doubling every source doubles expected voids, particles and the Boolean exponent', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const dup = (w: PairInput['top']): PairInput['top'] => {
      const s = w.latestScan!;
      const cat = (x: Float64Array) => {
        const o = new Float64Array(2 * x.length);
        o.set(x);
        o.set(x, x.length);
        return o;
      };
      return {
        ...w,
        latestScan: {
          ...s,
          particles: {
            count: 2 * s.particles.count,
            xM: cat(s.particles.xM),
            yM: cat(s.particles.yM),
            diameterM: cat(s.particles.diameterM),
          },
        },
      };
    };
    const doubled = {
      ...data,
      tools: Object.fromEntries(
        Object.entries(data.tools).map(([k, t]) => [
          k,
          { ...t, adders: t.adders && { ...t.adders, countAbove: 2 * t.adders.countAbove } },
        ]),
      ),
      counters: {
        BAY: { ...data.counters.BAY!, cumulativePerM3: data.counters.BAY!.cumulativePerM3.map((v) => 2 * v) },
      },
    };
    const b = assessPair({ ...p, top: dup(p.top), bottom: dup(p.bottom) }, doubled, { asOfMs: AS_OF });
    // tolerance: floating-point sums of ~600 terms, relative 1e-9
    expect(b.figures.voids.value / a.figures.voids.value).toBeCloseTo(2, 9);
    expect(b.figures.particles / a.figures.particles).toBeCloseTo(2, 9);
    const expo = (x: typeof a) => x.contributions.reduce((s, c) => s + c.unbondedAreaM2, 0);
    expect(expo(b) / expo(a)).toBeCloseTo(2, 9);
    const ev = (x: typeof a) => x.contributions.reduce((s, c) => s + c.dieKillEvents, 0);
    expect(ev(b) / ev(a)).toBeCloseTo(2, 9);
    // Shares are unchanged by a common scale.
    for (let i = 0; i < a.contributions.length; i++)
      expect(b.contributions[i]!.shareVoids).toBeCloseTo(a.contributions[i]!.shareVoids, 9);
  });

  it('attribution shares sum to one for voids, area and die loss, and every Pareto partition sums to one', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const sum = (xs: number[]) => xs.reduce((s, x) => s + x, 0);
    expect(sum(a.contributions.map((c) => c.shareVoids))).toBeCloseTo(1, 12);
    expect(sum(a.contributions.map((c) => c.shareArea))).toBeCloseTo(1, 12);
    expect(sum(a.contributions.map((c) => c.shareDieLoss))).toBeCloseTo(1, 12);
    expect(sum(a.pareto.byKind.map((e) => e.share))).toBeCloseTo(1, 12);
    expect(sum(a.pareto.byClean.map((e) => e.share))).toBeCloseTo(1, 12);
    expect(sum(a.pareto.bySizeBand.map((e) => e.share))).toBeCloseTo(1, 12);
    // Contributions' expected voids add up to the pair's.
    expect(sum(a.contributions.map((c) => c.expectedVoids))).toBeCloseTo(a.figures.voids.value, 10);
    expect(a.dominant).not.toBeNull();
    expect(a.dominant!.share).toBeGreaterThan(0);
    expect(a.dominant!.share).toBeLessThanOrEqual(1);
  });

  it('mirror symmetry: a top-wafer particle set gives the same figures and die map as its mirror image on the bottom wafer', () => {
    const parts = someParticles(200, 3);
    const none = { x: [], y: [], d: [] };
    const data = line({ counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5) } });
    for (const [flipAxis, mirror] of [
      ['y', { x: parts.x.map((v) => -v), y: parts.y, d: parts.d }],
      ['x', { x: parts.x, y: parts.y.map((v) => -v), d: parts.d }],
    ] as const) {
      const onTop = pair('A', standardWafer('T', parts), standardWafer('B', none), {
        bondTimeMs: T0 + 6 * H,
        flipAxis,
      });
      const onBottom = pair('B', standardWafer('T', none), standardWafer('B', mirror), {
        bondTimeMs: T0 + 6 * H,
        flipAxis,
      });
      const a = assessPair(onTop, data, { asOfMs: AS_OF });
      const b = assessPair(onBottom, data, { asOfMs: AS_OF });
      const kill = (x: typeof a) => x.voidMap!.dieGrid!.dies.map((d) => d.killProbabilityDetected);
      const ka = kill(a);
      const kb = kill(b);
      expect(ka.some((v) => v > 0)).toBe(true);
      for (let i = 0; i < ka.length; i++) expect(kb[i]!).toBeCloseTo(ka[i]!, 12);
      expect(b.figures.dieKillsNB!.value).toBeCloseTo(a.figures.dieKillsNB!.value, 10);
      expect(b.figures.voids.value).toBeCloseTo(a.figures.voids.value, 10);
      // the discs sit at the mirrored places
      const da = a.voidMap!.discs.map((d) => `${d.xM.toFixed(9)},${d.yM.toFixed(9)}`).sort();
      const db = b.voidMap!.discs.map((d) => `${d.xM.toFixed(9)},${d.yM.toFixed(9)}`).sort();
      expect(da).toEqual(db);
    }
  });

  it('is deterministic for the same inputs and seed, and the inputs hash tracks the data, not the assessment time', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const b = assessPair(p, data, { asOfMs: AS_OF });
    expect(JSON.stringify(b)).toBe(JSON.stringify(a));
    const later = assessPair(p, data, { asOfMs: AS_OF + 5 * H });
    expect(later.inputsHash).toBe(a.inputsHash); // a bonded pair: the bond time fixes the route
    const moved = structuredClone(p);
    moved.top.latestScan!.particles.xM[0] = moved.top.latestScan!.particles.xM[0]! + 1e-6;
    expect(assessPair(moved, data, { asOfMs: AS_OF }).inputsHash).not.toBe(a.inputsHash);
    const spec2 = { ...data, products: { 'HB-1': product({}, { version: 'spec-2' }) } };
    expect(assessPair(p, spec2, { asOfMs: AS_OF }).inputsHash).not.toBe(a.inputsHash);
    expect(a.draws).toBe(400);
  });

  it('intervals contain the expected values and the call uses bounds at the stated confidence', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    for (const e of [
      a.figures.voids,
      a.figures.unbondedFraction,
      a.figures.dieKillsNB!,
      a.figures.dieKillsPoisson!,
    ]) {
      expect(e.low).toBeLessThanOrEqual(e.value);
      expect(e.high).toBeGreaterThanOrEqual(e.value);
      expect(e.confidence).toBe(0.95);
    }
    expect(a.specChecks.map((c) => c.metric)).toEqual(['voids', 'unbondedFraction', 'dieYield']);
    // NB die kills ≤ Poisson die kills in expectation (Jensen: (1 + m/α)^−α ≥ e^−m)
    expect(a.figures.dieKillsNB!.value).toBeLessThanOrEqual(a.figures.dieKillsPoisson!.value + 1e-12);
  });
});

describe('assessPair: calls', () => {
  it('bonds a clean pair and gives plain-words reasons', () => {
    const { p, data } = standard({ n: 3, concScale: 1e-4, clean: true });
    const a = assessPair(p, data, { asOfMs: AS_OF });
    expect(a.call).toBe('bond');
    expect(a.reasons.some((r) => r.code === 'within-spec')).toBe(true);
    expect(a.caution).toBeNull();
  });

  it('holds when a Q-time is exceeded (activation → bond 10 h against 8 h)', () => {
    const { p, data } = standard({ n: 3, concScale: 1e-4, clean: true, pair: { bondTimeMs: T0 + 12 * H } });
    const a = assessPair(p, data, { asOfMs: T0 + 13 * H });
    expect(a.call).toBe('hold');
    const q = a.reasons.find((r) => r.code === 'q-time')!;
    expect(q.blocking).toBe(true);
    expect(q.text).toMatch(/activation → bond .* is 9\.9 h; the limit is 8\.0 h/);
    expect(a.qTimes.every((s) => s.exceeded)).toBe(true);
  });

  it('holds when the counter read above the action level while the wafer was exposed, and not when it was elsewhere', () => {
    const exc = (startMin: number) =>
      standard({
        n: 3,
        concScale: 1e-4,
        clean: true,
        line: {
          locations: {
            BAY: location('BAY', { levels: { atDiameterM: 0.5e-6, alertPerM3: 10, actionPerM3: 100 } }),
          },
          counters: {
            BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, (i) =>
              i === startMin ? ISO5.map((v) => v * 0.1) : ISO5.map((v) => v * 1e-4),
            ),
          },
        },
      });
    const during = exc(3 * 60); // minute 180 = T0 + 3 h, inside the wait 2.5–5.5 h
    const a = assessPair(during.p, during.data, { asOfMs: AS_OF });
    expect(a.call).toBe('hold');
    expect(a.excursions.length).toBe(2); // both wafers waited there
    expect(a.reasons.find((r) => r.code === 'action-level')!.text).toMatch(/above the action level 100/);
    const before = exc(60); // T0 + 1 h: the wafers were in the clean, not in the bay
    const b = assessPair(before.p, before.data, { asOfMs: AS_OF });
    expect(b.excursions).toEqual([]);
    expect(b.call).toBe('bond');
  });

  it('calls re-clean when one more pre-bond clean brings the pair within spec, with the caution, and respects the re-clean limit', () => {
    // 20 large particles (0.5–2 µm, each a reportable void of millimetres) left by a weak first rinse;
    // the designated pre-bond clean removes 99.5 % of them.
    const mk = (recleans: number) => {
      const data = line({
        cleans: {
          PBC: {
            cleanId: 'PBC',
            name: 'Pre-bond clean',
            toolId: null,
            maxEfficiency: 0.995,
            halfSizeM: 30e-9,
            widthDecades: 0.1,
          },
          WEAK: {
            cleanId: 'WEAK',
            name: 'Weak rinse',
            toolId: null,
            maxEfficiency: 0.3,
            halfSizeM: 100e-9,
            widthDecades: 0.2,
          },
        },
        counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5.map((v) => v * 1e-4)) },
        tools: { ACT: tool('ACT', 0.05), BONDER: tool('BONDER', 0.05) },
        products: { 'HB-1': product({}, { minDieYield: 0.8 }) },
      });
      const w = (id: string, shift: number) => {
        const pos = someParticles(20, shift);
        const x = standardWafer(id, { ...pos, d: pos.d.map((_, i) => 0.5e-6 * 4 ** (i / 20)) }, recleans);
        x.ledger[0] = { ...x.ledger[0]!, cleanId: 'WEAK' };
        return x;
      };
      return { p: pair('P', w('T', 1), w('B', 2), { bondTimeMs: T0 + 6 * H }), data };
    };
    const ok = mk(0);
    const a = assessPair(ok.p, ok.data, { asOfMs: AS_OF });
    expect(a.call).toBe('re-clean');
    expect(a.caution).toBe(RECLEAN_CAUTION);
    expect(a.reclean!.meetsSpec).toBe(true);
    expect(a.reclean!.allowed).toBe(true);
    // hand computation: 40 particles × (1 − 0.3) survive the rinse ≈ 28 voids; ×0.005 after the clean
    expect(a.figures.voids.value).toBeGreaterThan(25);
    expect(a.reclean!.after.voids.value).toBeLessThan(1);
    expect(a.reasons.map((r) => r.code)).toEqual(expect.arrayContaining(['fails-spec', 'reclean-fixes']));
    expect(a.pareto.byClean[0]!.key).toBe('clean:WEAK');
    const limit = mk(1);
    const b = assessPair(limit.p, limit.data, { asOfMs: AS_OF });
    expect(b.call).toBe('hold');
    expect(b.reclean!.allowed).toBe(false);
    expect(b.reasons.find((r) => r.code === 'reclean-limit')!.text).toMatch(
      /already had 1 re-clean\(s\); the limit is 1/,
    );
    expect(b.caution).toBeNull();
  });

  it('holds when counter data are missing for more than a quarter of an exposure, and notes a smaller gap', () => {
    const mk = (gapMin: number) =>
      standard({
        n: 3,
        concScale: 1e-4,
        clean: true,
        line: {
          counters: {
            BAY: counterSeries(
              'BAY',
              T0,
              T0 + 8 * H,
              CH,
              () => ISO5.map((v) => v * 1e-4),
              (i) => (i >= 150 && i < 150 + gapMin ? SAMPLE_FLAG.fault : 0),
            ),
          },
        },
      });
    const big = mk(60); // 60 of 180 min (33 %)
    const a = assessPair(big.p, big.data, { asOfMs: AS_OF });
    expect(a.call).toBe('hold');
    expect(a.reasons.some((r) => r.code === 'data-missing')).toBe(true);
    const small = mk(20); // 11 %
    const b = assessPair(small.p, small.data, { asOfMs: AS_OF });
    expect(b.call).toBe('bond');
    expect(b.notes.some((n) => n.code === 'counter-gap' && /median/.test(n.text))).toBe(true);
  });

  it('starts an unscanned wafer from the incoming level and flags it', () => {
    const { p, data } = standard({ n: 3, concScale: 1e-4, clean: true });
    const q = { ...p, top: wafer('W-T', null, p.top.ledger) };
    const a = assessPair(q, data, { asOfMs: AS_OF });
    expect(a.contributions.some((c) => c.kind === 'incoming' && c.waferId === 'W-T')).toBe(true);
    expect(a.notes.some((n) => n.code === 'unscanned')).toBe(true);
    const req = { ...data, products: { 'HB-1': product({}, { scanRequired: true }) } };
    expect(assessPair(q, req, { asOfMs: AS_OF }).call).toBe('hold');
  });

  it('records the last clean of each contribution: scan particles and tail pass the pre-bond clean, later adders none', () => {
    const { p, data } = standard();
    const a = assessPair(p, data, { asOfMs: AS_OF });
    const det = a.contributions.find((c) => c.key === 'top:detected')!;
    expect(det.lastCleanId).toBe('PBC');
    expect(a.contributions.find((c) => c.key === 'top:tail')!.lastCleanId).toBe('PBC');
    expect(a.contributions.find((c) => c.kind === 'wait')!.lastCleanId).toBeNull();
    expect(a.pareto.byClean.map((e) => e.key).sort()).toEqual(['clean:PBC', 'none']);
    // ledger steps before the scan are ignored: a wait that ended before T0 adds nothing
    const early = {
      ...p,
      top: {
        ...p.top,
        ledger: [step(9, 'wait', T0 - 5 * H, T0 - 1 * H, { locationId: 'BAY' }), ...p.top.ledger],
      },
    };
    const e = assessPair(early, data, { asOfMs: AS_OF });
    expect(e.figures.voids.value).toBeCloseTo(a.figures.voids.value, 12);
  });
});

describe('pairs assessed in one session (its working arrays reused from pair to pair)', () => {
  it('come out exactly as each pair assessed on its own, larger and smaller pairs in turn', async () => {
    const { assessLot } = await import('../../../src/engine/lot.ts');
    const data = line({
      counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5) },
    });
    // 900, then 150, then 600 particles per wafer: a later pair sees arrays sized for an earlier one
    const pairs = [900, 150, 600].map((n, i) =>
      pair(
        `P${i}`,
        standardWafer(`T${i}`, someParticles(n, i)),
        standardWafer(`B${i}`, someParticles(n, i + 7)),
        {
          bondTimeMs: T0 + 6 * H,
        },
      ),
    );
    const opts = { asOfMs: T0 + 7 * H, detail: 'full' as const };
    const together = assessLot({ lotId: 'LOT-1', productId: 'HB-1', pairs }, data, opts);
    for (const [i, p] of pairs.entries()) expect(together.pairs[i]).toEqual(assessPair(p, data, opts));
  });
});

describe('the modelled re-clean', () => {
  it('leaves the as-is figures and void map exactly as without it (it works on its own copies)', () => {
    const data = line({
      counters: { BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, () => ISO5) },
    });
    const withoutRc = line({
      counters: data.counters,
      products: { 'HB-1': { ...data.products['HB-1']!, recleanCleanId: null } },
    });
    const p = pair(
      'P',
      standardWafer('T', someParticles(500, 1)),
      standardWafer('B', someParticles(500, 2)),
      {
        bondTimeMs: T0 + 6 * H,
      },
    );
    const opts = { asOfMs: T0 + 7 * H, detail: 'full' as const };
    const a = assessPair(p, data, opts);
    const b = assessPair(p, withoutRc, opts);
    expect(a.reclean).not.toBeNull();
    expect(b.reclean).toBeNull();
    expect(a.figures).toEqual(b.figures);
    expect(a.voidMap).toEqual(b.voidMap);
    expect(a.contributions).toEqual(b.contributions);
  });
});
