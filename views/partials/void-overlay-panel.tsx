/**
 * One pair's observed voids over the predicted discs of its scanned particles (calibration's
 * matching, src/engine/learn/calibration-match.ts), with the counts in words. Shared by the
 * Calibration page and the pair page. Draws what the engine matched; computes nothing of the model.
 */
import type { PairMatching } from '../../src/engine/learn/calibration-types.ts';
import { voidOverlay } from '../charts/void-overlay.tsx';
import { fmtDiameter, fmtNum } from './format.ts';

export interface VoidOverlayPanelProps {
  pairId: string;
  matching: PairMatching;
  waferDiameterM: number;
  edgeExclusionM: number;
  /** The other inspections of the pair (not drawn). */
  otherInspections?: string[];
  id?: string;
}

export function VoidOverlayPanel(props: VoidOverlayPanelProps) {
  const m = props.matching;
  return (
    <figure class="vc-panel vc-void-overlay" id={props.id ?? 'void-overlay'} data-pair={props.pairId}>
      {voidOverlay({
        id: `${props.id ?? 'void-overlay'}-chart`,
        title: `Pair ${props.pairId}: observed voids (${m.inspectionId}) over the predicted discs`,
        diameterMm: props.waferDiameterM * 1e3,
        edgeExclusionMm: Math.round(props.edgeExclusionM * 1e4) / 10,
        notchAngleDeg: 270,
        frameNote: 'bond frame (bottom wafer, top mirrored onto it)',
        discs: m.discs.map((d) => ({
          xMm: d.xM * 1e3,
          yMm: d.yM * 1e3,
          radiusMm: d.rM * 1e3,
          survival: d.survival,
          reportable: d.reportable,
          matched: d.matchedVoid >= 0,
          label: `${d.wafer} wafer, ${fmtDiameter(d.diameterM)} particle`,
        })),
        voids: m.voids.map((v) => {
          const d = v.disc >= 0 ? m.discs[v.disc] : undefined;
          return {
            xMm: v.xM * 1e3,
            yMm: v.yM * 1e3,
            diameterMm: v.diameterM * 1e3,
            match: v.match,
            ...(d ? { particle: { xMm: d.xM * 1e3, yMm: d.yM * 1e3 } } : {}),
            label: `class “${v.inspectionClass}” in the inspection${d ? `; ${d.wafer}-wafer particle ${fmtDiameter(d.diameterM)}, predicted ⌀ ${fmtDiameter(2 * d.rM)}` : ''}`,
          };
        }),
      })}
      <figcaption>
        Inspection {m.inspectionId} ({m.method}, {m.stage}, voids ≥ {fmtDiameter(m.smallestVoidM)}):{' '}
        {m.explained} explained, {m.unexplained} unexplained, {m.inEdgeExclusion} in the edge exclusion (not
        counted); {m.notSeen} reportable predicted discs not seen (expected {fmtNum(m.notSeenExpected)} after
        survival); chance matches expected {fmtNum(m.chanceMatches)}. Match tolerance{' '}
        {fmtDiameter(m.toleranceM)} = 3.03 × √(σ<sub>inspection</sub>² + σ<sub>scanner</sub>²), σ
        <sub>inspection</sub> {fmtDiameter(m.inspectionSigmaM)}
        {m.inspectionSigmaStated ? ' (stated by the file)' : ' (not stated: the default)'}, σ
        <sub>scanner</sub> {fmtDiameter(m.scannerSigmaM)}.
        {props.otherInspections?.length
          ? ` Other inspections of this pair, not drawn: ${props.otherInspections.join(', ')}.`
          : ''}
      </figcaption>
    </figure>
  );
}

/** The pair page's section: its inspection over the prediction, and what the map means. */
export function PairInspectionSection(props: {
  pairId: string;
  matching: PairMatching;
  otherInspections: string[];
  waferDiameterM: number;
  edgeExclusionM: number;
}) {
  return (
    <>
      <h2>Observed voids over the prediction</h2>
      <div class="vc-grid2">
        <VoidOverlayPanel id="pair-void-overlay" {...props} />
        <p class="vc-small">
          The void inspection of this bonded pair, matched to the predicted voids of its scanned particles as
          the <a href="/calibration">Calibration</a> page matches every inspected pair. Unexplained voids come
          from particles the scans did not see (below their threshold, added later) or from none at all
          (bubbles, bevel defects).
        </p>
      </div>
    </>
  );
}
