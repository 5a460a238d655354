/**
 * Lever options of `voidcast whatif` (and the values of `voidcast solve`), in the trade's units:
 * sizes in nm (or with a unit: 60nm, 0.06um), durations with a unit (2h, 90min, 45s), removal as a
 * fraction or a percentage (0.9, 90%). Each option text becomes one lever (src/engine/tuning/types.ts);
 * a text that cannot be read is a UsageError naming the option and what it expected.
 */
import { openLotContext, openPairContext, type WhatIfContext } from '../../engine/tuning/index.ts';
import type { Lever } from '../../engine/tuning/types.ts';
import type { Db } from '../../store/db.ts';
import { type CliIo, UsageError } from '../io.ts';

function num(text: string, what: string): number {
  const t = text.trim();
  if (!/^[+-]?(\d+\.?\d*|\.\d+)(e[+-]?\d+)?$/i.test(t))
    throw new UsageError(`${what}: "${text}" is not a number`);
  return Number(t);
}

/** A size: "60", "60nm" (nm), "0.06um"/"0.06µm", "6e-8m" → m. */
export function parseSizeM(text: string, what: string): number {
  const m = /^(.*?)(nm|um|µm|mm|m)?$/i.exec(text.trim())!;
  const v = num(m[1]!, what);
  const unit = (m[2] ?? 'nm').toLowerCase();
  const f = unit === 'nm' ? 1e-9 : unit === 'um' || unit === 'µm' ? 1e-6 : unit === 'mm' ? 1e-3 : 1;
  return v * f;
}

/** A duration: "2h", "90min", "45s", "1.5h" → s (a unit is required). */
export function parseDurationS(text: string, what: string): number {
  const m = /^(.*?)(h|min|m|s)$/i.exec(text.trim());
  if (!m) throw new UsageError(`${what}: "${text}" needs a unit (h, min or s), e.g. 2h`);
  const v = num(m[1]!, what);
  const unit = m[2]!.toLowerCase();
  return v * (unit === 'h' ? 3600 : unit === 's' ? 1 : 60);
}

/** A fraction: "0.9" or "90%". */
export function parseFraction(text: string, what: string): number {
  const t = text.trim();
  return t.endsWith('%') ? num(t.slice(0, -1), what) / 100 : num(t, what);
}

/** A factor: "x0.5", "×0.5" or "0.5". */
function parseFactor(text: string, what: string): number {
  return num(text.trim().replace(/^[x×*]/i, ''), what);
}

/** "ID:key=value,key=value" → [ID, {key: value}] (ID may contain "/" and "-"). */
function idAndPairs(text: string, option: string, example: string): [string, Map<string, string>] {
  const i = text.indexOf(':');
  if (i <= 0) throw new UsageError(`${option} "${text}": expected ID:setting, e.g. ${example}`);
  const id = text.slice(0, i).trim();
  const pairs = new Map<string, string>();
  for (const part of text.slice(i + 1).split(',')) {
    const p = part.trim();
    if (!p) continue;
    const eq = p.indexOf('=');
    if (eq < 0) pairs.set('', p);
    else pairs.set(p.slice(0, eq).trim().toLowerCase(), p.slice(eq + 1).trim());
  }
  if (pairs.size === 0)
    throw new UsageError(`${option} "${text}": no setting after "${id}:", e.g. ${example}`);
  return [id, pairs];
}

function unknownKeys(option: string, pairs: Map<string, string>, known: string[]): void {
  for (const k of pairs.keys())
    if (!known.includes(k))
      throw new UsageError(
        `${option}: unknown setting "${k || pairs.get(k)}" (known: ${known.filter(Boolean).join(', ')})`,
      );
}

/** --clean CLN:passes=2 | d50=40nm | width=0.2 | max=99% | removal=90%@60nm (comma-separated). */
export function cleanLever(text: string): Lever {
  const [cleanId, kv] = idAndPairs(text, '--clean', 'CLN-RIN1:passes=1');
  unknownKeys('--clean', kv, ['passes', 'd50', 'width', 'max', 'removal']);
  const l: Lever = { kind: 'clean', cleanId };
  if (kv.has('passes')) {
    const n = num(kv.get('passes')!, '--clean passes');
    if (!Number.isInteger(n))
      throw new UsageError(`--clean passes: "${kv.get('passes')}" is not a whole number`);
    l.extraPasses = n;
  }
  if (kv.has('d50')) l.d50M = parseSizeM(kv.get('d50')!, '--clean d50');
  if (kv.has('width')) l.widthDecades = num(kv.get('width')!, '--clean width');
  if (kv.has('max')) l.maxEfficiency = parseFraction(kv.get('max')!, '--clean max');
  if (kv.has('removal')) {
    const [e, d] = kv.get('removal')!.split('@');
    if (!d)
      throw new UsageError(`--clean removal: "${kv.get('removal')}" needs a size, e.g. removal=90%@60nm`);
    l.removalAt = {
      efficiency: parseFraction(e!, '--clean removal'),
      diameterM: parseSizeM(d, '--clean removal size'),
    };
  }
  return l;
}

