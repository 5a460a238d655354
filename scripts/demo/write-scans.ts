/**
 * Surface-scan files (record layout, one file per lot and inspection point; docs/formats.md "Surface
 * scans"). The two scanners of the line write different coordinate conventions, as real ones do:
 *
 *   ZSCN-1 (post-clean, recipe PCMP-45, 45 nm):  origin=centre x=right y=up view=front, notch at 270°
 *   LSCN-1 (pre-bond, recipe PREBOND-37, 37 nm): origin=lower-left x=right y=up view=front, notch at 90°
 *     (LSCN-1 loads wafers notch up: a position is the internal one turned by 180° and shifted by R)
 *   LSCN-1 monitor recipe MON-40 (40 nm):        as PREBOND-37
 *
 * Both files state their convention; voidcast maps both into its one frame.
 */
import { PRODUCT, SITE_UTC_OFFSET_H } from './line.ts';
import type { Defect } from './surfaces.ts';
import { csvLine, isoOffset, NL, num } from './text.ts';

export interface ScanRecord {
  scanId: string;
  lotId: string;
  waferId: string;
  step: string;
  timeMs: number;
  defects: Defect[];
}

export interface ScannerSpec {
  toolId: string;
  recipe: string;
  thresholdNm: number;
  edgeExclusionMm: number;
  film: string;
  convention: 'centre-notch-down' | 'lower-left-notch-up';
}

export const POST_CLEAN_SCANNER: ScannerSpec = {
  toolId: 'ZSCN-1',
  recipe: 'PCMP-45',
  thresholdNm: 45,
  edgeExclusionMm: 3,
  film: 'SiCN',
  convention: 'centre-notch-down',
};
export const PRE_BOND_SCANNER: ScannerSpec = {
  toolId: 'LSCN-1',
  recipe: 'PREBOND-37',
  thresholdNm: 37,
  edgeExclusionMm: 3,
  film: 'SiCN',
  convention: 'lower-left-notch-up',
};
export const MONITOR_SCANNER: ScannerSpec = {
  toolId: 'LSCN-1',
  recipe: 'MON-40',
  thresholdNm: 40,
  edgeExclusionMm: 3,
  film: 'bare Si',
  convention: 'lower-left-notch-up',
};

const R_MM = (PRODUCT.waferDiameterM / 2) * 1e3;

/** Internal (centre, x right, y up, notch down) metres → the scanner's file coordinates in mm. */
function toFile(spec: ScannerSpec, xM: number, yM: number): [number, number] {
  const x = xM * 1e3;
  const y = yM * 1e3;
  if (spec.convention === 'centre-notch-down') return [x, y];
  // Notch up: the file's axes are the internal ones turned by 180°; origin at the lower-left corner.
  return [-x + R_MM, -y + R_MM];
}

/** Size in nm, written to 0.1 nm and never below the threshold by rounding. */
function sizeNm(lseM: number, thresholdNm: number): string {
  const v = Math.max(Math.round(lseM * 1e10) / 10, thresholdNm);
  return num(v, 1);
}

export function scansCsv(spec: ScannerSpec, scans: readonly ScanRecord[], title: string): string {
  let out = `# format: voidcast scans 1${NL}# Demo data of voidcast: an invented pilot line (every name, number and event is fiction).${NL}# ${title}${NL}`;
  out += `# tool: ${spec.toolId}${NL}# recipe: ${spec.recipe}${NL}# film: ${spec.film}${NL}# threshold_nm: ${spec.thresholdNm}${NL}`;
  out += `# wafer_diameter_mm: ${num(R_MM * 2, 0)}${NL}# edge_exclusion_mm: ${spec.edgeExclusionMm}${NL}`;
  out +=
    spec.convention === 'centre-notch-down'
      ? `# coordinates: origin=centre x=right y=up view=front${NL}# notch_deg: 270${NL}`
      : `# coordinates: origin=lower-left x=right y=up view=front${NL}# notch_deg: 90${NL}`;
  out += csvLine([
    'record',
    'scan_id',
    'lot',
    'wafer',
    'step',
    'scan_time',
    'x_mm',
    'y_mm',
    'size_nm',
    'class',
  ]);
  for (const s of scans) {
    out += csvLine([
      'scan',
      s.scanId,
      s.lotId,
      s.waferId,
      s.step,
      isoOffset(s.timeMs, SITE_UTC_OFFSET_H),
      null,
      null,
      null,
      null,
    ]);
    for (const d of s.defects) {
      const [x, y] = toFile(spec, d.xM, d.yM);
      out += `defect,${s.scanId},,,,,${num(x, 3)},${num(y, 3)},${sizeNm(d.lseM, spec.thresholdNm)},${d.cls}${NL}`;
    }
  }
  return out;
}
