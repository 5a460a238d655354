/**
 * Calibration from post-bond void inspections (methods.md §4 of the project reference), pure over
 * loaded data (loader.ts loadInspectedLots reads it):
 *
 * 1. Each inspected, bonded pair is assessed as the engine assesses any pair (both wafers' scans,
 *    the top wafer mirrored into the bond frame, every route step after the scan — the cleans give
 *    each detected particle its survival probability, kept as a weight), at the smallest reportable
 *    void of the inspection it is calibrated on (calibration-match.ts calibrationInspection). The
 *    assessment's void map is every scanned particle's predicted disc.
 * 2. The inspection's voids are matched to the discs (calibration-match.ts): explained, unexplained,
 *    in the edge exclusion; discs not seen; expected chance matches.
 * 3. Per product, the void-size constant is fitted on the explained voids and the rate of voids no
 *    source explains on the unexplained ones (calibration-fit.ts). The rate is measured against the
 *    assessment's unscanned sources at the fitted energy (a lower energy makes their voids larger
 *    too), so the pairs are assessed once more with the fitted energy applied.
 * 4. The fits become proposed parameter values (ParameterValues); a fit on too little data says so
 *    and proposes nothing.
 */
import { resolveConfig } from '../config.ts';
import { buildDieGrid, type DieGridIndex } from '../geometry.ts';
import { assessPairInSession, createSession, type EngineSession } from '../pair.ts';
import type { ParameterValues } from '../parameter-set-types.ts';
import type { AssessConfig, LineData, PairAssessment, PairInput, ProductInput } from '../types.ts';
import { applyCalibrationValues } from './calibration-apply.ts';
import { fitUnexplained, fitVoidSize, type UnexplainedPair } from './calibration-fit.ts';
import {
  calibrationInspection,
  DEFAULT_INSPECTION_SIGMA_M,
  DEFAULT_SCANNER_SIGMA_M,
  matchPairVoids,
  observedFigures,
} from './calibration-match.ts';
import type {
  CalibrationLotInput,
  CalibrationOptions,
  CalibrationReport,
  InspectionInput,
  PairCalibration,
  PredictedFigures,
  ProductCalibration,
  SizeMatch,
} from './calibration-types.ts';
import { visibleFigures } from './calibration-visible.ts';

/** A pair ready for fitting: its calibration record and what reassessing it needs. */
export interface PreparedPair {
  calibration: PairCalibration;
  /** The product's die grid inside the edge exclusion, and the bonded radius, m. */
  dieGrid: DieGridIndex | null;
  bondedRadiusM: number;
  pair: PairInput;
  line: LineData;
  asOfMs: number;
  inspection: InspectionInput;
}

/** Engine settings of the calibration's assessments: every disc in the void map. */
function calibrationConfig(opts: CalibrationOptions): Partial<AssessConfig> {
  return { maxMapDiscs: Number.MAX_SAFE_INTEGER, ...(opts.draws ? { draws: opts.draws } : {}) };
}

/** Seed of a pair's visible-figure draws: FNV-1a of its id (the same for a pair in any run). */
export function pairSeed(pairId: string): number {
  let h = 0x811c9dc5;
  for (let i = 0; i < pairId.length; i++) h = Math.imul(h ^ pairId.charCodeAt(i), 0x01000193) >>> 0;
  return h;
}

/** The assessment's own figures of a pair (every void). */
export function assessedFigures(a: PairAssessment, product: ProductInput): PredictedFigures {
  const f = a.figures;
  return {
    voids: f.voids,
    unbondedAreaM2: f.unbondedAreaM2,
    dieKills: product.spec.yieldModel === 'poisson' ? f.dieKillsPoisson : f.dieKillsNB,
  };
}

/**
 * Expected reportable voids of the undetected tail, and of every source the scans do not see (the
 * tail, tool adders, waits, incoming; not a fitted rate of unexplained voids, which is what is measured).
 */
export function unscannedVoids(a: PairAssessment): { tail: number; unscanned: number } {
  let tail = 0;
  let unscanned = 0;
  for (const c of a.contributions) {
    if (c.kind === 'detected' || c.kind === 'unexplained') continue;
    unscanned += c.expectedVoids;
    if (c.kind === 'tail') tail += c.expectedVoids;
  }
  return { tail, unscanned };
}

/** The pair as calibration assesses it: bonded, at its inspection's smallest reportable void. */
function inspectedPair(pair: PairInput, insp: InspectionInput): PairInput {
  return { ...pair, smallestReportableVoidM: insp.smallestVoidM };
}

