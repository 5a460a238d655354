/**
 * The end of a scans file (src/ingest/kinds/scans.ts): each scan read is hashed (its header fields
 * and its packed defect columns), compared with a scan of the same id already stored, its lot and
 * wafer created when missing, and stored with its defects as BLOBs (src/store/scans.ts); then the
 * flags of the file (edge exclusion, missing class, repeated defects).
 *
 * The content hash is sha256 over the JSON of the header fields followed by the packed x, y,
 * diameter and class columns (the stored bytes), unchanged since the first version of the format,
 * so a scan imported again with the same content is recognised whichever version stored it.
 */
import { createHash } from 'node:crypto';
import { lotWriter } from '../../store/lots.ts';
import { packFloat64, packUint8, scanContentOf, scanInserter } from '../../store/scans.ts';
import type { ImportFlag, KindIssue } from '../types.ts';
import { shiftDecimal } from './header-fields.ts';
import { repeatsOf, type ScanBuild } from './scan-build.ts';
import type { ScanPlan } from './scan-rows.ts';

export function finishScans(
  plan: ScanPlan,
  order: readonly ScanBuild[],
): { issues: KindIssue[]; flags: ImportFlag[]; notes: string[] } {
  const { ctx, recordLayout, present, diameterMm, edgeMm, edgeM, convText } = plan;
  const fin: KindIssue[] = [];
  const notes: string[] = [];
  const lots = lotWriter(ctx.db, ctx.importId);
  const insert = scanInserter(ctx.db);
  let edge = 0;
  let noClass = 0;
  let repeated = 0;
  let stored = 0;
  for (const b of order) {
    const n = b.count;
    const defects = {
      count: n,
      xM: b.x.subarray(0, n),
      yM: b.y.subarray(0, n),
      diameterM: b.d.subarray(0, n),
      classCode: b.c.subarray(0, n),
    };
    const h = createHash('sha256');
    h.update(
      JSON.stringify([
        b.scanId,
        b.waferId,
        b.lotId,
        b.step,
        b.toolId,
        b.chamber,
        b.recipe,
        b.film,
        b.timeMs,
        diameterMm,
        edgeMm,
        b.thresholdM,
        convText,
      ]),
    );
    h.update(packFloat64(defects.xM));
    h.update(packFloat64(defects.yM));
    h.update(packFloat64(defects.diameterM));
    h.update(packUint8(defects.classCode));
    const sha = h.digest('hex');
    const old = scanContentOf(ctx.db, b.scanId);
    if (old) {
      if (old.contentSha256 === sha) {
        notes.push(
          `scan "${b.scanId}" is stored already with the same content (import #${old.importId}); skipped`,
        );
        continue;
      }
      fin.push({
        line: b.line,
        column: recordLayout ? (present.get('scan_id') ?? null) : null,
        value: b.scanId,
        rule: `scan "${b.scanId}" is stored already (import #${old.importId}) with other content; give the new scan its own scan_id`,
      });
      continue;
    }
    const clash = lots.ensureWafer(b.waferId, b.lotId);
    if (clash) {
      fin.push({
        line: b.waferLine,
        column: b.waferColumn,
        value: recordLayout ? b.waferId : `# wafer: ${b.waferId}`,
        rule: `wafer "${b.waferId}" belongs to lot "${clash.otherLot}", not "${b.lotId}"`,
      });
      continue;
    }
    insert({
      scanId: b.scanId,
      waferId: b.waferId,
      step: b.step,
      toolId: b.toolId,
      chamber: b.chamber,
      recipe: b.recipe,
      film: b.film,
      timeMs: b.timeMs,
      timeText: b.timeText,
      waferDiameterM: shiftDecimal(diameterMm, 3),
      edgeExclusionM: edgeM,
      thresholdM: b.thresholdM,
      convention: convText,
      defects,
      contentSha256: sha,
      importId: ctx.importId,
      line: b.line,
    });
    stored++;
    edge += b.edgeCount;
    noClass += b.noClass;
    repeated += repeatsOf(b);
  }
  const flags: ImportFlag[] = [];
  if (edge > 0)
    flags.push({
      code: 'in-edge-exclusion',
      count: edge,
      detail: `${edge} defects lie inside the ${edgeMm} mm edge exclusion (stored; a scanner should not report there)`,
    });
  if (noClass > 0)
    flags.push({
      code: 'class-missing',
      count: noClass,
      detail: `${noClass} defects have no class (stored as unknown)`,
    });
  if (repeated > 0)
    flags.push({
      code: 'repeated-defect',
      count: repeated,
      detail: `${repeated} defect rows repeat another defect of the same scan (same x, y and size; all stored)`,
    });
  if (lots.created.lots + lots.created.wafers > 0)
    notes.push(`created ${lots.created.lots} lots and ${lots.created.wafers} wafers`);
  notes.push(`${stored} scans stored`);
  return { issues: fin, flags, notes };
}
