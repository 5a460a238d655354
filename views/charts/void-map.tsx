/**
 * voidMap — the predicted voids of a bonded pair and each die's kill probability.
 *
 * Each die is filled by its probability of being killed from all sources — the detected
 * particles at their positions and the particles not seen at their positions (undetected tail,
 * adders, deposition) spread over the wafer — on a sequential colour scale from 0 with a
 * square-root stretch (small probabilities, where most dies are, stay apart; a legend bar with
 * ticks in % reads it back). A die a detected particle's void reaches is outlined in the void
 * colour; a die at or above the kill threshold is also hatched and outlined heavily, so neither
 * mark depends on colour alone. Each void is a disc drawn to scale (its radius from the
 * plate-mechanics void model) at the position of the particle that makes it; its fill opacity is
 * the particle's probability of surviving the cleans that still follow.
 *
 * Colour ramp: ColorBrewer "YlGnBu", 9 classes (C. A. Brewer, colorbrewer2.org, Pennsylvania
 * State University), a sequential scheme that stays ordered in greyscale and for the common
 * colour-vision deficiencies, interpolated between its classes.
 */
import { scaleLinear } from 'd3-scale';
import { latticeRuns, rectsPathD } from './die-grid.tsx';
import { ChartSvg, fmtNum, fmtPct, Legend, r, safeId } from './svg.tsx';
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
  /** Probability that the die is killed, all sources, 0…1 (the fill colour). */
  pKill?: number;
  /** Probability that a detected particle's void kills it, 0…1 (> 0: the die is outlined). */
  pDetected?: number;
  /** Expected kill events from the particles not seen at their positions, for the tooltip. */
  randomEvents?: number;
}

export interface VoidMapInput extends WaferGeometry {
  title: string;
  voids: VoidDisc[];
  dies: VoidMapDie[];
  /** The pad-array region inside a die, offset from the die's lower-left corner, mm. */
  pad?: DieRect;
  /** The kill probability at which a die counts as killed (for the legend), 0…1. */
  killThreshold?: number;
  /** The expected die loss the probabilities add up to, and the form it is in (for the legend). */
  dieLoss?: { value: number; form: string };
  /** The frame the map is drawn in, said in words (e.g. "bottom-wafer frame"). */
  frameNote?: string;
  id?: string;
  sizePx?: number;
}

const VOID_COLOUR = '#b3261e';
const KILLED_STROKE = '#18202e';
/** ColorBrewer YlGnBu, 9 classes, light to dark. */
const RAMP = [
  '#ffffd9',
  '#edf8b1',
  '#c7e9b4',
  '#7fcdbb',
  '#41b6c4',
  '#1d91c0',
  '#225ea8',
  '#253494',
  '#081d58',
];
/** Upper ends the scale may take: the smallest that holds the largest probability. */
const SCALE_TOPS = [0.01, 0.02, 0.05, 0.1, 0.2, 0.5, 1];
/** Legend ticks per top end, spaced so that their labels stay apart on the 190 px bar (square-root stretch). */
const TICKS: Record<number, number[]> = {
  0.01: [0, 0.001, 0.005, 0.01],
  0.02: [0, 0.005, 0.01, 0.02],
  0.05: [0, 0.01, 0.02, 0.05],
  0.1: [0, 0.02, 0.05, 0.1],
  0.2: [0, 0.05, 0.1, 0.2],
  0.5: [0, 0.05, 0.2, 0.5],
  1: [0, 0.05, 0.2, 0.5, 1],
};
/** Pads are outlined only where a die is drawn at least this wide, px (smaller, they would be noise). */
const MIN_PAD_DIE_PX = 12;

/** The colour scale of the dies: probability → colour, with its top end and legend ticks. */
export function killColourScale(maxP: number): {
  top: number;
  colour: (p: number) => string;
  ticks: number[];
} {
  const top = SCALE_TOPS.find((t) => maxP <= t) ?? 1;
  const ramp = scaleLinear<string>()
    .domain(RAMP.map((_, i) => i / (RAMP.length - 1)))
    .range(RAMP)
    .clamp(true);
  return { top, colour: (p) => ramp(Math.sqrt(clamp01(p) / top)), ticks: TICKS[top]! };
}

