/**
 * Work the engine keeps and reuses within an assessment, each checked against its plain twin:
 * - the deposited spectrum kept per dose (physics.deposition) equals the one computed afresh from
 *   an equal dose, and every call gets its own copy;
 * - the ISO class limits kept per location equal isoClassLimit's values;
 * - a session's reused working arrays (detected survivals, as-is and re-clean) and a pair's shared
 *   doses leave no trace between pairs: a lot's pairs assessed one after another in one session
 *   give exactly what each gives assessed alone in a fresh session.
 * Expected values: the plain computations themselves (exact equality: the kept results are the
 * same arithmetic, so no tolerance); the engine is pure on its inputs (src/engine/pair.ts).
 */
import { describe, expect, it } from 'vitest';
import { resolveConfig } from '../../../src/engine/config.ts';
import { assessPair, assessPairInSession, createSession } from '../../../src/engine/pair.ts';
import { buildProductPhysics } from '../../../src/engine/physics.ts';
import type { PairInput } from '../../../src/engine/types.ts';
import { isoClassLimit } from '../../../src/model/iso14644.ts';
import {
  counterSeries,
  H,
  line,
  location,
  pair,
  product,
  scan,
  someParticles,
  standardWafer,
  step,
  T0,
  tool,
  wafer,
} from '../../helpers/engine-inputs.ts';

const CH = [0.1e-6, 0.2e-6, 0.3e-6, 0.5e-6, 1e-6, 5e-6];
/** ISO 14644-1:2015 class 5 limits at the six usual sizes, rounded as Table 1. */
const ISO5 = [100000, 23700, 10200, 3520, 832, 29];

describe('kept deposition and class limits', () => {
  const physics = buildProductPhysics(product(), resolveConfig(undefined), 1e-3);
  const channels = Float64Array.from(CH);
  const dose = Float64Array.from(ISO5, (v) => v * 3600);
  const args = {
    channelSizesM: channels,
    airVelocityMps: 0.3,
    orientation: 'face-up' as const,
    isolation: 1,
  };

  it('returns for a dose it has seen exactly what an equal, new dose gives, as a new array each time', () => {
    const first = physics.deposition({ ...args, dosePerChannel: dose });
    const again = physics.deposition({ ...args, dosePerChannel: dose });
    const fresh = physics.deposition({ ...args, dosePerChannel: Float64Array.from(dose) });
    expect(Array.from(again)).toEqual(Array.from(first));
    expect(Array.from(fresh)).toEqual(Array.from(first));
    expect(again).not.toBe(first);
    again[10] = -1; // a caller's change does not reach the kept spectrum
    expect(physics.deposition({ ...args, dosePerChannel: dose })[10]).toBe(first[10]);
  });

  it('keeps conditions apart: another isolation or orientation is computed, not taken from the kept one', () => {
    const open = physics.deposition({ ...args, dosePerChannel: dose });
    const closed = physics.deposition({ ...args, dosePerChannel: dose, isolation: 1000 });
    const closedFresh = physics.deposition({
      ...args,
      dosePerChannel: Float64Array.from(dose),
      isolation: 1000,
    });
    expect(Array.from(closed)).toEqual(Array.from(closedFresh));
    expect(closed[20]).toBeLessThan(open[20]!);
    const down = physics.deposition({ ...args, dosePerChannel: dose, orientation: 'face-down' });
    const downFresh = physics.deposition({
      ...args,
      dosePerChannel: Float64Array.from(dose),
      orientation: 'face-down',
    });
    expect(Array.from(down)).toEqual(Array.from(downFresh));
  });

  it('gives the ISO class limits isoClassLimit gives, per class', () => {
    for (const cls of [5, 6, 5]) {
      const kept = physics.classLimits(cls, channels)!;
      expect(Array.from(kept)).toEqual(
        CH.map((d) => isoClassLimit(cls, Math.min(Math.max(d, 0.1e-6), 5e-6))),
      );
    }
    expect(physics.classLimits(null, channels)).toBeNull();
  });
});

describe('a session reused across pairs', () => {
  const data = line({
    counters: {
      BAY: counterSeries('BAY', T0, T0 + 8 * H, CH, (i) => ISO5.map((v) => v * 1e-4 * (1 + (i % 7) / 7))),
    },
    locations: { BAY: location('BAY', { isoClass: 5 }) },
    // little adders and a die-yield line that few particles can meet (as pair.test.ts's clean baseline)
    tools: { ACT: tool('ACT', 0.05), BONDER: tool('BONDER', 0.05) },
    products: { 'HB-1': product({}, { minDieYield: 0.8 }) },
  });
  // Particle counts that grow and shrink (the working arrays are grown, then used in part), a pair
  // whose wafers wait at different times, one that passes and ones that fail (with the modelled re-clean).
  const pairs: PairInput[] = [
    pair('P1', standardWafer('W1T', someParticles(400, 1)), standardWafer('W1B', someParticles(400, 2)), {
      bondTimeMs: T0 + 6 * H,
    }),
    pair('P2', standardWafer('W2T', someParticles(3000, 3)), standardWafer('W2B', someParticles(60, 4)), {
      bondTimeMs: T0 + 6 * H,
    }),
    pair(
      'P3',
      wafer(
        'W3T',
        scan('S-W3T', T0, ...(Object.values(someParticles(5, 5)) as [number[], number[], number[]])),
        [step(0, 'wait', T0 + 1 * H, T0 + 2 * H, { locationId: 'BAY' })],
      ),
      standardWafer('W3B', someParticles(900, 6)),
      { bondTimeMs: T0 + 6 * H },
    ),
    pair('P4', standardWafer('W4T', someParticles(3, 7)), standardWafer('W4B', someParticles(3, 8)), {
      bondTimeMs: T0 + 6 * H,
    }),
  ];

  for (const detail of ['summary', 'full'] as const)
    it(`gives each pair what a fresh session gives it (${detail} detail)`, () => {
      const opts = { asOfMs: T0 + 7 * H, detail };
      const session = createSession(data);
      const together = pairs.map((p) => assessPairInSession(p, session, opts));
      const alone = pairs.map((p) => assessPair(p, data, opts));

      expect(together.map((a) => a.call)).toContain('bond');
      expect(together.some((a) => a.reclean !== null)).toBe(true);
      expect(together).toEqual(alone);
      // and again in the same session, after every pair has used its arrays
      expect(pairs.map((p) => assessPairInSession(p, session, opts))).toEqual(alone);
    });
});