/**
 * Assesses and matches every inspected, bonded pair of the lots. Pairs without an inspection, or
 * not bonded at the loading time, are left out with a note.
 */
export function preparePairs(
  lots: readonly CalibrationLotInput[],
  opts: CalibrationOptions = {},
): { pairs: PreparedPair[]; notes: string[] } {
  const notes: string[] = [];
  const out: PreparedPair[] = [];
  const scannerSigmaM = opts.scannerSigmaM ?? DEFAULT_SCANNER_SIGMA_M;
  const inspectionSigmaM = opts.inspectionSigmaM ?? DEFAULT_INSPECTION_SIGMA_M;
  for (const l of lots) {
    const session = createSession(l.line, calibrationConfig(opts));
    for (const p of l.lot.pairs) {
      const list = l.inspections[p.pairId] ?? [];
      const insp = calibrationInspection(list);
      if (!insp) continue;
      if (p.bondTimeMs === null) {
        notes.push(
          `Pair ${p.pairId} has an inspection (${insp.inspectionId}) but no bond time at or before it: left out.`,
        );
        continue;
      }
      const product = l.line.products[p.productId];
      if (!product) {
        notes.push(`Pair ${p.pairId}: product ${p.productId} is not loaded; left out.`);
        continue;
      }
      const pair = inspectedPair(p, insp);
      const a = assessPairInSession(pair, session, { asOfMs: l.asOfMs, detail: 'full' });
      const bondedRadiusM = product.waferDiameterM / 2 - product.edgeExclusionM;
      const matching = matchPairVoids({
        inspection: insp,
        discs: a.voidMap?.discs ?? [],
        bondedRadiusM,
        inspectionSigmaM,
        scannerSigmaM,
      });
      const grid = product.die ? buildDieGrid(product.die, bondedRadiusM) : null;
      const u = unscannedVoids(a);
      const predicted = visibleFigures(a, grid, bondedRadiusM, pairSeed(p.pairId));
      out.push({
        pair,
        dieGrid: grid,
        bondedRadiusM,
        line: l.line,
        asOfMs: l.asOfMs,
        inspection: insp,
        calibration: {
          pairId: p.pairId,
          lotId: p.lotId,
          productId: p.productId,
          matching,
          observed: observedFigures(matching, grid),
          predicted,
          assessed: assessedFigures(a, product),
          tailVoids: u.tail,
          unscannedVoids: u.unscanned,
          otherInspections: list.filter((x) => x !== insp).map((x) => x.inspectionId),
        },
      });
    }
  }
  return { pairs: out, notes };
}

/** The explained voids of some pairs as the void-size fit takes them. */
export function sizeMatches(pairs: readonly PreparedPair[]): SizeMatch[] {
  const out: SizeMatch[] = [];
  for (const p of pairs) {
    const m = p.calibration.matching;
    for (const v of m.voids) {
      if (v.match !== 'explained') continue;
      out.push({
        pairId: p.calibration.pairId,
        lotId: p.calibration.lotId,
        productId: p.calibration.productId,
        observedRadiusM: v.diameterM / 2,
        particleDiameterM: m.discs[v.disc]!.diameterM,
        truncationRadiusM: m.smallestVoidM / 2,
      });
    }
  }
  return out;
}

/**
 * Fits every product of the given pairs (see the module comment): the void-size constant, then the
 * unexplained rate against the unscanned sources reassessed at the fitted energy.
 */
export function fitPairs(
  pairs: readonly PreparedPair[],
  opts: CalibrationOptions,
  fittedAtMs: number,
): { products: ProductCalibration[]; values: ParameterValues; notes: string[] } {
  const values: ParameterValues = { adders: {}, removal: {}, voidSize: {}, unexplainedVoids: {} };
  const notes: string[] = [];
  const products: ProductCalibration[] = [];
  const byProduct = new Map<string, PreparedPair[]>();
  for (const p of pairs) {
    const list = byProduct.get(p.calibration.productId) ?? [];
    list.push(p);
    byProduct.set(p.calibration.productId, list);
  }
  const smallGapFactor = resolveConfig(calibrationConfig(opts)).smallGapFactor;
  for (const [productId, list] of [...byProduct.entries()].sort((a, b) => a[0].localeCompare(b[0]))) {
    const product = list[0]!.line.products[productId]!;
    const data = list.map((p) => p.inspection.inspectionId);
    const voidSize = fitVoidSize({
      productId,
      product,
      smallGapFactor,
      matches: sizeMatches(list),
      data,
      minMatches: opts.minMatches,
      fittedAtMs,
    });
    if (voidSize.fitted) values.voidSize[productId] = voidSize.fitted;
    if (voidSize.note) notes.push(voidSize.note);

    // The unscanned sources' voids at the fitted energy (their voids grow as W falls).
    const atFit = voidSize.fitted ? reassessUnscanned(list, { ...values, unexplainedVoids: {} }, opts) : null;
    const ups: UnexplainedPair[] = list.map((p, i) => ({
      pairId: p.calibration.pairId,
      unexplained: p.calibration.matching.unexplained,
      diametersM: p.calibration.matching.voids
        .filter((v) => v.match === 'unexplained')
        .map((v) => v.diameterM),
      tailVoids: atFit ? atFit[i]!.tail : p.calibration.tailVoids,
      unscannedVoids: atFit ? atFit[i]!.unscanned : p.calibration.unscannedVoids,
    }));
    const unexplained = fitUnexplained({
      productId,
      pairs: ups,
      smallestVoidM: Math.max(...list.map((p) => p.inspection.smallestVoidM)),
      data,
      minPairs: opts.minPairs,
      fittedAtMs,
    });
    if (unexplained.fitted) values.unexplainedVoids[productId] = unexplained.fitted;
    if (unexplained.note) notes.push(unexplained.note);
    products.push({ productId, voidSize, unexplained });
  }
  return { products, values, notes };
}