export function voidMap(input: VoidMapInput) {
  const id = safeId(input.id ?? `vm-${input.title}`);
  const size = input.sizePx ?? 320;
  const legendW = 206;
  const top = 24;
  const width = size + legendW + 22;
  const f = waferFrame(input, 8 + size / 2, top + size / 2, size, 'none');
  const killed = input.dies.filter((d) => d.killed).length;
  const reached = input.dies.filter((d) => (d.pDetected ?? 0) > 0).length;
  const probs = input.dies
    .map((d) => d.pKill)
    .filter((p): p is number => p !== undefined && Number.isFinite(p));
  const scale = killColourScale(probs.length ? Math.max(...probs) : 0);
  const shown = input.voids.filter(
    (v) => Number.isFinite(v.xMm) && Number.isFinite(v.yMm) && Number.isFinite(v.radiusMm) && v.radiusMm >= 0,
  );
  const expected = shown.reduce((a, v) => a + clamp01(v.survival), 0);
  const threshold = input.killThreshold ?? 0.5;
  const hatch = `${id}-kill`;
  const diePx = input.dies.length ? dieToPx(f, input.dies[0]!) : null;
  const drawPads = input.pad !== undefined && diePx !== null && diePx.w >= MIN_PAD_DIE_PX;
  const pMin = probs.length ? Math.min(...probs) : 0;
  const pMax = probs.length ? Math.max(...probs) : 0;
  const desc =
    `${input.dies.length} dies coloured by kill probability from all sources` +
    (probs.length ? ` (${fmtPct(pMin)} to ${fmtPct(pMax)}` : '') +
    (probs.length && input.dieLoss
      ? `; their sum, ${fmtNum(input.dieLoss.value)}, is the expected die loss, ${input.dieLoss.form})`
      : probs.length
        ? ')'
        : '') +
    `; ${reached} reached by a detected particle's void, ${killed} at or above ${fmtPct(threshold)} (hatched). ` +
    `${shown.length} predicted void${shown.length === 1 ? '' : 's'} from detected particles drawn to scale (expected ${expected.toFixed(2)} after survival; opacity = survival probability)` +
    (input.frameNote ? `; ${input.frameNote}` : '') +
    '.';
  // Large voids first so that small ones stay visible on top.
  const order = [...shown].sort((a, b) => b.radiusMm - a.radiusMm);
  const lx = size + 22;
  // Legend blocks, top to bottom.
  const voidsY = top + 2;
  const scaleY = voidsY + 14 + 3 * 18 + 14;
  const barW = 190;
  const barY = scaleY + 18;
  const tickY = barY + 12;
  const diesY = tickY + 26;
  const dieEntries = 2 + (input.pad ? 1 : 0);
  const summaryY = diesY + 14 + dieEntries * 18 + 12;
  const height = Math.max(size + top + 12, summaryY + 3 * 15 + 6);
  const gradientId = `${id}-ramp`;
  // The dies a detected void reaches or that are killed are drawn one by one, outlined, with their
  // figures in a tooltip; every other die goes into one path per colour class (COLOUR_CLASSES
  // steps of the square-root-stretched scale, finer than the eye tells apart), its probabilities
  // kept in the path's data-p-kill in the order of its rectangles.
  const marked = input.dies.filter((d) => d.killed || (d.pDetected ?? 0) > 0);
  const byClass = new Map<string, { fill: string; dies: VoidMapDie[] }>();
  for (const d of input.dies) {
    if (d.killed || (d.pDetected ?? 0) > 0) continue;
    const fill = d.pKill !== undefined ? classColour(scale, d.pKill) : '#ffffff';
    const k = byClass.get(fill) ?? { fill, dies: [] };
    k.dies.push(d);
    byClass.set(fill, k);
  }
  const classes = [...byClass.values()];
  // On a regular stepping grid each class is its row runs filled with a one-die pattern.
  const lattice = latticeRuns(input.dies.map((d) => dieToPx(f, d)));
  return (
    <ChartSvg kind="void-map" id={id} width={width} height={height} title={input.title} desc={desc}>
      <defs>
        <pattern id={hatch} patternUnits="userSpaceOnUse" width="5" height="5" patternTransform="rotate(45)">
          <line x1="0" y1="0" x2="0" y2="5" stroke="#ffffff" stroke-width="1.6" />
        </pattern>
        <linearGradient id={gradientId} x1="0" x2="1" y1="0" y2="0">
          {Array.from({ length: 17 }, (_, i) => i / 16).map((t) => (
            <stop offset={t} stop-color={scale.colour(t * t * scale.top)} />
          ))}
        </linearGradient>
      </defs>
      {input.frameNote ? (
        <text class="vc-frame-note" x={8} y={15}>
          {input.frameNote}
        </text>
      ) : null}
      <WaferOutline f={f} geometry={input} idPrefix={id} />
      <g class="vc-die-grid" clip-path={`url(#${id}-clip)`} data-dies={input.dies.length}>
        {classes.map((k, i) => {
          const rects = k.dies.map((d) => dieToPx(f, d));
          const runs = lattice ? latticeRuns(rects, lattice.cell) : null;
          const common = {
            class: 'vc-die-fill',
            'data-colour': k.fill,
            'data-p-kill': k.dies.map((d) => d.pKill?.toFixed(4) ?? '').join(' '),
          };
          if (!lattice || !runs)
            return (
              <path {...common} fill={k.fill} stroke="#9aa3ad" stroke-width="0.4" d={rectsPathD(rects)} />
            );
          // a regular grid: one die cell in the class colour, repeated over the class's row runs
          const c = lattice.cell;
          const q = (v: number) => Math.round(v * 1000) / 1000;
          return (
            <>
              <pattern
                id={`${id}-class-${i}`}
                patternUnits="userSpaceOnUse"
                x={q(c.x)}
                y={q(c.y)}
                width={q(c.pitchX)}
                height={q(c.pitchY)}
              >
                <rect
                  x={0.2}
                  y={0.2}
                  width={q(Math.max(0, c.w - 0.4))}
                  height={q(Math.max(0, c.h - 0.4))}
                  fill={k.fill}
                  stroke="#9aa3ad"
                  stroke-width="0.4"
                />
              </pattern>
              <path {...common} fill={`url(#${id}-class-${i})`} d={rectsPathD(runs.runs)} />
            </>
          );
        })}
        {marked.map((d) => {
          const p = dieToPx(f, d);
          const hit = (d.pDetected ?? 0) > 0;
          const cls = `vc-die${d.killed ? ' vc-die-killed' : ''}${hit ? ' vc-die-detected' : ''}`;
          return (
            <g class={cls} data-killed={d.killed ? 'true' : 'false'} data-p-kill={d.pKill?.toFixed(4)}>
              <rect
                x={r(p.x)}
                y={r(p.y)}
                width={r(p.w)}
                height={r(p.h)}
                fill={d.pKill !== undefined ? scale.colour(d.pKill) : '#ffffff'}
                stroke={d.killed ? KILLED_STROKE : VOID_COLOUR}
                stroke-width={d.killed ? 1.6 : 1.3}
              >
                <title>{dieTitle(d)}</title>
              </rect>
              {d.killed ? (
                <rect
                  class="vc-die-hatch"
                  x={r(p.x)}
                  y={r(p.y)}
                  width={r(p.w)}
                  height={r(p.h)}
                  fill={`url(#${hatch})`}
                  pointer-events="none"
                />
              ) : null}
            </g>
          );
        })}
        {drawPads && input.pad
          ? input.dies.map((d) => {
              const pad = dieToPx(f, {
                xMm: d.xMm + input.pad!.xMm,
                yMm: d.yMm + input.pad!.yMm,
                wMm: input.pad!.wMm,
                hMm: input.pad!.hMm,
              });
              return (
                <rect
                  class="vc-pad"
                  x={r(pad.x)}
                  y={r(pad.y)}
                  width={r(pad.w)}
                  height={r(pad.h)}
                  fill="none"
                  stroke="#4a5566"
                  stroke-width="0.5"
                  stroke-dasharray="2 1.5"
                  pointer-events="none"
                />
              );
            })
          : null}
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
        y={voidsY}
        heading="Voids of detected particles"
        rowHeight={18}
        entries={[1, 0.5, 0.1].map((s) => ({
          label: `survival ${fmtPct(s)} (to scale)`,
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
      <g class="vc-legend vc-colour-scale" transform={`translate(${lx} ${scaleY})`}>
        <text class="vc-legend-heading" x={0} y={9} font-weight="600">
          Die kill probability, all sources
        </text>
        <rect
          x={0}
          y={barY - scaleY}
          width={barW}
          height={10}
          fill={`url(#${gradientId})`}
          stroke="#9aa3ad"
          stroke-width="0.5"
        />
        {scale.ticks.map((t) => {
          const tx = r(Math.sqrt(t / scale.top) * barW);
          return (
            <g class="vc-tick">
              <line x1={tx} x2={tx} y1={barY - scaleY + 10} y2={barY - scaleY + 13} stroke="#5d6472" />
              <text
                x={tx}
                y={tickY - scaleY + 11}
                text-anchor={t === 0 ? 'start' : t === scale.top ? 'end' : 'middle'}
              >
                {fmtPct(t)}
              </text>
            </g>
          );
        })}
      </g>
      <Legend
        x={lx}
        y={diesY}
        heading="Dies"
        rowHeight={18}
        entries={[
          {
            label: `reached by a detected void (${reached})`,
            swatch: (
              <rect
                x={1}
                y={0}
                width={14}
                height={11}
                fill="#edf8b1"
                stroke={VOID_COLOUR}
                stroke-width="1.3"
              />
            ),
          },
          {
            label: `killed, P ≥ ${fmtPct(threshold)} (${killed})`,
            swatch: (
              <g>
                <rect
                  x={1}
                  y={0}
                  width={14}
                  height={11}
                  fill={scale.colour(Math.min(threshold, scale.top))}
                />
                <rect
                  x={1}
                  y={0}
                  width={14}
                  height={11}
                  fill={`url(#${hatch})`}
                  stroke={KILLED_STROKE}
                  stroke-width="1.6"
                />
              </g>
            ),
          },
          ...(input.pad
            ? [
                {
                  label: drawPads
                    ? 'pad region (the kill area)'
                    : `kill area: pad ${fmtNum(input.pad.wMm, 2)} × ${fmtNum(input.pad.hMm, 2)} mm`,
                  swatch: (
                    <rect
                      x={3}
                      y={2}
                      width={10}
                      height={7}
                      fill="none"
                      stroke="#4a5566"
                      stroke-width="0.6"
                      stroke-dasharray="2 1.5"
                    />
                  ),
                },
              ]
            : []),
        ]}
      />
      <g class="vc-void-summary">
        <text x={lx} y={summaryY}>
          {input.dieLoss ? `Sum over the dies: ${fmtNum(input.dieLoss.value)}` : `${input.dies.length} dies`}
        </text>
        {input.dieLoss ? (
          <text x={lx} y={summaryY + 15}>
            {`= expected die loss (${input.dieLoss.form === 'negative binomial' ? 'neg. binomial' : input.dieLoss.form})`}
          </text>
        ) : null}
        <text x={lx} y={summaryY + (input.dieLoss ? 30 : 15)}>
          {`Detected: ${expected.toFixed(1)} expected voids`}
        </text>
      </g>
    </ChartSvg>
  );
}

/** Steps of the die colour scale (on its square-root stretch) that share one path. */
export const COLOUR_CLASSES = 64;

/** The colour of a probability's class: the scale's colour at the class's centre. */
export function classColour(scale: ReturnType<typeof killColourScale>, p: number): string {
  const level = Math.round(Math.sqrt(clamp01(p) / scale.top) * COLOUR_CLASSES) / COLOUR_CLASSES;
  return scale.colour(Math.min(1, level) ** 2 * scale.top);
}

function dieTitle(d: VoidMapDie): string {
  const parts = [`die at (${d.xMm.toFixed(1)}, ${d.yMm.toFixed(1)}) mm`];
  if (d.pKill !== undefined) parts.push(`P(kill) ${fmtPct(d.pKill)}${d.killed ? ' (killed)' : ''}`);
  else parts.push(d.killed ? 'killed' : 'good');
  if (d.pDetected !== undefined) parts.push(`from detected particles ${fmtPct(d.pDetected)}`);
  if (d.randomEvents !== undefined)
    parts.push(`${fmtNum(d.randomEvents)} expected hits from particles not seen`);
  return parts.join('; ');
}

function clamp01(v: number): number {
  return Number.isFinite(v) ? Math.min(1, Math.max(0, v)) : 0;
}
