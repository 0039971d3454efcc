import { describe, expect, it } from "vitest";
import { contourOverlay, contourSegments, valueAtFractionalIndex, verdictBoundaryOverlay } from "@/lib/charts/contours";
import type { Verdict } from "@/lib/physics/types";

describe("marching squares", () => {
  it("reproduces the level line of a linear field exactly", () => {
    // Hand derivation: linear interpolation along square edges is exact for f = c + 2r, so every
    // contour point satisfies c + 2r = level, and the pieces join up along the line.
    const columns = 6;
    const rows = 5;
    const values = Array.from({ length: columns * rows }, (_, i) => (i % columns) + 2 * Math.floor(i / columns));
    const segments = contourSegments(values, columns, rows, 4.3);
    expect(segments.length).toBeGreaterThan(3);
    for (const [c0, r0, c1, r1] of segments) {
      expect(c0 + 2 * r0).toBeCloseTo(4.3, 12);
      expect(c1 + 2 * r1).toBeCloseTo(4.3, 12);
      for (const c of [c0, c1]) {
        expect(c).toBeGreaterThanOrEqual(0);
        expect(c).toBeLessThanOrEqual(columns - 1);
      }
      for (const r of [r0, r1]) {
        expect(r).toBeGreaterThanOrEqual(0);
        expect(r).toBeLessThanOrEqual(rows - 1);
      }
    }
  });

  it("skips squares with cells not computed or without a value", () => {
    const values = [0, 1, 0, Number.NaN, 1, 0, 0, null, 1];
    // Hand check of the four squares: only columns 1–2 × rows 0–1 (corners 1, 0, 0, 1) has no NaN or
    // null corner; its crossing runs up the middle at column 1.5.
    expect(contourSegments(values, 3, 3, 0.5)).toEqual([[1.5, 0, 1.5, 1]]);
    expect(contourSegments([0, 1, 0, 1], 2, 2, 0.5)).toEqual([[0.5, 0, 0.5, 1]]);
  });

  it("resolves a saddle by the centre value", () => {
    // Hand derivation: corners 00 = 1, 10 = 0, 11 = 1, 01 = 0 at level 0.5; centre mean 0.5 is not
    // above the level, so the above-corners stay apart: two segments cutting off 00 and 11.
    const segments = contourSegments([1, 0, 0, 1], 2, 2, 0.5);
    expect(segments).toHaveLength(2);
    expect(segments).toContainEqual([0, 0.5, 0.5, 0]);
    expect(segments).toContainEqual([1, 0.5, 0.5, 1]);
  });

  it("refuses a grid of the wrong size", () => {
    expect(() => contourSegments([1, 2, 3], 2, 2, 0)).toThrow(/needs 4/);
  });
});

describe("contours in axis units", () => {
  it("interpolates geometrically between log-spaced centres", () => {
    // Hand derivation: half way between 1e3 and 1e4 on a log axis is √(1e3·1e4) ≈ 3162.28.
    expect(valueAtFractionalIndex([1e3, 1e4, 1e5], "log", 0.5)).toBeCloseTo(Math.sqrt(1e7), 9);
    expect(valueAtFractionalIndex([0, 10, 30], "linear", 1.25)).toBeCloseTo(15, 12);
  });

  it("draws the edge of the stable region between the cells on either side", () => {
    const x = { values: [1e3, 1e4, 1e5], spacing: "log" as const };
    const y = { values: [1e-3, 2e-3], spacing: "linear" as const };
    const verdicts: Verdict[] = ["stable", "exploded", "exploded", "stable", "energy-drift", "exploded"];
    const boundary = verdictBoundaryOverlay("measured limit", verdicts, "stable", x, y);
    // One segment at column 0.5 → x = √(1e3·1e4) (hand derivation), from row 0 to row 1.
    const finite = boundary.points.filter((p) => Number.isFinite(p.x));
    expect(finite).toHaveLength(2);
    for (const p of finite) expect(p.x).toBeCloseTo(Math.sqrt(1e7), 6);
    expect(finite.map((p) => p.y).sort()).toEqual([1e-3, 2e-3]);
  });

  it("separates pieces with a break", () => {
    const overlay = contourOverlay("e", [1, 0, 0, 1], { values: [1, 2], spacing: "linear" }, { values: [1, 2], spacing: "linear" }, 0.5);
    // Two segments → 2 + 1 (break) + 2 points.
    expect(overlay.points).toHaveLength(5);
    expect(overlay.points[2].x).toBeNaN();
  });
});
