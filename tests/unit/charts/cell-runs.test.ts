/**
 * The glyph placement shared by the canvas map and its SVG export (components/maps/cell-runs.ts):
 * runs of equal cells merged per row, every cell of a code covered exactly once, glyph centres at
 * the cells' centres. Figures are the plot arithmetic of evenly spaced linear axes.
 */
import { describe, expect, it } from "vitest";
import { cellRuns, forEachGlyphCell, GLYPH_HALF_SIZE, glyphCellSize } from "@/components/maps/cell-runs";
import { mapGeometry } from "@/lib/charts/scales";

// 4 columns × 2 rows on a 400 × 200 px plot: every cell 100 × 100 px; row 0 (the smallest y) at the bottom.
const geometry = mapGeometry({ left: 10, top: 20, width: 400, height: 200 }, { values: [1, 2, 3, 4], spacing: "linear" }, { values: [1, 2], spacing: "linear" });
const model = { columns: 4, rows: 2, codes: Int16Array.from([0, 0, 1, 0, 2, 2, 2, 2]) };

describe("cell runs", () => {
  it("merges neighbouring cells of one code in a row and covers each matching cell once", () => {
    expect(cellRuns(model, geometry, (c) => c === 0)).toEqual([
      { code: 0, x: 10, y: 120, w: 200, h: 100 },
      { code: 0, x: 310, y: 120, w: 100, h: 100 },
    ]);
    expect(cellRuns(model, geometry, (c) => c === 2)).toEqual([{ code: 2, x: 10, y: 20, w: 400, h: 100 }]);
    // Every code at once: runs split where the code changes, and their areas add up to the plot.
    const all = cellRuns(model, geometry, () => true);
    expect(all.map((r) => r.code)).toEqual([0, 1, 0, 2]);
    expect(all.reduce((area, r) => area + r.w * r.h, 0)).toBe(400 * 200);
  });

  it("puts one glyph at the centre of each cell of a code, sized by the smaller side", () => {
    const glyphs: [number, number, number][] = [];
    forEachGlyphCell(model, geometry, 0, (cx, cy, half) => glyphs.push([cx, cy, half]));
    expect(glyphs).toEqual([
      [60, 170, 100 * GLYPH_HALF_SIZE],
      [160, 170, 100 * GLYPH_HALF_SIZE],
      [360, 170, 100 * GLYPH_HALF_SIZE],
    ]);
    expect(glyphCellSize(model, geometry)).toBe(100);
  });
});
