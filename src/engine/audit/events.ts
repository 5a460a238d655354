/**
 * Events: the excursions that are one happening in the air, seen by several rules (an hour above
 * action, a run above alert and a shift of the size ratio at the same location and time), grouped so
 * that the happening is costed once. Pure.
 *
 * **Grouping (Choice): by location and time.** Two excursions are of one event when their windows
 * [start, end) overlap and they share a location; an event is every excursion so linked, directly or
 * through others (an area-alert excursion that lists two locations joins what happens at both). Not
 * by area: an excursion's cost is the excess of its locations' counter samples during its window, so
 * two excursions count something twice only where they cap the same samples — at the same location
 * at the same time. Excursions at two locations of one area at the same time cap different samples
 * (different air, in which the ledger puts different wafers), so their costs add without double
 * counting and they stay two events.
 *
 * **What is costed:** at each location of the event, the union of the windows of its members there
 * that are not instrument findings (an instrument finding is the counter, not the air: it has no
 * excess to cost). Nature: `instrument` when every member is one; `air` when every other member is
 * air; `unclear` otherwise.
 */
import type { Excursion, ExcursionEvent, ExcursionNature, ExcursionRuleId } from './types.ts';

/** Whether two half-open windows overlap. */
const overlaps = (a: Excursion, b: Excursion) => a.startMs < b.endMs && b.startMs < a.endMs;

/** The events of a list of excursions, earliest first (ties by id); every excursion is in exactly one. */
export function groupEvents(excursions: readonly Excursion[]): ExcursionEvent[] {
  const n = excursions.length;
  const parent = Array.from({ length: n }, (_, i) => i);
  const find = (i: number): number => {
    while (parent[i] !== i) {
      parent[i] = parent[parent[i]!]!;
      i = parent[i]!;
    }
    return i;
  };
  for (let i = 0; i < n; i++)
    for (let j = i + 1; j < n; j++) {
      const a = excursions[i]!;
      const b = excursions[j]!;
      if (overlaps(a, b) && a.locationIds.some((l) => b.locationIds.includes(l))) parent[find(i)] = find(j);
    }
  const groups = new Map<number, Excursion[]>();
  for (let i = 0; i < n; i++) {
    const r = find(i);
    const g = groups.get(r) ?? [];
    g.push(excursions[i]!);
    groups.set(r, g);
  }
  const events = [...groups.values()].map(eventOf);
  events.sort((a, b) => a.startMs - b.startMs || a.id.localeCompare(b.id));
  return events;
}

/** One event from its members (every member's windows and locations; see the file's comment). */
export function eventOf(members: readonly Excursion[]): ExcursionEvent {
  const list = [...members].sort((a, b) => a.startMs - b.startMs || a.id.localeCompare(b.id));
  const locationIds = [...new Set(list.flatMap((e) => e.locationIds))].sort();
  const rules = [...new Set(list.map((e) => e.rule))] as ExcursionRuleId[];
  const startMs = Math.min(...list.map((e) => e.startMs));
  const endMs = Math.max(...list.map((e) => e.endMs));
  const costed = list.filter((e) => e.nature !== 'instrument');
  const windows: ExcursionEvent['windows'] = [];
  for (const loc of locationIds) {
    const spans = costed
      .filter((e) => e.locationIds.includes(loc))
      .map((e) => [e.startMs, e.endMs] as [number, number])
      .sort((a, b) => a[0] - b[0]);
    let cur: [number, number] | null = null;
    for (const s of spans) {
      if (cur && s[0] <= cur[1]) cur[1] = Math.max(cur[1], s[1]);
      else {
        if (cur) windows.push({ locationId: loc, fromMs: cur[0], toMs: cur[1] });
        cur = [s[0], s[1]];
      }
    }
    if (cur) windows.push({ locationId: loc, fromMs: cur[0], toMs: cur[1] });
  }
  const nature: ExcursionNature =
    costed.length === 0 ? 'instrument' : costed.every((e) => e.nature === 'air') ? 'air' : 'unclear';
  return {
    id: `event:${locationIds.join('+')}:${startMs}`,
    areaId: list[0]!.areaId,
    excursionIds: list.map((e) => e.id),
    rules,
    locationIds,
    startMs,
    endMs,
    windows,
    nature,
  };
}
