/**
 * The stability map and the cell drill-down: what a page imports. Every component documents its
 * props in its own file; the pure maths lives in lib/charts.
 */
export { StabilityMap, cellDescription, type StabilityMapHandle, type StabilityMapProps } from "./StabilityMap";
export { CompareMaps, type CompareMapsProps, type CompareMode, type CompareSide } from "./CompareMaps";
export { MapGrid, type MapGridMode, type MapGridProps } from "./MapGrid";
export { MapLegend, type MapLegendProps } from "./MapLegend";
export { VerdictSymbol } from "./VerdictSymbol";
export { CellTimeSeries, timeSeriesProblem, type CellTimeSeriesProps } from "./CellTimeSeries";
export { TrajectoryReplay, type TrajectoryReplayProps } from "./TrajectoryReplay";
export { exportMapPng, exportMapPngDataUrl, stabilityMapPng, downloadBlob, exportDateLine, type PngExportOptions } from "./export";
export { exportMapSvg, mapSvg, type SvgExportOptions } from "./svg-export";
export {
  buildMapModel,
  resolveMetricScale,
  verdictScale,
  MapInputError,
  type MapAxis,
  type MapLayer,
  type MapModel,
  type MetricScaleOptions,
  type OverlayInput,
  type ResolvedScale,
} from "./map-model";
