/**
 * What learning from the line's scans returns (src/engine/learn): per tool or chamber the adders per
 * pass, per clean the removal curve — each with the data it rests on, the fit, the proposal for a
 * parameter set (src/engine/parameter-set-types.ts) or the reason there is none, and the typed
 * values beside. SI units (m, UTC ms).
 */
import type { AddersPerPassFit } from '../../model/adders-fit.ts';
import type { RemovalBandPoint, RemovalParticleFit } from '../../model/removal-fit.ts';
import type { FittedAdders, FittedRemoval } from '../parameter-set-types.ts';

export interface LearnOptions {
  /** Only this tool (`LACT-1`: every chamber; `LACT-1/B`: that chamber). */
  toolId?: string;
  /** Only this clean. */
  cleanId?: string;
  /** Two-sided confidence of every interval (default 0.95). */
  confidence?: number;
  /** The fit's time stamp, UTC ms (default: now). */
  nowMs?: number;
}

/** How the positioning error used for matching was obtained. */
export interface PositionErrorUsed {
  /** σ per axis of a defect's displacement between the two scans, m. */
  sigmaM: number;
  /** 'estimated' from confident matches of the scans learned from, or 'default'. */
  source: 'estimated' | 'default';
  /** Confident matches the estimate rests on (0 for the default). */
  n: number;
  /** The match radius r_m = σ √(2 ln(1/(1 − q))), q = 0.999, m. */
  radiusM: number;
}

/** A message about the data, naming the records it concerns; `subject` is the tool key or clean id. */
export interface LearnIssue {
  subject: string | null;
  message: string;
}

/** One pass of a wafer through a tool between two of its scans, matched. */
export interface PassRecord {
  waferId: string;
  lotId: string;
  /** Start of the pass through the tool, UTC ms. */
  timeMs: number;
  beforeScanId: string;
  afterScanId: string;
  /** Defects compared (particle-like classes inside both scans' inspected area). */
  beforeDefects: number;
  afterDefects: number;
  matched: number;
  /** Before-scan defects gone (at or above the near-threshold limit). */
  onlyBefore: number;
  /** New defects at or above the fit's reference size (the adders this pass counts). */
  adders: number;
  /** Defects seen once below the near-threshold limit: counted neither way. */
  nearThreshold: number;
  /** Expected chance matches n_b n_a π r_m² / A. */
  expectedChanceMatches: number;
  /** Stage offset removed (after − before), m; null when none was. */
  offsetXM: number | null;
  offsetYM: number | null;
}

/** Typed adders of a tool (tools file), and the count they give at the fit's reference size. */
export interface TypedAdders {
  countAbove: number;
  atDiameterM: number;
  slope: number;
  fromM: number | null;
  /** The typed count per pass at the fit's reference size, N₀ (d_ref/d₀)^(−α) (0 below fromM). */
  countAtReference: number;
}

export interface AdderLearning {
  /** `toolId` or `toolId/chamber`. */
  toolKey: string;
  toolId: string;
  chamber: string | null;
  /** The tools file's name of the tool, when stored. */
  name: string | null;
  /** The size the counts are stated at (the largest near-threshold limit of the passes), m. */
  referenceM: number | null;
  /** Every pass learned from, oldest first (the chamber's history). */
  passes: PassRecord[];
  fit: AddersPerPassFit | null;
  /** The proposal for a parameter set, or null (see tooLittle). */
  proposal: FittedAdders | null;
  /** Why nothing is proposed ("too little data: …"), or null. */
  tooLittle: string | null;
  typed: TypedAdders | null;
  notes: string[];
}

/** Survival in one size band of the matched pre-scan particles (a data point of the removal chart). */
export interface RemovalBandData {
  lowerM: number;
  upperM: number;
  /** Pre-scan particles in the band (by their pre-scan size). */
  n: number;
  survived: number;
  removed: number;
  /** survived / n. */
  survival: number;
  /** Intervals of the survival. */
  wilsonLow: number;
  wilsonHigh: number;
  clopperPearsonLow: number;
  clopperPearsonHigh: number;
}

export interface RemovalPassRecord extends PassRecord {
  /** Pre-scan particles entering the fit (at or above the pass's near-threshold limit). */
  particles: number;
  removed: number;
}

export interface TypedRemoval {
  maxEfficiency: number;
  halfSizeM: number;
  widthDecades: number;
}

export interface RemovalLearning {
  cleanId: string;
  name: string | null;
  toolId: string | null;
  passes: RemovalPassRecord[];
  /** Particles and removals over all passes. */
  particles: number;
  removed: number;
  bands: RemovalBandData[];
  fit: RemovalParticleFit | null;
  /** The fitted curve with its pointwise band on a grid of sizes (for the chart). */
  curve: RemovalBandPoint[];
  proposal: FittedRemoval | null;
  tooLittle: string | null;
  /** The clean's own adders (new defects after it, per pass), kept apart from the survival. */
  ownAdders: AddersPerPassFit | null;
  typed: TypedRemoval | null;
  notes: string[];
}

export interface AddersReport {
  results: AdderLearning[];
  /** Messages about the data that concern no single tool, or every one. */
  issues: LearnIssue[];
  position: PositionErrorUsed;
  fittedAtMs: number;
}

export interface RemovalReport {
  results: RemovalLearning[];
  issues: LearnIssue[];
  position: PositionErrorUsed;
  fittedAtMs: number;
}
