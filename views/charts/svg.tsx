/**
 * The shared parts of voidcast's charts: the frame, axes, legends, fill patterns and number
 * formats. Every chart is a pure function of its data that returns SVG (hono/jsx, so every
 * label is escaped by the renderer, never by hand).
 *
 * Visual rules, so a chart keeps its meaning in greyscale print:
 * - series are told apart by pattern (solid, hatch, dots, cross-hatch …) as well as by colour;
 * - limit lines are told apart by dash pattern and carry their name as text at the line's end;
 * - every chart has a <title> and <desc> for screen readers and a legend in words.
 */
import type { Child } from 'hono/jsx';

/** Plot geometry: the whole box and the margins around the plotting area (px). */
export interface Frame {
  width: number;
  height: number;
  margin: { top: number; right: number; bottom: number; left: number };
}

export function innerBox(f: Frame): { x0: number; x1: number; y0: number; y1: number } {
  return {
    x0: f.margin.left,
    x1: f.width - f.margin.right,
    y0: f.margin.top,
    y1: f.height - f.margin.bottom,
  };
}

/** An id fragment safe in XML ids and url(#…) references. */
export function safeId(s: string): string {
  const t = s.replace(/[^A-Za-z0-9_-]/g, '-').replace(/^-+|-+$/g, '');
  return /^[A-Za-z]/.test(t) ? t : `c-${t}`;
}

/** The outer <svg>: role img, a title and a description, a class naming the chart kind. */
export function ChartSvg(props: {
  kind: string;
  id: string;
  width: number;
  height: number;
  title: string;
  desc: string;
  children?: Child;
}) {
  const tid = `${props.id}-title`;
  const did = `${props.id}-desc`;
  return (
    <svg
      xmlns="http://www.w3.org/2000/svg"
      class={`vc-chart vc-chart-${props.kind}`}
      id={props.id}
      viewBox={`0 0 ${props.width} ${props.height}`}
      width={props.width}
      height={props.height}
      role="img"
      aria-labelledby={`${tid} ${did}`}
      data-chart={props.kind}
    >
      <title id={tid}>{props.title}</title>
      <desc id={did}>{props.desc}</desc>
      {props.children}
    </svg>
  );
}

// ---------------------------------------------------------------------------------------------
// Text metrics. Charts are laid out on the server, before any font is known, so they reserve room
// for their words from the advance widths of DejaVu Sans — the font the stylesheet's sans stack
// falls to on Linux and the widest of the common sans faces (Segoe UI, Roboto, Helvetica and San
// Francisco set the same words narrower), so room reserved this way is enough for any of them.

/** Chart type size, px (public/voidcast.css: `svg.vc-chart text { font-size: 11px }`). */
export const FONT_PX = 11;
/** Ascent and descent of a line of chart text, em (DejaVu Sans: 0.93 and 0.24, measured in Chromium). */
export const ASCENT_EM = 0.93;
export const DESCENT_EM = 0.24;
/** Height of one line's box (ascent + descent) at the chart type size, px. */
export const LINE_BOX_PX = (ASCENT_EM + DESCENT_EM) * FONT_PX;

/** DejaVu Sans advance widths of U+0021…U+007E in hundredths of an em, rounded up (measured in Chromium). */
const ASCII_ADVANCE = [
  41, 46, 84, 64, 96, 78, 28, 40, 40, 50, 84, 32, 37, 32, 34, 64, 64, 64, 64, 64, 64, 64, 64, 64, 64, 34, 34,
  84, 84, 84, 54, 100, 71, 69, 70, 78, 64, 58, 78, 76, 30, 30, 66, 56, 87, 75, 79, 61, 79, 70, 64, 60, 74, 69,
  99, 69, 62, 69, 40, 34, 40, 84, 50, 50, 62, 64, 55, 64, 62, 35, 64, 64, 28, 28, 58, 28, 98, 64, 62, 64, 64,
  40, 53, 40, 64, 60, 82, 60, 60, 53, 64, 34, 64, 84,
];
/** The same for the other characters chart labels use; anything else counts as a full em. */
const OTHER_ADVANCE: Record<string, number> = {
  ' ': 32,
  '\u202f': 20,
  '\u2009': 20,
  '\u00a0': 32,
  µ: 64,
  '×': 84,
  '−': 84,
  '–': 50,
  '—': 100,
  '≥': 84,
  '≤': 84,
  '…': 100,
  '·': 32,
  '→': 84,
  '≈': 84,
  '±': 84,
  '°': 50,
  '⁻': 53,
  '⌀': 61,
  '⇄': 84,
  '▲': 77,
  '²': 41,
  '³': 41,
};

