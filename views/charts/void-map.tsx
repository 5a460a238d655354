/**
 * voidMap — the predicted voids of a bonded pair on the die grid.
 *
 * Each void is a disc drawn to scale (its radius from the plate-mechanics void model, in mm on
 * the wafer) at the position of the particle that makes it; its fill opacity is the particle's
 * probability of surviving the cleans that still follow, so a faint disc is a void that will
 * probably not be there. The outline stays visible at every probability. A killed die is
 * hatched and outlined heavily (not only coloured), and each die shows its pad region, the
 * area a void must reach to kill the die in hybrid bonding.
 */
import { ChartSvg, fmtPct, Legend, r, safeId } from './svg.tsx';
import { type DieRect, dieToPx, toPx, type WaferGeometry, WaferOutline, waferFrame } from './wafer-frame.tsx';

export interface VoidDisc {
  xMm: number;
  yMm: number;
  /** Void radius on the wafer, mm (drawn to scale). */
  radiusMm: number;
  /** Probability that the particle behind this void survives to the bond, 0…1. */
  survival: number;
  /** Where the particle came from (wafer, source), for the tooltip. */
  label?: string;
}

export interface VoidMapDie extends DieRect {
  killed: boolean;
  /** Probability that the die is killed, 0…1, for the tooltip. */
  pKill?: number;
}

export interface VoidMapInput extends WaferGeometry {
  title: string;
  voids: VoidDisc[];
  dies: VoidMapDie[];
  /** The pad-array region inside a die, offset from the die's lower-left corner, mm. */
  pad?: DieRect;
  /** The frame the map is drawn in, said in words (e.g. "bottom-wafer frame"). */
  frameNote?: string;
  id?: string;
  sizePx?: number;
}

const VOID_COLOUR = '#b3261e';

