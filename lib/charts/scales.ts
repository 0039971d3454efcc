/**
 * Axis scales and the cell geometry of a map: value ⇄ pixel on linear or log axes, the edges of
 * the cells around each axis value, and hit-testing (pixel → cell index).
 *
 * Cells are laid out row-major: index = row · columns + column, where column counts along the
 * x axis values and row along the y axis values (row 0 is the first y value, drawn at the bottom
 * when the y axis increases upwards).
 */

export type AxisSpacing = "linear" | "log";

export interface AxisScale {
  spacing: AxisSpacing;
  /** Domain in axis units, [low, high] with low < high (both > 0 on a log axis). */
  domain: readonly [number, number];
  /** Pixel positions of domain[0] and domain[1]; range[1] < range[0] for an upward y axis. */
  range: readonly [number, number];
}

function transform(spacing: AxisSpacing, value: number): number {
  return spacing === "log" ? Math.log10(value) : value;
}

function untransform(spacing: AxisSpacing, u: number): number {
  return spacing === "log" ? 10 ** u : u;
}

/** Pixel of a value (not clamped; NaN for values ≤ 0 on a log axis). */
export function valueToPixel(scale: AxisScale, value: number): number {
  if (scale.spacing === "log" && !(value > 0)) return Number.NaN;
  const u0 = transform(scale.spacing, scale.domain[0]);
  const u1 = transform(scale.spacing, scale.domain[1]);
  const f = (transform(scale.spacing, value) - u0) / (u1 - u0);
  return scale.range[0] + f * (scale.range[1] - scale.range[0]);
}

export function pixelToValue(scale: AxisScale, pixel: number): number {
  const u0 = transform(scale.spacing, scale.domain[0]);
  const u1 = transform(scale.spacing, scale.domain[1]);
  const f = (pixel - scale.range[0]) / (scale.range[1] - scale.range[0]);
  return untransform(scale.spacing, u0 + f * (u1 - u0));
}

/** Why the values cannot be an axis, or null when they can. */
export function axisValuesProblem(values: ArrayLike<number>, spacing: AxisSpacing): string | null {
  if (values.length === 0) return "needs at least one value";
  for (let i = 0; i < values.length; i++) {
    const v = values[i];
    if (!Number.isFinite(v)) return `value ${i + 1} is not a finite number`;
    if (spacing === "log" && v <= 0) return `value ${i + 1} is ${v}; a log axis needs values above 0`;
    if (i > 0 && !(v > values[i - 1])) return `values must increase strictly (value ${i + 1} is ${v} after ${values[i - 1]})`;
  }
  return null;
}

/**
 * The n + 1 cell edges around n strictly increasing axis values: midpoints between neighbours
 * (geometric midpoints on a log axis, so log-spaced cells are equally wide on screen), and the
 * outer edges half a step beyond the first and last value. A single value gets a cell one unit
 * wide (linear; ±½ of |value|, or ±½ at 0) or one decade wide (log).
 */
export function cellEdges(values: ArrayLike<number>, spacing: AxisSpacing): Float64Array {
  const problem = axisValuesProblem(values, spacing);
  if (problem) throw new Error(`axis ${problem}`);
  const n = values.length;
  const edges = new Float64Array(n + 1);
  const u = (i: number) => transform(spacing, values[i]);
  if (n === 1) {
    if (spacing === "log") {
      edges[0] = values[0] / Math.sqrt(10);
      edges[1] = values[0] * Math.sqrt(10);
    } else {
      const half = values[0] === 0 ? 0.5 : Math.abs(values[0]) / 2;
      edges[0] = values[0] - half;
      edges[1] = values[0] + half;
    }
    return edges;
  }
  for (let i = 1; i < n; i++) edges[i] = untransform(spacing, (u(i - 1) + u(i)) / 2);
  edges[0] = untransform(spacing, u(0) - (u(1) - u(0)) / 2);
  edges[n] = untransform(spacing, u(n - 1) + (u(n - 1) - u(n - 2)) / 2);
  return edges;
}

/** The index i with edges[i] ≤ value < edges[i + 1] (the last cell includes its top edge), or −1. */
export function locateCell(edges: ArrayLike<number>, value: number): number {
  const n = edges.length - 1;
  if (!(value >= edges[0]) || !(value <= edges[n])) return -1;
  let lo = 0;
  let hi = n;
  while (hi - lo > 1) {
    const mid = (lo + hi) >> 1;
    if (value < edges[mid]) hi = mid;
    else lo = mid;
  }
  return lo;
}

/** True when all cells are equally wide on this spacing (so one scaled image draws them). */
export function cellsAreUniform(edges: ArrayLike<number>, spacing: AxisSpacing, relativeTolerance = 1e-6): boolean {
  const n = edges.length - 1;
  const first = transform(spacing, edges[1]) - transform(spacing, edges[0]);
  for (let i = 1; i < n; i++) {
    const width = transform(spacing, edges[i + 1]) - transform(spacing, edges[i]);
    if (Math.abs(width - first) > relativeTolerance * Math.abs(first)) return false;
  }
  return true;
}

export interface PlotRect {
  left: number;
  top: number;
  width: number;
  height: number;
}

/** Geometry of one map's plot area: its rectangle, scales and cell edges. */
export interface MapGeometry {
  plot: PlotRect;
  x: AxisScale;
  y: AxisScale;
  xEdges: Float64Array;
  yEdges: Float64Array;
}

/** Build the map geometry: x grows to the right, y grows upwards; the domains are the outer cell edges. */
export function mapGeometry(
  plot: PlotRect,
  xAxis: { values: ArrayLike<number>; spacing: AxisSpacing },
  yAxis: { values: ArrayLike<number>; spacing: AxisSpacing },
): MapGeometry {
  const xEdges = cellEdges(xAxis.values, xAxis.spacing);
  const yEdges = cellEdges(yAxis.values, yAxis.spacing);
  return {
    plot,
    xEdges,
    yEdges,
    x: { spacing: xAxis.spacing, domain: [xEdges[0], xEdges[xEdges.length - 1]], range: [plot.left, plot.left + plot.width] },
    y: { spacing: yAxis.spacing, domain: [yEdges[0], yEdges[yEdges.length - 1]], range: [plot.top + plot.height, plot.top] },
  };
}

/** The cell under a pixel (CSS pixels in the map's coordinate frame), or null outside the plot. */
export function hitTestCell(geometry: MapGeometry, px: number, py: number): { index: number; column: number; row: number } | null {
  const { plot } = geometry;
  if (px < plot.left || px > plot.left + plot.width || py < plot.top || py > plot.top + plot.height) return null;
  const column = locateCell(geometry.xEdges, pixelToValue(geometry.x, px));
  const row = locateCell(geometry.yEdges, pixelToValue(geometry.y, py));
  if (column < 0 || row < 0) return null;
  const columns = geometry.xEdges.length - 1;
  return { index: row * columns + column, column, row };
}

/** The pixel rectangle of one cell (left/top/width/height, CSS pixels). */
export function cellRect(geometry: MapGeometry, column: number, row: number): PlotRect {
  const x0 = valueToPixel(geometry.x, geometry.xEdges[column]);
  const x1 = valueToPixel(geometry.x, geometry.xEdges[column + 1]);
  const yBottom = valueToPixel(geometry.y, geometry.yEdges[row]);
  const yTop = valueToPixel(geometry.y, geometry.yEdges[row + 1]);
  return { left: x0, top: yTop, width: x1 - x0, height: yBottom - yTop };
}
