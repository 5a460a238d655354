/**
 * Events: excursions whose windows overlap at a shared location are one event, directly or through
 * others; what is costed is, per location, the union of the windows of its members there that are
 * not instrument findings. Every expected event and window below is a hand computation on the
 * hand-built excursions.
 */
import { describe, expect, it } from 'vitest';
import { eventOf, groupEvents } from '../../../../src/engine/audit/events.ts';
import type { Excursion, ExcursionNature, ExcursionRuleId } from '../../../../src/engine/audit/types.ts';

const H = 3_600_000;

function exc(
  id: string,
  rule: ExcursionRuleId,
  locationIds: string[],
  fromH: number,
  toH: number,
  nature: ExcursionNature = 'air',
): Excursion {
  return {
    id,
    rule,
    areaId: 'AREA',
    locationId: locationIds[0]!,
    locationIds,
    startMs: fromH * H,
    endMs: toH * H,
    peakMs: fromH * H,
    peakPerM3: 1,
    channelsM: [5e-7],
    levelPerM3: 1,
    baselinePerM3: 1,
    nature,
    natureWords: '',
    quality: { samples: 1, fault: 0, lowerBound: 0, sentinel: 0, zeroRun: 0, gapBefore: 0 },
    words: '',
    acknowledgement: null,
  };
}

describe('groupEvents', () => {
  const list = [
    exc('A', 'action-point', ['X'], 0, 4),
    exc('B', 'alert-run', ['X'], 3, 6),
    // Overlaps A and B in time but at another location: an event of its own.
    exc('C', 'ratio-shift', ['Y'], 2, 5),
    // Several locations: overlaps B at X over [5, 6), so it joins A and B; it touches C at 5 only.
    exc('D', 'area-alert', ['X', 'Y'], 5, 7),
    // Touches D's end at 7: half-open windows do not overlap.
    exc('F', 'action-point', ['X'], 7, 8),
    // An instrument finding alone: an event with nothing to cost.
    exc('E', 'data-quality', ['Z'], 1, 3, 'instrument'),
    // An instrument finding inside an air event: in the event, its own hours not costed.
    exc('G', 'data-quality', ['Y'], 6, 9, 'instrument'),
  ];
  const events = groupEvents(list);

  it('joins excursions that overlap at a shared location, through others too, and nothing else', () => {
    expect(events.map((e) => e.excursionIds)).toEqual([['A', 'B', 'D', 'G'], ['E'], ['C'], ['F']]);
    // Every excursion in exactly one event.
    expect(events.flatMap((e) => e.excursionIds).sort()).toEqual(list.map((e) => e.id).sort());
  });

  it('costs, per location, the union of its air members’ windows there; names every rule once', () => {
    const [abdg, e, c, f] = events;
    expect(abdg).toMatchObject({
      id: 'event:X+Y:0',
      rules: ['action-point', 'alert-run', 'area-alert', 'data-quality'],
      locationIds: ['X', 'Y'],
      startMs: 0,
      endMs: 9 * H,
      nature: 'air',
    });
    // X: A ∪ B ∪ D = [0, 7); Y: D = [5, 7) (G, an instrument finding, is not costed).
    expect(abdg!.windows).toEqual([
      { locationId: 'X', fromMs: 0, toMs: 7 * H },
      { locationId: 'Y', fromMs: 5 * H, toMs: 7 * H },
    ]);
    expect(e).toMatchObject({ nature: 'instrument', windows: [] });
    expect(c!.windows).toEqual([{ locationId: 'Y', fromMs: 2 * H, toMs: 5 * H }]);
    expect(f!.windows).toEqual([{ locationId: 'X', fromMs: 7 * H, toMs: 8 * H }]);
  });

  it('keeps disjoint windows of one location apart, and calls a mixed event unclear', () => {
    // S and T (at X and Y) are joined through V at Y; at X their windows [0, 1) and [3, 4) stay two,
    // so the hours between them at X are not costed; Y: S ∪ V ∪ T = [0, 4).
    const [ev] = groupEvents([
      exc('S', 'area-alert', ['X', 'Y'], 0, 1),
      exc('V', 'alert-run', ['Y'], 0, 4, 'unclear'),
      exc('T', 'area-alert', ['X', 'Y'], 3, 4),
    ]);
    expect(ev!.excursionIds).toEqual(['S', 'V', 'T']);
    expect(ev!.windows).toEqual([
      { locationId: 'X', fromMs: 0, toMs: 1 * H },
      { locationId: 'X', fromMs: 3 * H, toMs: 4 * H },
      { locationId: 'Y', fromMs: 0, toMs: 4 * H },
    ]);
    expect(ev!.nature).toBe('unclear');
    // One excursion alone is an event of its own (the cost of one excursion).
    expect(eventOf([exc('P', 'action-point', ['X'], 0, 2)])).toMatchObject({
      id: 'event:X:0',
      excursionIds: ['P'],
      windows: [{ locationId: 'X', fromMs: 0, toMs: 2 * H }],
    });
  });

  it('gives no event for no excursion', () => {
    expect(groupEvents([])).toEqual([]);
  });
});
