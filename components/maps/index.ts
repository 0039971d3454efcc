/**
 * The stability map: what a page imports. Every component documents its props in its own file; the
 * pure maths lives in lib/charts. The cell drill-down's charts (CellTimeSeries, on recharts, and
 * TrajectoryReplay) are imported from their own files: exported here, they went into the script of
 * every page that shows a map (about 480 kB of recharts and d3 before compression on the sweep page).
 */
export { StabilityMap } from "./StabilityMap";
export { CompareMaps } from "./CompareMaps";
export { MapGrid } from "./MapGrid";
export { VerdictSymbol } from "./VerdictSymbol";
export { type MapLayer, type OverlayInput } from "./map-model";