/** DejaVu Sans Bold sets text up to 1.10 × as wide as the regular face (digits 1.09, "a" 1.10). */
const BOLD_FACTOR = 1.12;

/**
 * Estimated advance width of a line of chart text, px (never less than Chromium sets it in DejaVu
 * Sans); `bold` for text drawn at font-weight 600 or more.
 */
export function textWidth(s: string, fontPx = FONT_PX, bold = false): number {
  if (bold) return textWidth(s, fontPx) * BOLD_FACTOR;
  let em = 0;
  for (const ch of s) {
    const c = ch.codePointAt(0)!;
    if (c >= 0x21 && c <= 0x7e) em += ASCII_ADVANCE[c - 0x21]! / 100;
    else if (OTHER_ADVANCE[ch] !== undefined) em += OTHER_ADVANCE[ch]! / 100;
    else if (/[⁰¹⁴-⁹]/u.test(ch)) em += 0.41;
    else em += 1;
  }
  return em * fontPx;
}

/** The label, shortened with an ellipsis until it fits `maxPx` (the whole label when it fits). */
export function fitText(s: string, maxPx: number, fontPx = FONT_PX, bold = false): string {
  if (textWidth(s, fontPx, bold) <= maxPx) return s;
  const chars = Array.from(s);
  while (chars.length > 0 && textWidth(`${chars.join('').trimEnd()}…`, fontPx, bold) > maxPx) chars.pop();
  return chars.length ? `${chars.join('').trimEnd()}…` : '';
}

// ---------------------------------------------------------------------------------------------
// Number formats (display only; the numbers themselves stay SI in the data).

/**
 * A compact number: 3 significant figures, exponent for very large/small, digits grouped in threes
 * by a narrow no-break space ("100 000"): the SI Brochure (9th ed., 5.4.4) and ISO 80000-1 group
 * digits with a thin space and never with a comma or point, so that no reader takes "100,000" for
 * a hundred with a decimal comma.
 */
export function fmtNum(v: number, sig = 3): string {
  if (!Number.isFinite(v)) return '—';
  if (v === 0) return '0';
  const a = Math.abs(v);
  if (a >= 1e6 || a < 1e-3) {
    const e = Math.floor(Math.log10(a));
    const m = v / 10 ** e;
    return `${Number(m.toPrecision(sig))}×10${superscript(e)}`;
  }
  return groupDigits(Number(v.toPrecision(sig)));
}

/**
 * An airborne concentration (per m³) or a level set on one: whole particles from 100 up, digits
 * grouped ("10 559", "3517"), so that a level is shown as set and two nearby levels do not round
 * to the same figure (an action level of 3517 is not the class limit's 3520); three significant
 * figures below 100.
 */
export function fmtConc(v: number): string {
  if (!Number.isFinite(v)) return '—';
  return Math.abs(v) >= 100 ? groupDigits(Math.round(v)) : fmtNum(v);
}

/** U+202F NARROW NO-BREAK SPACE: the digit-group separator (a thin space that never breaks a line). */
export const DIGIT_GROUP = '\u202f';

/** A number in plain decimal notation with the integer part grouped in threes from 10 000 up. */
export function groupDigits(v: number): string {
  if (!Number.isFinite(v)) return '—';
  const [int, frac] = String(Math.abs(v)).split('.');
  const grouped = int!.length > 4 ? int!.replace(/\B(?=(\d{3})+$)/g, DIGIT_GROUP) : int!;
  return `${v < 0 ? '-' : ''}${grouped}${frac ? `.${frac}` : ''}`;
}

const SUP: Record<string, string> = {
  '-': '⁻',
  '0': '⁰',
  '1': '¹',
  '2': '²',
  '3': '³',
  '4': '⁴',
  '5': '⁵',
  '6': '⁶',
  '7': '⁷',
  '8': '⁸',
  '9': '⁹',
};
export function superscript(n: number): string {
  return String(n)
    .split('')
    .map((c) => SUP[c] ?? c)
    .join('');
}

