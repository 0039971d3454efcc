import { describe, expect, it } from "vitest";
import { pickSampleIndices } from "@/lib/charts/decimate";
import { fitView, includeWalls, interpolateAt, sampleAt, trajectoryBounds, wallSegmentOnCanvas, worldToCanvas } from "@/lib/charts/replay";

describe("thinning time series", () => {
  it("keeps a one-sample spike, the ends, order and the point budget", () => {
    const n = 10_000;
    const energy = Array.from({ length: n }, (_, i) => Math.sin(i / 500));
    energy[6_543] = 1e6; // a blow-up in one sample
    const overlap = Array.from({ length: n }, () => 0);
    overlap[123] = 0.02;
    const kept = pickSampleIndices(n, [energy, overlap], 400);
    expect(kept.length).toBeLessThanOrEqual(400);
    expect(kept[0]).toBe(0);
    expect(kept[kept.length - 1]).toBe(n - 1);
    expect(kept).toContain(6_543);
    expect(kept).toContain(123);
    for (let i = 1; i < kept.length; i++) expect(kept[i]).toBeGreaterThan(kept[i - 1]);
  });

  it("keeps everything when it fits", () => {
    expect(pickSampleIndices(5, [[1, 2, 3, 4, 5]], 10)).toEqual([0, 1, 2, 3, 4]);
    expect(() => pickSampleIndices(5, [], 1)).toThrow(/maxPoints/);
  });
});

describe("replay geometry", () => {
  const tS = [0, 0.1, 0.2, 0.4];

  it("interpolates between samples", () => {
    // Hand derivation: t = 0.3 is half way between samples 2 (0.2 s) and 3 (0.4 s).
    const at = sampleAt(tS, 0.3);
    expect(at.index).toBe(2);
    expect(at.fraction).toBeCloseTo(0.5, 12);
    expect(interpolateAt([0, 1, 2, 6], at)).toBeCloseTo(4, 12);
    expect(sampleAt(tS, -1)).toEqual({ index: 0, fraction: 0 });
    expect(sampleAt(tS, 9)).toEqual({ index: 3, fraction: 0 });
  });

  it("frames every disc, ignoring positions that blew up", () => {
    const bounds = trajectoryBounds(
      [
        { xM: [0, 1, Number.POSITIVE_INFINITY], yM: [0, 0, 0] },
        { xM: [3, 3, 3], yM: [-1, 0, 1] },
      ],
      [0.5, 0.25],
    );
    // Hand derivation: x from 0 − 0.5 to 3 + 0.25; y from −1 − 0.25 to 1 + 0.25.
    expect(bounds).toEqual({ minX: -0.5, maxX: 3.25, minY: -1.25, maxY: 1.25 });
    expect(trajectoryBounds([{ xM: [Number.NaN], yM: [0] }], [1])).toBeNull();
  });

  it("fits the bounds inside the padding with one scale, y up", () => {
    const bounds = { minX: 0, maxX: 4, minY: 0, maxY: 1 };
    const view = fitView(bounds, 420, 300, 10);
    // Hand derivation: 400 px / 4 m = 100 px/m limits the width (280 px / 1 m would allow more).
    expect(view.scalePxPerM).toBeCloseTo(100, 12);
    expect(worldToCanvas(view, 0, 0)).toEqual([10, 200]);
    expect(worldToCanvas(view, 4, 1)).toEqual([410, 100]);
  });

  it("draws a wall across the canvas and pulls nearby walls into view", () => {
    const view = fitView({ minX: 0, maxX: 2, minY: -1, maxY: 1 }, 200, 200, 0);
    // The wall x = 0 (normal +x) is the canvas column at px = 0·scale + offset.
    const segment = wallSegmentOnCanvas({ normalX: 1, normalY: 0, offsetM: 0 }, view, 200, 200);
    expect(segment).not.toBeNull();
    const [x0, y0, x1, y1] = segment!;
    expect(x0).toBeCloseTo(0, 9);
    expect(x1).toBeCloseTo(0, 9);
    expect(Math.abs(y1 - y0)).toBeCloseTo(200, 9);
    const grown = includeWalls({ minX: 1, maxX: 2, minY: 0, maxY: 1 }, [{ normalX: 1, normalY: 0, offsetM: 0 }], 10);
    expect(grown.minX).toBe(0);
  });
});
