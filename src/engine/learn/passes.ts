/**
 * Which passes through a tool lie between two scans of a wafer: the ledger read against the scans.
 *
 * Rules (docs/engine.md "Learning from the line"; each is voidcast's choice):
 *
 * - A scan belongs to the inspection step of its wafer's ledger that contains its time (start ≤ t ≤
 *   end; an open-ended step from its start on). Other inspection steps between two scans are
 *   treated as handling without effect (their adders are neglected).
 * - Between two consecutive scans of a wafer, an **acting step** is a process, clean, activation or
 *   bond step, or any other step on a named tool (a stocker, a sorter). Waits and transfers with no
 *   tool in a closed or purged carrier are accepted, and what deposits during them is neglected
 *   (the carrier isolates the wafer; a closed FOUP adds far less than a tool pass). A wait or
 *   transfer with the carrier **open** is refused for the interval: its deposition could not be told
 *   from the tool's adders.
 * - Exactly one acting step between the two scans: a pass of that tool (chamber) — usable.
 *   More than one: refused, the new defects cannot be given to one tool. None: the two scans are
 *   repeats; a repeat scan next to a pass makes that pass ambiguous ("scanned twice after one
 *   pass"), and the pass is left out with a message naming both scans.
 * - The last acting step before a wafer's first scan has a scan after it but none before: reported
 *   per tool ("no scan before the tool"), since nothing can be learned from it.
 */
import type { LedgerStep } from '../../store/ledger.ts';
import type { ScanHeader } from '../../store/scans.ts';
import type { LearnData } from './loader.ts';
import type { LearnIssue } from './types.ts';

/** A pass of one wafer through one tool step between two of its scans. */
export interface ScanPass {
  waferId: string;
  lotId: string;
  toolId: string;
  chamber: string | null;
  /** `toolId` or `toolId/chamber`. */
  toolKey: string;
  step: LedgerStep;
  /** The clean the step ran (its own clean id, else found from tool and recipe), or null. */
  cleanId: string | null;
  before: ScanHeader;
  after: ScanHeader;
}

export interface CollectedPasses {
  passes: ScanPass[];
  /** Issues about passes that were refused, with the tool key or clean id they concern. */
  issues: LearnIssue[];
}

const ACTING_KINDS = new Set(['process', 'clean', 'activation', 'bond']);

function isActing(s: LedgerStep): boolean {
  if (s.kind === 'inspection') return false;
  return ACTING_KINDS.has(s.kind) || s.toolId !== null;
}

function keyOf(s: LedgerStep): string {
  return s.chamber ? `${s.toolId}/${s.chamber}` : (s.toolId ?? s.step);
}

function stepLabel(s: LedgerStep): string {
  return `"${s.step}"${s.toolId ? ` on ${keyOf(s)}` : ''}`;
}

function fmtTime(ms: number): string {
  return new Date(ms).toISOString().replace('.000Z', 'Z');
}

/**
 * Reads every scanned wafer's ledger and returns the usable passes and the refused ones' messages.
 * Messages name the scans (id, file and line) and ledger rows (file and line) concerned.
 */