/** A diameter in metres for an axis or legend: nm below 1 µm, µm from 1 µm, mm from 1 mm. */
export function fmtDiameter(dM: number): string {
  if (!Number.isFinite(dM) || dM <= 0) return '—';
  if (dM < 1e-6) return `${fmtPlain(dM * 1e9)} nm`;
  if (dM < 1e-3) return `${fmtPlain(dM * 1e6)} µm`;
  return `${fmtPlain(dM * 1e3)} mm`;
}

function fmtPlain(v: number): string {
  return String(Number(v.toPrecision(3)));
}

/** A fraction 0…1 as a percentage with sensible digits. */
export function fmtPct(f: number): string {
  if (!Number.isFinite(f)) return '—';
  const p = f * 100;
  if (p !== 0 && Math.abs(p) < 0.1) return `${p.toPrecision(2)} %`;
  return `${Number(p.toFixed(Math.abs(p) < 10 ? 1 : 0))} %`;
}

/** UTC time for an axis tick: date when the span is days, hour:minute otherwise. */
export function fmtUtcTick(ms: number, spanMs: number): string {
  const d = new Date(ms);
  const iso = d.toISOString();
  if (spanMs > 3 * 86_400_000) return iso.slice(5, 10);
  if (spanMs > 86_400_000) return `${iso.slice(5, 10)} ${iso.slice(11, 16)}`;
  return iso.slice(11, 16);
}

// ---------------------------------------------------------------------------------------------
// Axes. Each tick is <g class="vc-tick"> with a <line> and a <text>; the axis carries its label.

export interface Tick {
  at: number; // position in px along the axis
  label: string | null; // null: a minor tick without text
}

/**
 * Where the x axis puts its words, px below the axis line: tick labels start below the 5 px tick
 * and below the box of a y tick label centred on the same corner (so "0" and the first date never
 * touch), the title one line further down. X_AXIS_DEPTH is the room the axis needs under the plot.
 */
const X_TICK_BASELINE = 17;
const X_TITLE_BASELINE = 33;
export const X_AXIS_DEPTH = Math.ceil(X_TITLE_BASELINE + DESCENT_EM * FONT_PX + 1);
/** Baseline offset that centres a line's box on a y position. */
const CENTRE_BASELINE = r(((ASCENT_EM - DESCENT_EM) / 2) * FONT_PX);
/** Gap between a y tick and its label, and between the widest tick label and the axis title, px. */
const Y_TICK_GAP = 8;
const Y_TITLE_GAP = 4;

/**
 * The room a y axis needs beside the plot, px: tick, widest tick label and, with a title, the
 * rotated title's line box. A chart sets its side margin to at least this.
 */
export function yAxisDepth(ticks: Tick[], label?: string): number {
  const widest = Math.max(0, ...ticks.map((t) => (t.label === null ? 0 : textWidth(t.label))));
  return Math.ceil(Y_TICK_GAP + widest + (label ? Y_TITLE_GAP + LINE_BOX_PX : 0) + 1);
}

export function XAxis(props: {
  ticks: Tick[];
  y: number;
  x0: number;
  x1: number;
  label?: string;
  grid?: number;
}) {
  return (
    <g class="vc-axis vc-axis-x" data-axis="x">
      <line class="vc-axis-line" x1={props.x0} x2={props.x1} y1={props.y} y2={props.y} stroke="#5d6472" />
      {props.ticks.map((t) => (
        <g class={t.label === null ? 'vc-tick vc-tick-minor' : 'vc-tick'}>
          {props.grid !== undefined && t.label !== null ? (
            <line class="vc-grid" x1={r(t.at)} x2={r(t.at)} y1={props.grid} y2={props.y} stroke="#ebe8e0" />
          ) : null}
          <line
            x1={r(t.at)}
            x2={r(t.at)}
            y1={props.y}
            y2={props.y + (t.label === null ? 3 : 5)}
            stroke="#5d6472"
          />
          {t.label !== null ? (
            <text x={r(t.at)} y={props.y + X_TICK_BASELINE} text-anchor="middle">
              {t.label}
            </text>
          ) : null}
        </g>
      ))}
      {props.label ? (
        <text
          class="vc-axis-label"
          x={r((props.x0 + props.x1) / 2)}
          y={props.y + X_TITLE_BASELINE}
          text-anchor="middle"
        >
          {fitText(props.label, props.x1 - props.x0)}
        </text>
      ) : null}
    </g>
  );
}