export function voidMap(input: VoidMapInput) {
  const id = safeId(input.id ?? `vm-${input.title}`);
  const size = input.sizePx ?? 320;
  const legendW = 178;
  const top = 24;
  const width = size + legendW + 16;
  const height = size + top + 12;
  const f = waferFrame(input, 8 + size / 2, top + size / 2, size, 'none');
  const killed = input.dies.filter((d) => d.killed).length;
  const shown = input.voids.filter(
    (v) => Number.isFinite(v.xMm) && Number.isFinite(v.yMm) && Number.isFinite(v.radiusMm) && v.radiusMm >= 0,
  );
  const expected = shown.reduce((a, v) => a + clamp01(v.survival), 0);
  const hatch = `${id}-kill`;
  const desc =
    `${shown.length} predicted void${shown.length === 1 ? '' : 's'} of any size from detected particles (expected ${expected.toFixed(2)} after survival), ` +
    `${killed} of ${input.dies.length} dies killed` +
    (input.frameNote ? `; ${input.frameNote}` : '') +
    '. Disc radius to scale; opacity = survival probability; killed dies hatched.';
  // Large voids first so that small ones stay visible on top.
  const order = [...shown].sort((a, b) => b.radiusMm - a.radiusMm);
  const lx = size + 26;
  return (
    <ChartSvg kind="void-map" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        <pattern id={hatch} patternUnits="userSpaceOnUse" width="6" height="6" patternTransform="rotate(45)">
          <rect width="6" height="6" fill="#f8e1df" />
          <line x1="0" y1="0" x2="0" y2="6" stroke="#18202e" stroke-width="2" />
        </pattern>
      </defs>
      {input.frameNote ? (
        <text class="vc-frame-note" x={8} y={15}>
          {input.frameNote}
        </text>
      ) : null}
      <WaferOutline f={f} geometry={input} idPrefix={id} />
      <g class="vc-die-grid" clip-path={`url(#${id}-clip)`}>
        {input.dies.map((d) => {
          const p = dieToPx(f, d);
          const pad = input.pad
            ? dieToPx(f, {
                xMm: d.xMm + input.pad.xMm,
                yMm: d.yMm + input.pad.yMm,
                wMm: input.pad.wMm,
                hMm: input.pad.hMm,
              })
            : null;
          return (
            <g class={d.killed ? 'vc-die vc-die-killed' : 'vc-die'} data-killed={d.killed ? 'true' : 'false'}>
              <rect
                x={r(p.x)}
                y={r(p.y)}
                width={r(p.w)}
                height={r(p.h)}
                fill={d.killed ? `url(#${hatch})` : riskFill(d.pKill)}
                fill-opacity={d.killed ? undefined : riskOpacity(d.pKill)}
                stroke={d.killed ? '#18202e' : '#b9bec8'}
                stroke-width={d.killed ? 1.4 : 0.6}
              >
                <title>
                  {`die at (${d.xMm.toFixed(1)}, ${d.yMm.toFixed(1)}) mm: ${d.killed ? 'killed' : 'good'}${
                    d.pKill !== undefined ? `, P(kill) ${fmtPct(d.pKill)}` : ''
                  }`}
                </title>
              </rect>
              {pad ? (
                <rect
                  class="vc-pad"
                  x={r(pad.x)}
                  y={r(pad.y)}
                  width={r(pad.w)}
                  height={r(pad.h)}
                  fill={d.killed ? 'none' : '#e8edf3'}
                  stroke="#7c8da3"
                  stroke-width="0.5"
                  stroke-dasharray="2 1.5"
                />
              ) : null}
            </g>
          );
        })}
      </g>
      <g class="vc-marks" clip-path={`url(#${id}-clip)`}>
        {order.map((v) => {
          const [x, y] = toPx(f, v.xMm, v.yMm);
          const s = clamp01(v.survival);
          return (
            <g class="vc-mark vc-void" data-survival={s.toFixed(3)}>
              <circle
                cx={r(x)}
                cy={r(y)}
                r={r(Math.max(v.radiusMm * f.k, 0.8))}
                fill={VOID_COLOUR}
                fill-opacity={r(s * 0.85 * 100) / 100}
                stroke={VOID_COLOUR}
                stroke-opacity={Math.max(0.45, s)}
                stroke-width="1"
              >
                <title>{`void r = ${v.radiusMm.toFixed(2)} mm at (${v.xMm.toFixed(1)}, ${v.yMm.toFixed(1)}) mm, survival ${fmtPct(s)}${v.label ? `; ${v.label}` : ''}`}</title>
              </circle>
              <circle cx={r(x)} cy={r(y)} r="0.9" fill="#18202e" />
            </g>
          );
        })}
      </g>
      <Legend
        x={lx}
        y={top + 4}
        heading="Predicted voids (to scale)"
        rowHeight={19}
        entries={[1, 0.5, 0.1].map((s) => ({
          label: `survival ${fmtPct(s)}`,
          swatch: (
            <circle
              cx={8}
              cy={6}
              r={6}
              fill={VOID_COLOUR}
              fill-opacity={s * 0.85}
              stroke={VOID_COLOUR}
              stroke-opacity={Math.max(0.45, s)}
            />
          ),
        }))}
      />
      <Legend
        x={lx}
        y={top + 4 + 14 + 3 * 19 + 12}
        heading="Dies"
        rowHeight={19}
        entries={[
          {
            label: `killed (${killed})`,
            swatch: (
              <rect
                x={0}
                y={0}
                width={14}
                height={12}
                fill={`url(#${hatch})`}
                stroke="#18202e"
                stroke-width="1.4"
              />
            ),
          },
          {
            label: `good (${input.dies.length - killed}), shaded by P(kill)`,
            swatch: (
              <g>
                <rect x={0} y={0} width={7} height={12} fill="#ffffff" stroke="#b9bec8" />
                <rect x={7} y={0} width={7} height={12} fill="#6b2a25" fill-opacity="0.35" stroke="#b9bec8" />
              </g>
            ),
          },
          ...(input.pad
            ? [
                {
                  label: 'pad region',
                  swatch: (
                    <rect
                      x={2}
                      y={2}
                      width={10}
                      height={8}
                      fill="#e8edf3"
                      stroke="#7c8da3"
                      stroke-width="0.5"
                      stroke-dasharray="2 1.5"
                    />
                  ),
                },
              ]
            : []),
        ]}
      />
      <text class="vc-void-summary" x={lx} y={top + 4 + 14 + 3 * 19 + 12 + 14 + 3 * 19 + 18}>
        {`expected discs ${expected.toFixed(1)} (all sizes)`}
      </text>
    </ChartSvg>
  );
}

/** A good die is shaded by its kill probability (darker = likelier), so risk reads in greyscale too. */
function riskFill(p: number | undefined): string {
  return p !== undefined && p > 0.02 ? '#6b2a25' : '#ffffff';
}
function riskOpacity(p: number | undefined): number | undefined {
  return p !== undefined && p > 0.02 ? Math.round(Math.min(0.6, p * 0.9) * 100) / 100 : undefined;
}

function clamp01(v: number): number {
  return Number.isFinite(v) ? Math.min(1, Math.max(0, v)) : 0;
}
