/**
 * Contour lines of a metric over the map's cells (marching squares on the grid of cell centres,
 * linear interpolation along square edges), e.g. where the energy error crosses 1 %, or the
 * boundary of the region a verdict holds. Returned as overlays in axis units, so they draw like
 * the analytic curves; separate pieces are separated by a NaN point (which breaks the line).
 */
import type { Verdict } from "../physics/types";
import type { Overlay, OverlayStroke } from "./overlays";
import type { AxisSpacing } from "./scales";

/**
 * Segments where the field crosses `level`, as [column0, row0, column1, row1] in fractional grid
 * coordinates (column 1.5 is half way between the centres of columns 1 and 2). Squares with a
 * corner that is NaN or null (not computed, no value) are skipped. Saddles are resolved by the
 * mean of the four corners.
 */
export function contourSegments(values: ArrayLike<number | null>, columns: number, rows: number, level: number): number[][] {
  if (values.length !== columns * rows) throw new Error(`values has ${values.length} cells for a ${columns} × ${rows} grid (needs ${columns * rows})`);
  if (!Number.isFinite(level)) throw new Error(`contour level must be finite, got ${level}`);
  const segments: number[][] = [];
  const at = (c: number, r: number) => values[r * columns + c];
  for (let r = 0; r < rows - 1; r++) {
    for (let c = 0; c < columns - 1; c++) {
      const v00 = at(c, r);
      const v10 = at(c + 1, r);
      const v11 = at(c + 1, r + 1);
      const v01 = at(c, r + 1);
      if (v00 === null || v10 === null || v11 === null || v01 === null) continue;
      if (!Number.isFinite(v00) || !Number.isFinite(v10) || !Number.isFinite(v11) || !Number.isFinite(v01)) continue;
      const index = (v00 > level ? 1 : 0) | (v10 > level ? 2 : 0) | (v11 > level ? 4 : 0) | (v01 > level ? 8 : 0);
      if (index === 0 || index === 15) continue;
      const f = (a: number, b: number) => (level - a) / (b - a);
      // Crossing points on the four edges of the square.
      const bottom = (): [number, number] => [c + f(v00, v10), r];
      const right = (): [number, number] => [c + 1, r + f(v10, v11)];
      const top = (): [number, number] => [c + f(v01, v11), r + 1];
      const left = (): [number, number] => [c, r + f(v00, v01)];
      const push = (a: [number, number], b: [number, number]) => segments.push([a[0], a[1], b[0], b[1]]);
      const centreAbove = (v00 + v10 + v11 + v01) / 4 > level;
      switch (index) {
        case 1:
        case 14:
          push(left(), bottom());
          break;
        case 2:
        case 13:
          push(bottom(), right());
          break;
        case 3:
        case 12:
          push(left(), right());
          break;
        case 4:
        case 11:
          push(right(), top());
          break;
        case 6:
        case 9:
          push(bottom(), top());
          break;
        case 7:
        case 8:
          push(left(), top());
          break;
        case 5:
          // Corners 00 and 11 above: joined through the middle when the centre is above too.
          if (centreAbove) {
            push(left(), top());
            push(bottom(), right());
          } else {
            push(left(), bottom());
            push(right(), top());
          }
          break;
        case 10:
          if (centreAbove) {
            push(left(), bottom());
            push(right(), top());
          } else {
            push(left(), top());
            push(bottom(), right());
          }
          break;
      }
    }
  }
  return segments;
}

/** Axis value at a fractional index between cell centres (geometric interpolation on a log axis). */
export function valueAtFractionalIndex(values: ArrayLike<number>, spacing: AxisSpacing, index: number): number {
  const n = values.length;
  const i0 = Math.max(0, Math.min(n - 2, Math.floor(index)));
  if (n === 1) return values[0];
  const f = index - i0;
  const a = values[i0];
  const b = values[i0 + 1];
  return spacing === "log" ? a * (b / a) ** f : a + (b - a) * f;
}

interface GridAxis {
  values: ArrayLike<number>;
  spacing: AxisSpacing;
}

/** A contour of a metric at `level`, as an overlay in axis units. */
export function contourOverlay(
  label: string,
  values: ArrayLike<number | null>,
  x: GridAxis,
  y: GridAxis,
  level: number,
  stroke: OverlayStroke = "solid",
): Overlay {
  const segments = contourSegments(values, x.values.length, y.values.length, level);
  const points: { x: number; y: number }[] = [];
  for (const [c0, r0, c1, r1] of segments) {
    if (points.length > 0) points.push({ x: Number.NaN, y: Number.NaN });
    points.push({ x: valueAtFractionalIndex(x.values, x.spacing, c0), y: valueAtFractionalIndex(y.values, y.spacing, r0) });
    points.push({ x: valueAtFractionalIndex(x.values, x.spacing, c1), y: valueAtFractionalIndex(y.values, y.spacing, r1) });
  }
  return { label, points, stroke };
}

/**
 * The edge of the region where `verdict` holds (e.g. the measured limit of "stable"), drawn
 * between the cell centres on either side. Cells not computed yet leave gaps.
 */
export function verdictBoundaryOverlay(
  label: string,
  verdicts: readonly (Verdict | null | undefined)[],
  verdict: Verdict,
  x: GridAxis,
  y: GridAxis,
  stroke: OverlayStroke = "solid",
): Overlay {
  const indicator = verdicts.map((v) => (v ? (v === verdict ? 1 : 0) : Number.NaN));
  return contourOverlay(label, indicator, x, y, 0.5, stroke);
}