export function YAxis(props: {
  ticks: Tick[];
  x: number;
  y0: number;
  y1: number;
  label?: string;
  side?: 'left' | 'right';
  grid?: number;
}) {
  const right = props.side === 'right';
  const dir = right ? 1 : -1;
  const mid = (props.y0 + props.y1) / 2;
  // The title clears the widest tick label. Turned −90° (left) or +90° (right), the title's ascent
  // points away from the plot, so what faces the tick labels is its descent.
  const widest = Math.max(0, ...props.ticks.map((t) => (t.label === null ? 0 : textWidth(t.label))));
  const lx = props.x + dir * (Y_TICK_GAP + widest + Y_TITLE_GAP + DESCENT_EM * FONT_PX);
  return (
    <g class={`vc-axis vc-axis-y${right ? ' vc-axis-y2' : ''}`} data-axis={right ? 'y2' : 'y'}>
      <line class="vc-axis-line" x1={props.x} x2={props.x} y1={props.y0} y2={props.y1} stroke="#5d6472" />
      {props.ticks.map((t) => (
        <g class={t.label === null ? 'vc-tick vc-tick-minor' : 'vc-tick'}>
          {props.grid !== undefined && t.label !== null ? (
            <line class="vc-grid" x1={props.x} x2={props.grid} y1={r(t.at)} y2={r(t.at)} stroke="#ebe8e0" />
          ) : null}
          <line
            x1={props.x}
            x2={props.x + dir * (t.label === null ? 3 : 5)}
            y1={r(t.at)}
            y2={r(t.at)}
            stroke="#5d6472"
          />
          {t.label !== null ? (
            <text
              x={props.x + dir * Y_TICK_GAP}
              y={r(r(t.at) + CENTRE_BASELINE)}
              text-anchor={right ? 'start' : 'end'}
            >
              {t.label}
            </text>
          ) : null}
        </g>
      ))}
      {props.label ? (
        <text
          class="vc-axis-label"
          x={r(lx)}
          y={r(mid)}
          text-anchor="middle"
          transform={`rotate(${right ? 90 : -90} ${r(lx)} ${r(mid)})`}
        >
          {fitText(props.label, Math.abs(props.y1 - props.y0))}
        </text>
      ) : null}
    </g>
  );
}

/** Round a pixel coordinate to 0.1 px so the SVG stays small and stable. */
export function r(v: number): number {
  return Math.round(v * 10) / 10;
}

/**
 * Ticks of a log scale: a labelled tick at each power of ten, minor ticks at 2…9 × 10ⁿ when
 * the domain spans few decades; when it spans many, only every other decade is labelled.
 */
export function logTicks(
  domain: [number, number],
  toPx: (v: number) => number,
  label: (v: number) => string,
): Tick[] {
  const [a, b] = domain[0] < domain[1] ? domain : [domain[1], domain[0]];
  const e0 = Math.floor(Math.log10(a) + 1e-9);
  const e1 = Math.ceil(Math.log10(b) - 1e-9);
  const decades = e1 - e0;
  const step = decades > 8 ? 2 : 1;
  const out: Tick[] = [];
  for (let e = e0; e <= e1; e++) {
    const major = 10 ** e;
    if (major >= a * (1 - 1e-9) && major <= b * (1 + 1e-9))
      out.push({ at: toPx(major), label: (e - e0) % step === 0 ? label(major) : null });
    if (decades <= 4)
      for (let m = 2; m <= 9; m++) {
        const v = m * major;
        if (v > a && v < b) out.push({ at: toPx(v), label: null });
      }
  }
  return out;
}

/** Ticks of a linear scale from d3's nice tick values. */
export function linearTicks(
  values: number[],
  toPx: (v: number) => number,
  label: (v: number) => string,
): Tick[] {
  return values.map((v) => ({ at: toPx(v), label: label(v) }));
}

/** A power of ten as 10ⁿ, or the plain number between 0.001 and 10 000. */
export function fmtPow10(v: number): string {
  const e = Math.round(Math.log10(v));
  if (e >= -3 && e <= 4) return String(Number(v.toPrecision(3)));
  return `10${superscript(e)}`;
}

// ---------------------------------------------------------------------------------------------
// Series styles: colour and pattern together, so greyscale print keeps series apart.

export interface SeriesStyle {
  colour: string;
  pattern: 'solid' | 'hatch' | 'dots' | 'cross' | 'vert' | 'hatch-back' | 'horiz' | 'grid';
}

