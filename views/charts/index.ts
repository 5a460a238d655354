/** voidcast's charts: pure functions of data that return SVG (hono/jsx). */
export {
  type ControlChartInput,
  type ControlChartPoint,
  type ControlChartRule,
  controlChart,
} from './control-chart.tsx';
export { type ParetoBar, type ParetoInput, type ParetoItem, pareto, paretoBars } from './pareto.tsx';
export {
  type MeasuredBand,
  type RemovalCurveInput,
  type RemovalCurvePoint,
  removalCurve,
} from './removal-curve.tsx';
export { type SpectrumSeries, type StackedSpectrumInput, stackedSpectrum } from './stacked-spectrum.tsx';
export {
  swing,
  type TornadoInput,
  type TornadoPanel,
  type TornadoRow,
  type TornadoValues,
  tornado,
  tornadoOrder,
} from './tornado.tsx';
export { segmentTrend, type TrendInput, type TrendPoint, trend } from './trend.tsx';
export { type VoidDisc, type VoidMapDie, type VoidMapInput, voidMap } from './void-map.tsx';
export { type DieRect, layoutDies, type MirrorAxis } from './wafer-frame.tsx';
export { DEFAULT_CLASS_EDGES_M, type WaferMapInput, type WaferParticle, waferMap } from './wafer-map.tsx';