/** --wait LOC=2h | LOC:duration=2h,carrier=closed,isolation=100 */
export function waitLever(text: string): Lever {
  const eq = text.indexOf('=');
  const colon = text.indexOf(':');
  if (eq > 0 && (colon < 0 || eq < colon))
    return {
      kind: 'wait',
      locationId: text.slice(0, eq).trim(),
      durationS: parseDurationS(text.slice(eq + 1), '--wait'),
    };
  const [locationId, kv] = idAndPairs(text, '--wait', 'BOR-B2=2h or BOR-B2:carrier=closed');
  unknownKeys('--wait', kv, ['duration', 'carrier', 'isolation']);
  const l: Lever = { kind: 'wait', locationId };
  if (kv.has('duration')) l.durationS = parseDurationS(kv.get('duration')!, '--wait duration');
  if (kv.has('carrier')) {
    const c = kv.get('carrier')!;
    if (c !== 'open' && c !== 'closed' && c !== 'purged' && c !== 'in-tool')
      throw new UsageError(`--wait carrier: "${c}" is not one of open, closed, purged, in-tool`);
    l.carrier = c;
  }
  if (kv.has('isolation')) l.isolation = parseFactor(kv.get('isolation')!, '--wait isolation');
  return l;
}

/** --air LOC:class=5 | LOC:x0.5 | LOC:scale=0.5 */
export function airLever(text: string): Lever {
  const [locationId, kv] = idAndPairs(text, '--air', 'BOR-B2:class=4');
  unknownKeys('--air', kv, ['class', 'scale', '']);
  if (kv.has('class')) return { kind: 'air', locationId, isoClass: num(kv.get('class')!, '--air class') };
  return { kind: 'air', locationId, scale: parseFactor(kv.get('scale') ?? kv.get('')!, '--air scale') };
}

/** --adders TOOL[/CHAMBER]:x0.5 | :count=10 */
export function addersLever(text: string): Lever {
  const [toolKey, kv] = idAndPairs(text, '--adders', 'LACT-1/B:x0.5');
  unknownKeys('--adders', kv, ['count', 'factor', '']);
  if (kv.has('count'))
    return { kind: 'adders', toolKey, countAbove: num(kv.get('count')!, '--adders count') };
  return { kind: 'adders', toolKey, factor: parseFactor(kv.get('factor') ?? kv.get('')!, '--adders factor') };
}

export interface LeverOptionValues {
  clean?: string[];
  wait?: string[];
  air?: string[];
  adders?: string[];
  energy?: string;
  threshold?: string;
  params?: string;
}

/** The parseArgs options of the levers (shared by whatif and solve). */
export const LEVER_OPTIONS = {
  clean: { type: 'string', multiple: true },
  wait: { type: 'string', multiple: true },
  air: { type: 'string', multiple: true },
  adders: { type: 'string', multiple: true },
  energy: { type: 'string' },
  threshold: { type: 'string' },
  params: { type: 'string' },
} as const;

/** The levers of the options, in a fixed order (parameters first: the rest act on its values). */
export function leversOf(v: LeverOptionValues): Lever[] {
  const out: Lever[] = [];
  if (v.params !== undefined) {
    const p = v.params.trim();
    if (p === 'typed') out.push({ kind: 'parameters', parameterSetId: null });
    else if (/^\d+$/.test(p)) out.push({ kind: 'parameters', parameterSetId: Number(p) });
    else
      throw new UsageError(`--params: "${v.params}" is not a parameter set id (a whole number) or "typed"`);
  }
  for (const t of v.clean ?? []) out.push(cleanLever(t));
  for (const t of v.wait ?? []) out.push(waitLever(t));
  for (const t of v.air ?? []) out.push(airLever(t));
  for (const t of v.adders ?? []) out.push(addersLever(t));
  if (v.energy !== undefined) out.push({ kind: 'energy', energyJm2: num(v.energy, '--energy') });
  if (v.threshold !== undefined)
    out.push({ kind: 'threshold', thresholdM: parseSizeM(v.threshold, '--threshold') });
  return out;
}

/** The usage lines of the lever options. */
export const LEVER_USAGE = `levers (repeat --clean, --wait, --air, --adders for several):
  --clean CLN:SETTINGS   passes=N (extra runs at the end of the route, counted as re-cleans),
                         d50=SIZE, width=DECADES, max=FRACTION, removal=FRACTION@SIZE
                         e.g. --clean CLN-RIN1:passes=1   --clean CLN-RIN2:removal=90%@60nm
  --wait LOC=DURATION    each wait at LOC lasts DURATION (2h, 90min); or LOC:duration=…,carrier=open|closed|purged,isolation=N
  --air LOC:class=N      the area's air at ISO 14644-1 class N (1–9); or LOC:x0.5 (a factor on its counts)
  --adders TOOL[/CH]:xF  the tool's (chamber's) adders per pass times F; or TOOL:count=N
  --energy J             the product's interface energy, J/m²
  --threshold SIZE       the pre-bond scans' threshold (only a rise), nm unless a unit is given
  --params ID|typed      assess with stored parameter set ID, or with the typed values
  sizes: 60 or 60nm, 0.06um; durations need a unit (h, min, s); fractions 0.9 or 90%`;

/**
 * The what-if context of `--pair` or `--lot` (one of them given) at the assessment time, or null
 * after telling that there is no such subject (the command then exits with "not found").
 */
export function openSubjectContext(
  db: Db,
  subject: { pair?: string; lot?: string },
  asOfMs: number,
  command: string,
  io: CliIo,
): WhatIfContext | null {
  const ctx =
    subject.pair !== undefined
      ? openPairContext(db, subject.pair, { asOfMs, detail: 'summary' })
      : openLotContext(db, subject.lot!, { asOfMs });
  if (!ctx)
    io.err(
      `voidcast ${command}: no ${subject.pair !== undefined ? `pair "${subject.pair}"` : `lot "${subject.lot}"`}\n`,
    );
  return ctx;
}