export const SERIES_STYLES: SeriesStyle[] = [
  { colour: '#1f6f8b', pattern: 'solid' },
  { colour: '#c98a12', pattern: 'hatch' },
  { colour: '#6b4c9a', pattern: 'dots' },
  { colour: '#2e7d4f', pattern: 'cross' },
  { colour: '#b3261e', pattern: 'vert' },
  { colour: '#5d6472', pattern: 'hatch-back' },
  { colour: '#8a6d3b', pattern: 'horiz' },
  { colour: '#18202e', pattern: 'grid' },
];

export function seriesStyle(i: number): SeriesStyle {
  return SERIES_STYLES[i % SERIES_STYLES.length]!;
}

/** The <pattern> for a series style; `fill` then refers to url(#id). Solid needs none. */
export function SeriesPattern(props: { id: string; style: SeriesStyle }) {
  const { colour, pattern } = props.style;
  if (pattern === 'solid') return null;
  const bg = <rect width="8" height="8" fill={colour} fill-opacity="0.28" />;
  let marks: Child;
  switch (pattern) {
    case 'hatch':
      marks = <path d="M-2,2 l4,-4 M0,8 l8,-8 M6,10 l4,-4" stroke={colour} stroke-width="1.6" />;
      break;
    case 'hatch-back':
      marks = <path d="M-2,6 l4,4 M0,0 l8,8 M6,-2 l4,4" stroke={colour} stroke-width="1.6" />;
      break;
    case 'dots':
      marks = (
        <g fill={colour}>
          <circle cx="2" cy="2" r="1.4" />
          <circle cx="6" cy="6" r="1.4" />
        </g>
      );
      break;
    case 'cross':
      marks = <path d="M0,8 l8,-8 M0,0 l8,8" stroke={colour} stroke-width="1.2" />;
      break;
    case 'vert':
      marks = <path d="M2,0 v8 M6,0 v8" stroke={colour} stroke-width="1.4" />;
      break;
    case 'horiz':
      marks = <path d="M0,2 h8 M0,6 h8" stroke={colour} stroke-width="1.4" />;
      break;
    default:
      marks = <path d="M0,0.5 h8 M0.5,0 v8" stroke={colour} stroke-width="1" />;
  }
  return (
    <pattern id={props.id} patternUnits="userSpaceOnUse" width="8" height="8">
      {bg}
      {marks}
    </pattern>
  );
}

export function seriesFill(id: string, style: SeriesStyle): string {
  return style.pattern === 'solid' ? style.colour : `url(#${id})`;
}

/** A legend: swatch + words, one row per entry, laid out in columns from (x, y). */
export function Legend(props: {
  x: number;
  y: number;
  entries: { label: string; swatch: Child }[];
  columns?: number;
  columnWidth?: number;
  rowHeight?: number;
  heading?: string;
}) {
  const cols = Math.max(1, props.columns ?? 1);
  const cw = props.columnWidth ?? 150;
  const rh = props.rowHeight ?? 16;
  const top = props.heading ? 14 : 0;
  return (
    <g class="vc-legend" transform={`translate(${r(props.x)} ${r(props.y)})`}>
      {props.heading ? (
        <text class="vc-legend-heading" x={0} y={9} font-weight="600">
          {props.heading}
        </text>
      ) : null}
      {props.entries.map((e, i) => {
        const cx = (i % cols) * cw;
        const cy = top + Math.floor(i / cols) * rh;
        return (
          <g class="vc-legend-entry" transform={`translate(${cx} ${cy})`}>
            {e.swatch}
            <text x={18} y={10}>
              {e.label}
            </text>
          </g>
        );
      })}
    </g>
  );
}

/** Shortens a label to n characters with an ellipsis (the full text goes into a <title>). */
export function clip(label: string, n: number): string {
  const chars = Array.from(label);
  return chars.length <= n ? label : `${chars.slice(0, n - 1).join('')}…`;
}

/** A message in place of marks when a chart has no data: the axes stay, the reason is said. */
export function NoData(props: { x: number; y: number; text: string }) {
  return (
    <text
      class="vc-nodata"
      x={r(props.x)}
      y={r(props.y)}
      text-anchor="middle"
      font-style="italic"
      fill="#5d6472"
    >
      {props.text}
    </text>
  );
}
