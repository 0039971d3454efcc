import { describe, expect, it } from "vitest";
import fc from "fast-check";
import {
  axisValuesProblem,
  cellEdges,
  cellRect,
  cellsAreUniform,
  hitTestCell,
  locateCell,
  mapGeometry,
  pixelToValue,
  valueToPixel,
  type AxisScale,
} from "@/lib/charts/scales";

const stiffnessValues = [1e2, 1e3, 1e4, 1e5, 1e6, 1e7];

describe("log scale mapping", () => {
  const scale: AxisScale = { spacing: "log", domain: [1e-4, 1e-1], range: [40, 340] };

  it("puts each decade the same distance apart", () => {
    // Hand derivation: 3 decades over 300 px → 100 px per decade.
    expect(valueToPixel(scale, 1e-4)).toBeCloseTo(40, 9);
    expect(valueToPixel(scale, 1e-3)).toBeCloseTo(140, 9);
    expect(valueToPixel(scale, 1e-2)).toBeCloseTo(240, 9);
    expect(valueToPixel(scale, Math.sqrt(1e-3 * 1e-2))).toBeCloseTo(190, 9);
  });

  it("round-trips value → pixel → value", () => {
    // Identity of log10 and 10^x (exact up to floating-point rounding, relative 1e-12).
    fc.assert(
      fc.property(fc.double({ min: -4, max: -1, noNaN: true }), (exponent) => {
        const value = 10 ** exponent;
        const back = pixelToValue(scale, valueToPixel(scale, value));
        expect(Math.abs(back - value) / value).toBeLessThan(1e-12);
      }),
    );
  });

  it("has no pixel for values ≤ 0", () => {
    expect(valueToPixel(scale, 0)).toBeNaN();
    expect(valueToPixel(scale, -1)).toBeNaN();
  });

  it("round-trips on a downward (y) linear range too", () => {
    const y: AxisScale = { spacing: "linear", domain: [-2, 6], range: [210, 10] };
    // Hand derivation: 8 units over −200 px → value 2 is 100 px above 210.
    expect(valueToPixel(y, 2)).toBeCloseTo(110, 12);
    expect(pixelToValue(y, 110)).toBeCloseTo(2, 12);
  });
});

describe("cell edges", () => {
  it("uses geometric midpoints on a log axis", () => {
    // Hand derivation: midpoints of 1, 10, 100 in log10 are 10^0.5 and 10^1.5; outer edges half a decade out.
    const edges = Array.from(cellEdges([1, 10, 100], "log"));
    const expected = [10 ** -0.5, 10 ** 0.5, 10 ** 1.5, 10 ** 2.5];
    edges.forEach((e, i) => expect(e / expected[i]).toBeCloseTo(1, 12));
    expect(cellsAreUniform(edges, "log")).toBe(true);
  });

  it("uses arithmetic midpoints on a linear axis and detects uneven cells", () => {
    // Hand derivation: values 0, 1, 3 → midpoints 0.5, 2; outer edges −0.5 and 4.
    const edges = Array.from(cellEdges([0, 1, 3], "linear"));
    expect(edges).toEqual([-0.5, 0.5, 2, 4]);
    expect(cellsAreUniform(edges, "linear")).toBe(false);
  });

  it("gives a single value a cell of its own", () => {
    // Hand derivation: one log value spans ±½ decade; one linear value ±½|v|.
    const log = cellEdges([100], "log");
    expect(log[0]).toBeCloseTo(100 / Math.sqrt(10), 9);
    expect(log[1]).toBeCloseTo(100 * Math.sqrt(10), 9);
    expect(Array.from(cellEdges([4], "linear"))).toEqual([2, 6]);
  });

  it("names the problem with bad axis values", () => {
    expect(axisValuesProblem([], "linear")).toMatch(/at least one/);
    expect(axisValuesProblem([1, 0.5], "linear")).toMatch(/increase strictly/);
    expect(axisValuesProblem([0, 1], "log")).toMatch(/above 0/);
    expect(axisValuesProblem([1, Number.NaN], "linear")).toMatch(/value 2 is not a finite number/);
    expect(() => cellEdges([0, 1], "log")).toThrow(/above 0/);
  });

  it("locates values in their cell; the top edge belongs to the last cell", () => {
    const edges = [0, 1, 2, 3];
    expect(locateCell(edges, 0)).toBe(0);
    expect(locateCell(edges, 1.5)).toBe(1);
    expect(locateCell(edges, 3)).toBe(2);
    expect(locateCell(edges, -0.1)).toBe(-1);
    expect(locateCell(edges, Number.NaN)).toBe(-1);
  });
});

describe("hit-testing pixels to cells", () => {
  const plot = { left: 50, top: 10, width: 300, height: 200 };
  const geometry = mapGeometry(plot, { values: stiffnessValues, spacing: "log" }, { values: [0, 1, 2, 3], spacing: "linear" });

  it("finds the cell on a log x axis and an upward linear y axis", () => {
    // Hand derivation: 6 decade cells over 300 px → 50 px each; 4 rows over 200 px → 50 px each, row 0 at the bottom.
    expect(hitTestCell(geometry, 50 + 125, 10 + 190)).toEqual({ index: 2, column: 2, row: 0 });
    expect(hitTestCell(geometry, 50 + 299, 10 + 1)).toEqual({ index: 3 * 6 + 5, column: 5, row: 3 });
    expect(hitTestCell(geometry, 50 + 10, 10 + 120)).toEqual({ index: 1 * 6 + 0, column: 0, row: 1 });
  });

  it("returns null outside the plot", () => {
    expect(hitTestCell(geometry, 49, 100)).toBeNull();
    expect(hitTestCell(geometry, 100, 211)).toBeNull();
  });

  it("maps every cell's centre back to that cell", () => {
    // Consistency of cellRect and hitTestCell over every cell, including uneven linear cells.
    const uneven = mapGeometry(plot, { values: [0.001, 0.002, 0.005, 0.02], spacing: "linear" }, { values: [1, 3, 10, 30, 100], spacing: "log" });
    for (const g of [geometry, uneven]) {
      const columns = g.xEdges.length - 1;
      const rows = g.yEdges.length - 1;
      for (let row = 0; row < rows; row++) {
        for (let column = 0; column < columns; column++) {
          const r = cellRect(g, column, row);
          expect(r.width).toBeGreaterThan(0);
          expect(r.height).toBeGreaterThan(0);
          expect(hitTestCell(g, r.left + r.width / 2, r.top + r.height / 2)?.index).toBe(row * columns + column);
        }
      }
    }
  });
});