export function collectPasses(data: LearnData): CollectedPasses {
  const passes: ScanPass[] = [];
  const issues: LearnIssue[] = [];
  const where = (h: ScanHeader) => data.scanWhere(h.scanId);
  const rowWhere = data.rowWhere;
  const noScanBefore = new Map<string, string[]>();
  const noLedger: string[] = [];

  const headers = data.scans;
  let i = 0;
  while (i < headers.length) {
    const waferId = headers[i]!.waferId;
    const scans: ScanHeader[] = [];
    while (i < headers.length && headers[i]!.waferId === waferId) scans.push(headers[i++]!);
    const ledger = data.ledger(waferId);
    if (ledger.length === 0) {
      noLedger.push(waferId);
      continue;
    }
    // Each scan's own inspection step (not an acting step between scans).
    const own = new Set<number>();
    for (const sc of scans) {
      const st = ledger.find(
        (s) =>
          s.kind === 'inspection' &&
          s.startMs <= sc.timeMs &&
          (s.endMs === null || sc.timeMs <= s.endMs) &&
          (sc.toolId === null || s.toolId === null || s.toolId === sc.toolId),
      );
      if (st) own.add(st.seq);
    }
    const acting = (from: number, to: number) =>
      ledger.filter((s) => !own.has(s.seq) && s.startMs >= from && s.startMs < to && isActing(s));
    const openWaits = (from: number, to: number) =>
      ledger.filter(
        (s) =>
          !own.has(s.seq) &&
          s.startMs >= from &&
          s.startMs < to &&
          !isActing(s) &&
          s.kind !== 'inspection' &&
          s.carrier === 'open',
      );

    // The last acting step before the first scan: a scan after it, none before.
    const firstBefore = ledger.filter((s) => !own.has(s.seq) && s.startMs < scans[0]!.timeMs && isActing(s));
    const last = firstBefore[firstBefore.length - 1];
    if (last?.toolId) {
      const list = noScanBefore.get(keyOf(last)) ?? [];
      list.push(waferId);
      noScanBefore.set(keyOf(last), list);
    }

    // Intervals between consecutive scans.
    const kinds: ('pass' | 'repeat' | 'refused')[] = [];
    const candidates: (ScanPass | null)[] = [];
    for (let k = 0; k + 1 < scans.length; k++) {
      const a = scans[k]!;
      const b = scans[k + 1]!;
      const act = acting(a.timeMs, b.timeMs);
      const open = openWaits(a.timeMs, b.timeMs);
      candidates.push(null);
      if (act.length === 0) {
        kinds.push('repeat');
        continue;
      }
      if (act.length > 1) {
        kinds.push('refused');
        for (const s of act)
          issues.push({
            subject: keyOf(s),
            message: `wafer ${waferId}: ${act.length} tool steps (${act.map(stepLabel).join(', ')}) lie between ${where(a)} and ${where(b)}: the new defects cannot be given to one tool; the interval is left out`,
          });
        continue;
      }
      const s = act[0]!;
      if (!s.toolId) {
        kinds.push('refused');
        issues.push({
          subject: null,
          message: `wafer ${waferId}: step ${stepLabel(s)} (${rowWhere(s)}) names no tool; the interval between ${where(a)} and ${where(b)} is left out`,
        });
        continue;
      }
      if (open.length > 0) {
        kinds.push('refused');
        issues.push({
          subject: keyOf(s),
          message: `wafer ${waferId}: between ${where(a)} and ${where(b)} the carrier is open during ${open.map(stepLabel).join(', ')} (${open.map(rowWhere).join(', ')}): its deposition cannot be told from ${keyOf(s)}'s adders; the pass is left out`,
        });
        continue;
      }
      let cleanId: string | null = null;
      if (s.kind === 'clean') {
        cleanId = s.cleanId ?? data.cleanFor(s.toolId, s.recipe);
        if (!cleanId)
          issues.push({
            subject: keyOf(s),
            message: `wafer ${waferId}: clean step ${stepLabel(s)} (${rowWhere(s)}) names no clean and none is stored for tool ${s.toolId} with recipe ${s.recipe ?? '(none)'}: its removal cannot be learned (its adders can)`,
          });
      }
      kinds.push('pass');
      candidates[k] = {
        waferId,
        lotId: a.lotId,
        toolId: s.toolId,
        chamber: s.chamber,
        toolKey: keyOf(s),
        step: s,
        cleanId,
        before: a,
        after: b,
      };
    }
    // A repeat scan next to a pass makes the pass ambiguous.
    for (let k = 0; k < kinds.length; k++) {
      const p = candidates[k];
      if (!p) continue;
      const repeatAfter = kinds[k + 1] === 'repeat';
      const repeatBefore = kinds[k - 1] === 'repeat';
      if (repeatAfter || repeatBefore) {
        const other = repeatAfter ? scans[k + 2]! : scans[k - 1]!;
        const which = repeatAfter ? 'after' : 'before';
        issues.push({
          subject: p.toolKey,
          message: `wafer ${waferId} was scanned twice ${which} one pass through ${p.toolKey} (${rowWhere(p.step)}, ${fmtTime(p.step.startMs)}): ${where(repeatAfter ? p.after : p.before)} and ${where(other)} with no step between them; which is the ${which}-scan is ambiguous, so the pass is left out`,
        });
        continue;
      }
      passes.push(p);
    }
  }
  for (const [key, wafers] of noScanBefore)
    issues.push({
      subject: key,
      message: `${wafers.length} wafer${wafers.length === 1 ? '' : 's'} (${wafers.slice(0, 3).join(', ')}${wafers.length > 3 ? ', …' : ''}) went through ${key} with a scan after it but no scan before: no before-scan record, nothing learned from ${wafers.length === 1 ? 'that pass' : 'those passes'}`,
    });
  if (noLedger.length > 0)
    issues.push({
      subject: null,
      message: `${noLedger.length} scanned wafer${noLedger.length === 1 ? ' has' : 's have'} no ledger steps (${noLedger.slice(0, 3).join(', ')}${noLedger.length > 3 ? ', …' : ''}): no pass can be placed between their scans`,
    });
  return { passes, issues };
}
