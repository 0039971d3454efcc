/**
 * The stability map and the cell drill-down: what a page imports. Every component documents its
 * props in its own file; the pure maths lives in lib/charts.
 */
export { StabilityMap } from "./StabilityMap";
export { CompareMaps } from "./CompareMaps";
export { MapGrid } from "./MapGrid";
export { VerdictSymbol } from "./VerdictSymbol";
export { CellTimeSeries } from "./CellTimeSeries";
export { TrajectoryReplay } from "./TrajectoryReplay";
export { type MapLayer, type OverlayInput } from "./map-model";
