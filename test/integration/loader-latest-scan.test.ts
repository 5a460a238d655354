/**
 * The loader reads the scan headers of a lot's wafers in one query and picks each wafer's latest
 * scan before its pair's bond (or the assessment time) from them; its plain twin is the store's
 * latestScanBefore, one query per wafer. Checked on invented data with older scans, scans after
 * the bond, two scans at the same instant (the one imported last wins) and a wafer of another lot.
 * Expected values: latestScanBefore's answers (exact: the same rows).
 */
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, beforeEach, describe, expect, it } from 'vitest';
import { loadLot, loadPair } from '../../src/engine/loader.ts';
import type { PairInput } from '../../src/engine/types.ts';
import { type Db, openDataDir } from '../../src/store/db.ts';
import { latestScanBefore, packFloat64, packUint8 } from '../../src/store/scans.ts';
import { fakeImport, seedLine, seedPairs } from '../helpers/engine-db.ts';
import { H, line, pair, someParticles, standardWafer, T0 } from '../helpers/engine-inputs.ts';

let dir: string;
let db: Db;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'voidcast-latest-scan-'));
  db = openDataDir(dir);
});
afterEach(() => {
  db.close();
  rmSync(dir, { recursive: true, force: true });
});

/** One more scan of a wafer (n particles) at timeMs. */
function addScan(scanId: string, waferId: string, timeMs: number, n: number): void {
  const imp = fakeImport(db, 'seed', scanId);
  const p = someParticles(n, n);
  db.prepare(
    `INSERT INTO scans (scan_key, wafer_id, step, tool_id, chamber, recipe, film, time_ms, time_text, wafer_diameter_m,
       edge_exclusion_m, threshold_m, convention, defect_count, x_m, y_m, diameter_m, class_codes, content_sha256, import_id, line)
     VALUES (?, ?, 'pre-bond scan', 'SCAN-1', NULL, NULL, NULL, ?, ?, 0.3, 0.003, 45e-9, 'origin=centre x=right y=up view=front notch=270', ?, ?, ?, ?, ?, ?, ?, 1)`,
  ).run(
    scanId,
    waferId,
    timeMs,
    new Date(timeMs).toISOString(),
    n,
    packFloat64(Float64Array.from(p.x)),
    packFloat64(Float64Array.from(p.y)),
    packFloat64(Float64Array.from(p.d)),
    packUint8(new Uint8Array(n)),
    `${scanId}`.padEnd(64, '0'),
    imp,
  );
}

describe('loader: latest scan of each wafer', () => {
  it('picks, for every wafer of a lot, the scan latestScanBefore picks', () => {
    const other = standardWafer('W3B', someParticles(20, 6));
    other.lotId = 'LOT-2'; // a wafer of another lot, bonded in a pair of LOT-1
    const pairs: PairInput[] = [
      pair('P1', standardWafer('W1T', someParticles(30, 1)), standardWafer('W1B', someParticles(30, 2)), {
        bondTimeMs: T0 + 6 * H,
      }),
      pair('P2', standardWafer('W2T', someParticles(30, 3)), standardWafer('W2B', someParticles(30, 4)), {
        bondTimeMs: null,
      }),
      pair('P3', standardWafer('W3T', someParticles(30, 5)), other, { bondTimeMs: T0 + 6 * H }),
    ];
    db.transaction(() => seedLine(db, line()))();
    seedPairs(db, pairs);
    addScan('W1T-older', 'W1T', T0 - 2 * H, 5); // older than the seeded scan at T0
    addScan('W1B-later', 'W1B', T0 + 3 * H, 7); // later, before the bond: this one
    addScan('W1B-after-bond', 'W1B', T0 + 6.5 * H, 9); // after the bond: not this one
    addScan('W2T-same-1', 'W2T', T0 + 4 * H, 4); // two at the same instant: the last imported wins
    addScan('W2T-same-2', 'W2T', T0 + 4 * H, 6);
    addScan('W2B-after-asof', 'W2B', T0 + 8 * H, 3); // after the assessment time
    addScan('W3B-later', 'W3B', T0 + 2 * H, 8); // the other lot's wafer
    const asOfMs = T0 + 7 * H;
    const loaded = loadLot(db, 'LOT-1', asOfMs)!;
    const picked: string[] = [];
    for (const p of loaded.lot.pairs) {
      const endMs = p.bondTimeMs ?? asOfMs;
      for (const w of [p.top, p.bottom]) {
        const plain = latestScanBefore(db, w.waferId, endMs);
        expect(w.latestScan?.scanId ?? null, w.waferId).toBe(plain?.scanId ?? null);
        expect(w.latestScan?.particles.count ?? null).toBe(plain?.defectCount ?? null);
        picked.push(w.latestScan?.scanId ?? '—');
      }
      // one pair on its own reads the same
      expect(loadPair(db, p.pairId, asOfMs)!.pair).toEqual(p);
    }
    // the cases above, as latestScanBefore answers them
    expect(picked).toEqual(['S-W1T', 'W1B-later', 'W2T-same-2', 'S-W2B', 'S-W3T', 'W3B-later']);
  });
});