/** The pairs reassessed with some values applied: their unscanned sources' expected voids. */
function reassessUnscanned(
  list: readonly PreparedPair[],
  values: ParameterValues,
  opts: CalibrationOptions,
): { tail: number; unscanned: number }[] {
  const sessions = new Map<LineData, EngineSession>();
  return list.map((p) => {
    let s = sessions.get(p.line);
    if (!s) {
      s = createSession(applyCalibrationValues(p.line, values), calibrationConfig(opts));
      sessions.set(p.line, s);
    }
    return unscannedVoids(assessPairInSession(p.pair, s, { asOfMs: p.asOfMs, detail: 'summary' }));
  });
}

/** How the calibration matches and fits, in words (for the page and the CLI). */
export function calibrationMethod(opts: CalibrationOptions = {}): string[] {
  const s = opts.scannerSigmaM ?? DEFAULT_SCANNER_SIGMA_M;
  const i = opts.inspectionSigmaM ?? DEFAULT_INSPECTION_SIGMA_M;
  return [
    'One inspection per pair: the one reporting the smallest voids (the latest on a tie); its voids are matched to the predicted discs of both wafers’ scanned particles (top wafer mirrored into the bond frame).',
    `Tolerance τ = 3.03·√(σ_inspection² + σ_scanner²) (root-sum-square; 99 % of true offsets); σ as each inspection states it, else ${(i * 1e3).toFixed(2)} mm; scanner ${(s * 1e6).toFixed(0)} µm.`,
    'Explained: a void whose centre lies within R + τ of a scanned particle, matched one to one, most probable first (survival × normal density of the offset). Unexplained: no scanned particle. Not seen: a reportable predicted disc with no void, weighed by the particle’s survival.',
    'Voids centred in the edge exclusion are left out of every count, as the assessment’s figures are.',
    'Interface energy: truncated-normal maximum likelihood of ln R_obs on the assessment’s void radius, 95 % t interval (n − 1 degrees of freedom); at least 5 explained voids.',
    'Unexplained voids: Poisson per pair with the Garwood 95 % interval; the rate proposed is the excess over what the assessment’s unscanned sources (tail, tool adders, waits) predict at the fitted energy; at least 5 pairs.',
  ];
}

/** Calibrates from the inspected, bonded pairs of the given lots. */
export function calibrate(
  lots: readonly CalibrationLotInput[],
  opts: CalibrationOptions = {},
): CalibrationReport {
  const fittedAtMs = opts.nowMs ?? Date.now();
  return calibrationReport(preparePairs(lots, opts), opts, fittedAtMs);
}

/** The calibration report of pairs already assessed and matched (preparePairs). */
export function calibrationReport(
  prepared: { pairs: PreparedPair[]; notes: string[] },
  opts: CalibrationOptions,
  fittedAtMs: number,
): CalibrationReport {
  const fit = fitPairs(prepared.pairs, opts, fittedAtMs);
  const notes = [...prepared.notes, ...fit.notes];
  if (prepared.pairs.length === 0) notes.push('No bonded pair with a void inspection: nothing to calibrate.');
  return {
    fittedAtMs,
    lots: [...new Set(prepared.pairs.map((p) => p.calibration.lotId))].sort(),
    pairs: prepared.pairs.map((p) => p.calibration),
    products: fit.products,
    values: fit.values,
    notes,
    method: calibrationMethod(opts),
  };
}
