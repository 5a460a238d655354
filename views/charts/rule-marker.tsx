/**
 * The marker of a control-chart rule: a shape per rule (triangle, square, diamond, cross, inverted
 * triangle, star), each with its own fill, so that flagged points keep their rule in greyscale print.
 */
import type { Child } from 'hono/jsx';
import { r } from './svg.tsx';

/** The marker shapes, in the order rules take them. */
export const RULE_SHAPES = ['triangle', 'square', 'diamond', 'cross', 'down', 'star'] as const;
export type RuleShape = (typeof RULE_SHAPES)[number];

/** The marker of a flagging rule, centred on (x, y). */
export function RuleMarker(props: {
  shape: RuleShape;
  x: number;
  y: number;
  cls?: string;
  children?: Child;
}) {
  const { x, y } = props;
  const s = 5;
  const common = { class: props.cls ?? 'vc-flag', stroke: '#18202e', 'stroke-width': '1' };
  switch (props.shape) {
    case 'triangle':
      return (
        <path {...common} fill="#b3261e" d={`M${r(x)},${r(y - s - 1)} l${s + 1},${2 * s} h${-2 * s - 2} z`}>
          {props.children}
        </path>
      );
    case 'square':
      return (
        <rect
          {...common}
          fill="#c98a12"
          x={r(x - s + 1)}
          y={r(y - s + 1)}
          width={2 * s - 2}
          height={2 * s - 2}
        >
          {props.children}
        </rect>
      );
    case 'diamond':
      return (
        <path
          {...common}
          fill="#6b4c9a"
          d={`M${r(x)},${r(y - s - 1)} l${s},${s + 1} l${-s},${s + 1} l${-s},${-s - 1} z`}
        >
          {props.children}
        </path>
      );
    case 'cross':
      return (
        <path
          {...common}
          fill="none"
          stroke="#2e7d4f"
          stroke-width="2.2"
          d={`M${r(x - s)},${r(y - s)} l${2 * s},${2 * s} M${r(x - s)},${r(y + s)} l${2 * s},${-2 * s}`}
        >
          {props.children}
        </path>
      );
    case 'down':
      return (
        <path {...common} fill="#1f6f8b" d={`M${r(x)},${r(y + s + 1)} l${s + 1},${-2 * s} h${-2 * s - 2} z`}>
          {props.children}
        </path>
      );
    default:
      return (
        <path
          {...common}
          fill="#5d6472"
          d={`M${r(x)},${r(y - s - 1)} L${r(x + 1.8)},${r(y - 1.8)} L${r(x + s + 1)},${r(y)} L${r(x + 1.8)},${r(y + 1.8)} L${r(x)},${r(y + s + 1)} L${r(x - 1.8)},${r(y + 1.8)} L${r(x - s - 1)},${r(y)} L${r(x - 1.8)},${r(y - 1.8)} z`}
        >
          {props.children}
        </path>
      );
  }
}
