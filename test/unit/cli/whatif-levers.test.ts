/**
 * The lever options of voidcast whatif (src/cli/commands/whatif-levers.ts): trade units in, SI levers
 * out (hand computation of each conversion), and a text that cannot be read refused with the option
 * named (UsageError, exit 2).
 */
import { describe, expect, it } from 'vitest';
import {
  addersLever,
  airLever,
  cleanLever,
  leversOf,
  parseDurationS,
  parseFraction,
  parseSizeM,
  waitLever,
} from '../../../src/cli/commands/whatif-levers.ts';
import { UsageError } from '../../../src/cli/io.ts';

describe('lever options', () => {
  it('reads sizes, durations and fractions in the trade units', () => {
    expect(parseSizeM('60', 's')).toBeCloseTo(60e-9, 20);
    expect(parseSizeM('60nm', 's')).toBeCloseTo(60e-9, 20);
    expect(parseSizeM('0.06um', 's')).toBeCloseTo(60e-9, 20);
    expect(parseSizeM('0.06µm', 's')).toBeCloseTo(60e-9, 20);
    expect(parseDurationS('2h', 'd')).toBe(7200);
    expect(parseDurationS('90min', 'd')).toBe(5400);
    expect(parseDurationS('45s', 'd')).toBe(45);
    expect(parseFraction('90%', 'f')).toBeCloseTo(0.9, 15);
    expect(parseFraction('0.9', 'f')).toBe(0.9);
  });

  it('builds each lever', () => {
    expect(waitLever('BOR-B2=2h')).toEqual({ kind: 'wait', locationId: 'BOR-B2', durationS: 7200 });
    expect(waitLever('BOR-B2:carrier=closed,isolation=200')).toEqual({
      kind: 'wait',
      locationId: 'BOR-B2',
      carrier: 'closed',
      isolation: 200,
    });
    expect(cleanLever('CLN-RIN1:passes=2')).toEqual({ kind: 'clean', cleanId: 'CLN-RIN1', extraPasses: 2 });
    const r = cleanLever('CLN-RIN2:removal=90%@60nm,width=0.2');
    expect(r).toMatchObject({ kind: 'clean', cleanId: 'CLN-RIN2', widthDecades: 0.2 });
    expect((r as { removalAt: { efficiency: number; diameterM: number } }).removalAt.efficiency).toBeCloseTo(
      0.9,
      15,
    );
    expect(airLever('BOR-B2:class=4')).toEqual({ kind: 'air', locationId: 'BOR-B2', isoClass: 4 });
    expect(airLever('BOR-B2:x0.5')).toEqual({ kind: 'air', locationId: 'BOR-B2', scale: 0.5 });
    expect(addersLever('LACT-1/B:x0.5')).toEqual({ kind: 'adders', toolKey: 'LACT-1/B', factor: 0.5 });
    expect(addersLever('LACT-1/B:count=12')).toEqual({ kind: 'adders', toolKey: 'LACT-1/B', countAbove: 12 });
    const ls = leversOf({ params: 'typed', energy: '0.5', threshold: '60' });
    expect(ls.slice(0, 2)).toEqual([
      { kind: 'parameters', parameterSetId: null },
      { kind: 'energy', energyJm2: 0.5 },
    ]);
    expect(ls[2]!.kind).toBe('threshold');
    expect((ls[2] as { thresholdM: number }).thresholdM).toBeCloseTo(60e-9, 20);
  });

  it('refuses what it cannot read, naming the option', () => {
    const bad: [() => unknown, RegExp][] = [
      [() => waitLever('BOR-B2=2'), /--wait: "2" needs a unit/],
      [() => waitLever('BOR-B2:carrier=sealed'), /not one of open, closed, purged/],
      [() => cleanLever('CLN-RIN1'), /expected ID:setting/],
      [() => cleanLever('CLN-RIN1:passes=1.5'), /not a whole number/],
      [() => cleanLever('CLN-RIN1:strength=9'), /unknown setting "strength"/],
      [() => cleanLever('CLN-RIN1:removal=90%'), /needs a size/],
      [() => airLever('BOR-B2:class=five'), /--air class: "five" is not a number/],
      [() => leversOf({ params: 'latest' }), /--params: "latest"/],
      [() => leversOf({ energy: 'lots' }), /--energy: "lots" is not a number/],
    ];
    for (const [f, m] of bad) {
      expect(f).toThrow(UsageError);
      expect(f).toThrow(m);
    }
  });
});
