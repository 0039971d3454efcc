/**
 * Where a map's glyphs go, shared by the canvas (render.ts) and the SVG export (svg-export.ts) so
 * the two draw the same shapes: the size below which cells get a glyph pattern instead of one glyph
 * each, the runs of equal cells in a row (merged into one rectangle), and each cell's glyph centre
 * and half-size.
 */
import { cellRect, type MapGeometry } from "@/lib/charts/scales";
import type { MapModel } from "./map-model";

/** Cells smaller than this (CSS px) are filled with a pattern of their glyph rather than one glyph each. */
export const GLYPH_MIN_CELL_PX = 11;
/** A cell's glyph reaches this fraction of the cell's smaller side from its centre. */
export const GLYPH_HALF_SIZE = 0.32;

type Cells = Pick<MapModel, "rows" | "columns" | "codes">;

/** The side (CSS px) of the map's smallest cell, which decides between glyphs and glyph patterns. */
export function glyphCellSize(model: Cells, geometry: MapGeometry): number {
  const sample = cellRect(geometry, 0, 0);
  return Math.min(geometry.plot.width / model.columns, geometry.plot.height / model.rows, Math.abs(sample.width), Math.abs(sample.height));
}

export interface CellRun {
  code: number;
  x: number;
  y: number;
  w: number;
  h: number;
}

/** Rectangles covering the cells whose code matches, a row's neighbouring cells of one code merged. */
export function cellRuns(model: Cells, geometry: MapGeometry, matches: (code: number) => boolean): CellRun[] {
  const runs: CellRun[] = [];
  for (let row = 0; row < model.rows; row++) {
    let column = 0;
    while (column < model.columns) {
      const code = model.codes[row * model.columns + column];
      if (!matches(code)) {
        column++;
        continue;
      }
      const start = column;
      while (column < model.columns && model.codes[row * model.columns + column] === code) column++;
      const first = cellRect(geometry, start, row);
      const last = cellRect(geometry, column - 1, row);
      runs.push({ code, x: first.left, y: first.top, w: last.left + last.width - first.left, h: first.height });
    }
  }
  return runs;
}

/** Calls visit with the glyph centre and half-size of every cell of one code, row by row. */
export function forEachGlyphCell(model: Cells, geometry: MapGeometry, code: number, visit: (cx: number, cy: number, halfSize: number) => void): void {
  for (let row = 0; row < model.rows; row++) {
    for (let column = 0; column < model.columns; column++) {
      if (model.codes[row * model.columns + column] !== code) continue;
      const r = cellRect(geometry, column, row);
      visit(r.left + r.width / 2, r.top + r.height / 2, Math.min(Math.abs(r.width), Math.abs(r.height)) * GLYPH_HALF_SIZE);
    }
  }
}
