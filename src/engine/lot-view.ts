/**
 * A lot as the pages show it: its assessment at a time, whether it is bonded, or the reason it has
 * none (a lot without pairs, inputs the engine refuses). Unknown lot: null.
 */
import type { Db } from '../store/db.ts';
import { loadLot } from './loader.ts';
import { assessLotInSession } from './lot.ts';
import { createSession, EngineInputError } from './pair.ts';
import type { LotAssessment } from './types.ts';

/** Why a lot without pairs has no call: it is not (yet) to be bonded. */
export const NO_PAIRS =
  'no bond pairs: monitor or test wafers, or a lot whose pairs file is not imported yet';

export type LotView =
  | { lot: LotAssessment; bonded: boolean; bondedAtMs: number | null }
  | { problem: string }
  | null;

/** The lot's assessment at `asOfMs` (summary or full detail), or why there is none. */
export function lotViewFromDb(db: Db, lotId: string, asOfMs: number, detail: 'summary' | 'full'): LotView {
  const loaded = loadLot(db, lotId, asOfMs);
  if (!loaded) return null;
  if (loaded.lot.pairs.length === 0) return { problem: NO_PAIRS };
  try {
    const lot = assessLotInSession(loaded.lot, createSession(loaded.line), { asOfMs, detail });
    const times = loaded.lot.pairs.map((p) => p.bondTimeMs);
    const bonded = times.every((t) => t !== null);
    return { lot, bonded, bondedAtMs: bonded ? Math.max(...(times as number[])) : null };
  } catch (e) {
    if (e instanceof EngineInputError) return { problem: e.message };
    throw e;
  }
}
