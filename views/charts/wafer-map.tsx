/**
 * waferMap — a wafer's detected particles as marks on its outline.
 *
 * Marks are sized and shaded by size class (log-spaced LSE diameter classes, default half
 * decades from 30 nm), so the size is read by area and by grey level alike; the legend lists
 * each class with its count. The notch, the edge-exclusion ring and an optional die grid are
 * drawn (the die grid compactly, src: views/charts/die-grid.tsx); a wafer can be shown mirrored (the top wafer of a pair as seen from the interface),
 * and then the chart says so in words.
 */
import { scaleThreshold } from 'd3-scale';
import { DieGridOutline } from './die-grid.tsx';
import { ChartSvg, fmtDiameter, Legend, r, safeId } from './svg.tsx';
import {
  type DieRect,
  type MirrorAxis,
  toPx,
  type WaferGeometry,
  WaferOutline,
  waferFrame,
} from './wafer-frame.tsx';

export interface WaferParticle {
  xMm: number;
  yMm: number;
  /** LSE diameter in metres. */
  diameterM: number;
  /** Defect class from the scan (particle, residue, …), shown in the mark's tooltip. */
  kind?: string;
}

export interface WaferMapInput extends WaferGeometry {
  title: string;
  particles: WaferParticle[];
  /** Show mirrored as seen from the bond interface: 'y' flips x → −x, 'x' flips y → −y. */
  mirror?: MirrorAxis;
  dies?: DieRect[];
  /** Upper edges of the size classes in metres (ascending); the last class is open above. */
  classEdgesM?: number[];
  /** Detection threshold of the scan (m), said in the description. */
  thresholdM?: number;
  id?: string;
  sizePx?: number;
}

/** Half-decade LSE size classes: < 50 nm, 50–100 nm, 100–300 nm, 0.3–1 µm, 1–3 µm, ≥ 3 µm. */
export const DEFAULT_CLASS_EDGES_M = [50e-9, 100e-9, 300e-9, 1e-6, 3e-6];

const MARK_RADIUS = [1.6, 2.2, 3, 3.9, 5, 6.3, 7.6, 9];
const MARK_SHADE = ['#9aa8b8', '#7c8da3', '#5e738d', '#415975', '#27405c', '#142a44', '#0b1a2e', '#000000'];

export function waferMap(input: WaferMapInput) {
  const id = safeId(input.id ?? `wm-${input.title}`);
  const size = input.sizePx ?? 320;
  const legendW = 178;
  const top = input.mirror && input.mirror !== 'none' ? 38 : 14;
  const width = size + legendW + 16;
  const height = size + top + 12;
  const mirror = input.mirror ?? 'none';
  const f = waferFrame(input, 8 + size / 2, top + size / 2, size, mirror);
  const edges = (input.classEdgesM ?? DEFAULT_CLASS_EDGES_M).slice(0, MARK_RADIUS.length - 1);
  const classOf = scaleThreshold<number, number>()
    .domain(edges)
    .range(edges.map((_, i) => i).concat(edges.length));
  const counts = new Array<number>(edges.length + 1).fill(0);
  const R = input.diameterMm / 2;
  const onWafer = input.particles.filter(
    (p) =>
      Number.isFinite(p.xMm) && Number.isFinite(p.yMm) && p.xMm * p.xMm + p.yMm * p.yMm <= R * R * 1.0001,
  );
  const off = input.particles.length - onWafer.length;
  // Small first so that large marks stay on top and readable.
  const marks = onWafer
    .map((p) => ({ p, c: Number.isFinite(p.diameterM) && p.diameterM > 0 ? classOf(p.diameterM) : 0 }))
    .sort((a, b) => a.c - b.c);
  for (const m of marks) counts[m.c]!++;
  const withTitles = marks.length <= 600;
  // The legend lists the size classes that have marks on this map (none: a line saying so).
  const shown = counts.map((n, i) => (n > 0 ? i : -1)).filter((i) => i >= 0);
  const classLabel = (i: number) =>
    i === 0
      ? `< ${fmtDiameter(edges[0]!)}`
      : i === edges.length
        ? `≥ ${fmtDiameter(edges[i - 1]!)}`
        : `${fmtDiameter(edges[i - 1]!)} – ${fmtDiameter(edges[i]!)}`;
  const mirrorText =
    mirror === 'y'
      ? 'Seen from the bond interface: mirrored (x → −x)'
      : mirror === 'x'
        ? 'Seen from the bond interface: mirrored (y → −y)'
        : null;
  const desc =
    `${input.diameterMm} mm wafer, ${onWafer.length} detected particle${onWafer.length === 1 ? '' : 's'}` +
    (input.thresholdM ? ` at or above ${fmtDiameter(input.thresholdM)} LSE` : '') +
    (off > 0 ? `, ${off} outside the wafer outline not drawn` : '') +
    (mirrorText ? `. ${mirrorText}.` : '.');
  const lx = size + 26;
  return (
    <ChartSvg kind="wafer-map" id={id} width={width} height={height} title={input.title} desc={desc}>
      {mirrorText ? (
        <text class="vc-mirror-note" x={8} y={16} font-weight="600">
          ⇄ {mirrorText}
        </text>
      ) : null}
      <WaferOutline f={f} geometry={input} idPrefix={id} />
      {input.dies && input.dies.length > 0 ? (
        <DieGridOutline f={f} dies={input.dies} idPrefix={id} clipId={`${id}-clip`} />
      ) : null}
      <g class="vc-marks">
        {marks.map(({ p, c }) => {
          const [x, y] = toPx(f, p.xMm, p.yMm);
          return (
            <circle
              class="vc-mark vc-particle"
              data-size-class={c}
              cx={r(x)}
              cy={r(y)}
              r={MARK_RADIUS[c]}
              fill={MARK_SHADE[c]}
              fill-opacity="0.85"
              stroke="#ffffff"
              stroke-width="0.5"
            >
              {withTitles ? (
                <title>{`${fmtDiameter(p.diameterM)} LSE${p.kind ? ` ${p.kind}` : ''} at (${p.xMm.toFixed(1)}, ${p.yMm.toFixed(1)}) mm`}</title>
              ) : null}
            </circle>
          );
        })}
      </g>
      <Legend
        x={lx}
        y={top + 4}
        heading="LSE size (log classes)"
        rowHeight={19}
        entries={shown.map((i) => ({
          label: `${classLabel(i)}  (${counts[i]})`,
          swatch: (
            <circle
              cx={8}
              cy={6}
              r={MARK_RADIUS[i]}
              fill={MARK_SHADE[i]}
              fill-opacity="0.85"
              stroke="#ffffff"
              stroke-width="0.5"
            />
          ),
        }))}
      />
      <g
        class="vc-wafer-legend"
        transform={`translate(${r(lx)} ${r(top + 4 + 14 + shown.length * 19 + 14)})`}
      >
        <text x={0} y={0}>{`⌀ ${input.diameterMm} mm · notch enlarged`}</text>
        {input.edgeExclusionMm ? (
          <g>
            <rect
              x={0}
              y={8}
              width={14}
              height={10}
              fill={`url(#${id}-ee)`}
              stroke="#8a8f99"
              stroke-width="0.6"
            />
            <text x={18} y={17}>{`edge exclusion ${input.edgeExclusionMm} mm`}</text>
          </g>
        ) : null}
        {input.dies && input.dies.length > 0 ? (
          <text x={0} y={34}>{`die grid: ${input.dies.length} dies`}</text>
        ) : null}
        {off > 0 ? <text x={0} y={50}>{`${off} off-wafer, not drawn`}</text> : null}
      </g>
    </ChartSvg>
  );
}
