/**
 * adderHistory — the adders each pass of one tool (chamber) left, pass by pass over time, with the
 * fitted mean per pass and its interval as a shaded band, and the typed value as a dashed line.
 * A pure function of its input, returning SVG.
 */
import { scaleLinear, scaleUtc } from 'd3-scale';
import {
  ChartSvg,
  fmtNum,
  fmtUtcTick,
  innerBox,
  Legend,
  linearTicks,
  NoData,
  r,
  safeId,
  XAxis,
  YAxis,
} from './svg.tsx';

export interface AdderHistoryPass {
  timeMs: number;
  adders: number;
  waferId: string;
}

export interface AdderHistoryInput {
  title: string;
  passes: AdderHistoryPass[];
  /** Fitted mean per pass and its interval. */
  mean?: { value: number; low: number; high: number } | null;
  /** The typed value per pass at the same size. */
  typed?: number | null;
  id?: string;
  width?: number;
  height?: number;
}

export function adderHistory(input: AdderHistoryInput) {
  const id = safeId(input.id ?? `ah-${input.title}`);
  const width = input.width ?? 520;
  const height = input.height ?? 220;
  const frame = { width, height, margin: { top: 14, right: 24, bottom: 62, left: 52 } };
  const box = innerBox(frame);
  const passes = input.passes.filter((p) => Number.isFinite(p.timeMs) && Number.isFinite(p.adders));
  const times = passes.map((p) => p.timeMs);
  const t0 = times.length ? Math.min(...times) : 0;
  const t1 = times.length ? Math.max(...times) : 3_600_000;
  const pad = Math.max((t1 - t0) * 0.05, 600_000);
  const x = scaleUtc()
    .domain([new Date(t0 - pad), new Date(t1 + pad)])
    .range([box.x0, box.x1]);
  const top = Math.max(1, ...passes.map((p) => p.adders), input.mean?.high ?? 0, input.typed ?? 0) * 1.1;
  const y = scaleLinear().domain([0, top]).range([box.y1, box.y0]).nice();
  const yTop = y.domain()[1]!;
  const yTicks = y.ticks(5);
  const span = t1 - t0 + 2 * pad;
  const xTicks = x.ticks(5).map((d) => ({ at: r(x(d)), label: fmtUtcTick(d.getTime(), span) }));
  const desc =
    passes.length === 0
      ? 'No pass.'
      : `${passes.length} passes from ${new Date(t0).toISOString().slice(0, 16)} to ${new Date(t1).toISOString().slice(0, 16)} UTC, ${passes.reduce((s, p) => s + p.adders, 0)} adders in all` +
        (input.mean
          ? `; mean ${fmtNum(input.mean.value)} per pass [${fmtNum(input.mean.low)}–${fmtNum(input.mean.high)}]`
          : '') +
        (input.typed != null ? `; typed ${fmtNum(input.typed)}` : '') +
        '.';
  return (
    <ChartSvg kind="adder-history" id={id} width={width} height={height} title={input.title} desc={desc}>
      <YAxis
        ticks={linearTicks(yTicks, y, (v) => fmtNum(v))}
        x={box.x0}
        y0={box.y0}
        y1={box.y1}
        label="adders per pass"
        grid={box.x1}
      />
      <XAxis ticks={xTicks} y={box.y1} x0={box.x0} x1={box.x1} label="pass time (UTC)" grid={box.y0} />
      {passes.length === 0 ? (
        <NoData x={(box.x0 + box.x1) / 2} y={(box.y0 + box.y1) / 2} text="no pass" />
      ) : null}
      <g class="vc-marks">
        {input.mean ? (
          <g class="vc-mean">
            <rect
              class="vc-mean-band"
              x={box.x0}
              width={r(box.x1 - box.x0)}
              y={r(y(Math.min(input.mean.high, yTop)))}
              height={r(Math.max(0, y(input.mean.low) - y(Math.min(input.mean.high, yTop))))}
              fill="#1f6f8b"
              fill-opacity="0.15"
            />
            <line
              x1={box.x0}
              x2={box.x1}
              y1={r(y(input.mean.value))}
              y2={r(y(input.mean.value))}
              stroke="#1f6f8b"
              stroke-width="2"
            />
          </g>
        ) : null}
        {input.typed != null ? (
          <line
            class="vc-typed"
            x1={box.x0}
            x2={box.x1}
            y1={r(y(Math.min(input.typed, yTop)))}
            y2={r(y(Math.min(input.typed, yTop)))}
            stroke="#5d6472"
            stroke-width="1.4"
            stroke-dasharray="6 4"
          />
        ) : null}
        {passes.map((p) => (
          <circle
            class="vc-mark vc-pass"
            cx={r(x(p.timeMs))}
            cy={r(y(p.adders))}
            r="3.5"
            fill="#c98a12"
            stroke="#18202e"
          >
            <title>{`${new Date(p.timeMs).toISOString().slice(0, 16)} UTC, ${p.waferId}: ${p.adders} adders`}</title>
          </circle>
        ))}
      </g>
      <Legend
        x={box.x0}
        y={box.y1 + 36}
        columns={3}
        columnWidth={(box.x1 - box.x0) / 3}
        entries={[
          { label: 'one pass', swatch: <circle cx={7} cy={6} r="3.5" fill="#c98a12" stroke="#18202e" /> },
          ...(input.mean
            ? [
                {
                  label: 'fitted mean, 95 %',
                  swatch: (
                    <g>
                      <rect x={0} y={1} width="14" height="10" fill="#1f6f8b" fill-opacity="0.15" />
                      <line x1={0} x2={14} y1={6} y2={6} stroke="#1f6f8b" stroke-width="2" />
                    </g>
                  ),
                },
              ]
            : []),
          ...(input.typed != null
            ? [
                {
                  label: 'typed',
                  swatch: (
                    <line
                      x1={0}
                      x2={14}
                      y1={6}
                      y2={6}
                      stroke="#5d6472"
                      stroke-width="1.4"
                      stroke-dasharray="6 4"
                    />
                  ),
                },
              ]
            : []),
        ]}
      />
    </ChartSvg>
  );
}
