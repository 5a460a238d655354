/**
 * What differs between two assessments of one pair: the parts of their inputs' hash that changed
 * (src/engine/pair.ts PairInputsRecord — scans, routes, counter samples, tools, cleans, locations,
 * product and spec, settings, model version) and what the assessment time changes by itself
 * (running steps, Q-times, scan ages, the call). Each line is computed by comparing the two
 * records part by part; nothing is inferred. Pure.
 */
import { canonicalHash } from './hash.ts';
import type { CounterSlice, PairInputsRecord } from './pair.ts';
import type { PairAssessment, WaferInput } from './types.ts';

export interface AssessedInputs {
  assessment: PairAssessment;
  inputs: PairInputsRecord;
}

const iso = (ms: number) => new Date(ms).toISOString().replace(':00.000Z', 'Z').replace('.000Z', 'Z');
const same = (a: unknown, b: unknown) => canonicalHash(a) === canonicalHash(b);

function hours(s: number): string {
  return `${(s / 3600).toFixed(1)} h`;
}

function scanWords(w: WaferInput): string {
  const s = w.latestScan;
  return s ? `${s.scanId} (${iso(s.timeMs)}, ${s.particles.count} particles)` : 'none';
}

function waferLines(role: 'top' | 'bottom', a: WaferInput, b: WaferInput): string[] {
  const out: string[] = [];
  const who = `${role} wafer ${b.waferId}`;
  if (!same(a.latestScan, b.latestScan))
    out.push(
      a.latestScan?.scanId === b.latestScan?.scanId && a.latestScan
        ? `the scan ${b.latestScan!.scanId} of the ${who} has different content (re-imported)`
        : `the latest scan of the ${who}: ${scanWords(a)} → ${scanWords(b)}`,
    );
  if (!same(a.ledger, b.ledger)) {
    const key = (s: WaferInput['ledger'][number]) => canonicalHash(s);
    const before = new Set(a.ledger.map(key));
    const after = new Set(b.ledger.map(key));
    const added = b.ledger.filter((s) => !before.has(key(s))).map((s) => `"${s.step}"`);
    const gone = a.ledger.filter((s) => !after.has(key(s))).map((s) => `"${s.step}"`);
    out.push(
      `the route of the ${who}: ${a.ledger.length} → ${b.ledger.length} steps${added.length ? `; new or changed: ${added.join(', ')}` : ''}${gone.length ? `; gone or changed: ${gone.join(', ')}` : ''}`,
    );
  }
  if (a.recleanCount !== b.recleanCount)
    out.push(`the re-cleans of the ${who}: ${a.recleanCount} → ${b.recleanCount}`);
  return out;
}

function sliceWords(s: CounterSlice | undefined): string {
  if (!s || s.start.length === 0) return 'no samples';
  return `${s.start.length} samples, ${iso(s.start[0]!)} to ${iso(s.end[s.end.length - 1]!)}`;
}

function keyedLines(
  what: string,
  a: Record<string, unknown>,
  b: Record<string, unknown>,
  only: { was: string; now: string },
): string[] {
  const keys = [...new Set([...Object.keys(a), ...Object.keys(b)])].sort();
  const changed = keys.filter((k) => !same(a[k] ?? null, b[k] ?? null));
  const words = changed.map((k) =>
    !(k in a) ? `${k} (${only.now})` : !(k in b) ? `${k} (${only.was})` : `${k} (changed)`,
  );
  return changed.length ? [`${what}: ${words.join(', ')}`] : [];
}

/**
 * The differences from the assessment `was` to the assessment `now`, one line each, in words; an
 * empty list when they rest on the same inputs at the same time.
 */
export function describeInputsDiff(was: AssessedInputs, now: AssessedInputs): string[] {
  const a = was.inputs;
  const b = now.inputs;
  const out: string[] = [];
  const ta = was.assessment.asOfMs;
  const tb = now.assessment.asOfMs;
  if (ta !== tb) out.push(`the assessment time: ${iso(ta)} → ${iso(tb)}`);
  if (a.modelVersion !== b.modelVersion) out.push(`the model version: ${a.modelVersion} → ${b.modelVersion}`);
  if (!same(a.config, b.config)) out.push('the engine settings');
  if (!same(a.product, b.product))
    out.push(
      was.assessment.specVersion !== now.assessment.specVersion
        ? `the product's spec: version ${was.assessment.specVersion} → ${now.assessment.specVersion}`
        : `the product ${b.product.productId} (same spec version, other data)`,
    );
  if (!same(a.pair, b.pair)) {
    const bond = (r: PairInputsRecord) =>
      r.pair.bondTimeMs === null ? 'not bonded yet' : `bonded at ${iso(r.pair.bondTimeMs)}`;
    out.push(
      bond(a) !== bond(b)
        ? `the pair: ${bond(a)} → ${bond(b)}`
        : 'the pair record (alignment, bonder or wafers)',
    );
  }
  out.push(...waferLines('top', a.top, b.top), ...waferLines('bottom', a.bottom, b.bottom));
  const only =
    ta === tb
      ? { was: 'gone', now: 'added' }
      : { was: `only as of ${iso(ta)}`, now: `only as of ${iso(tb)}` };
  out.push(...keyedLines('the tools on the route up to the assessment time', a.tools, b.tools, only));
  out.push(...keyedLines('the cleans', a.cleans, b.cleans, only));
  out.push(
    ...keyedLines('the locations on the route up to the assessment time', a.locations, b.locations, only),
  );
  const ca = new Map(a.counters.map((s) => [s.loc, s]));
  const cb = new Map(b.counters.map((s) => [s.loc, s]));
  for (const loc of [...new Set([...ca.keys(), ...cb.keys()])].sort())
    if (!same(ca.get(loc) ?? null, cb.get(loc) ?? null)) {
      const sa = ca.get(loc);
      const sb = cb.get(loc);
      const windowMoved = !same(sa?.ws ?? null, sb?.ws ?? null);
      out.push(
        `the counter samples of location ${loc} read for the exposure${windowMoved ? ' (the exposure windows moved)' : ''}: ${sliceWords(sa)} → ${sliceWords(sb)}`,
      );
    }
  // What the time changes by itself, seen in the two assessments.
  const qa = new Map(was.assessment.qTimes.map((q) => [`${q.waferId}|${q.label}`, q]));
  for (const q of now.assessment.qTimes) {
    const p = qa.get(`${q.waferId}|${q.label}`);
    const el = (x: number | null) => (x === null ? `no ${q.fromKind} step yet` : hours(x));
    if (p && p.elapsedS !== q.elapsedS)
      out.push(
        `Q-time ${q.label} of wafer ${q.waferId}: ${el(p.elapsedS)} → ${el(q.elapsedS)} (limit ${hours(q.limitS)})${p.exceeded !== q.exceeded ? (q.exceeded ? ' (now exceeded)' : ' (no longer exceeded)') : ''}`,
      );
  }
  if (ta !== tb && b.pair.bondTimeMs === null) {
    const running = [...b.top.ledger, ...b.bottom.ledger].filter(
      (s) => s.startMs < Math.max(ta, tb) && (s.endMs === null || s.endMs > Math.min(ta, tb)),
    );
    if (running.length)
      out.push(
        `steps in progress between the two times (the route is cut at the assessment time): ${[...new Set(running.map((s) => `"${s.step}"`))].join(', ')}`,
      );
  }
  if (was.assessment.call !== now.assessment.call)
    out.push(`the proposed call: ${was.assessment.call} → ${now.assessment.call}`);
  return out;
}
