import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { planChunks } from "../../../lib/sweeps/chunks";
import { CALIBRATION, predictCellNs } from "../../../lib/sweeps/cost";
import { expandSweep } from "../../../lib/sweeps/grid";
import { ballPitBoxSpec, clone, puckPairSpec, type Draft, parsedSpec } from "./fixtures";

function coverage(chunks: { firstCell: number; cellCount: number }[]): number[] {
  const covered: number[] = [];
  for (const chunk of chunks) for (let i = 0; i < chunk.cellCount; i++) covered.push(chunk.firstCell + i);
  return covered;
}

describe("chunking", () => {
  it("covers every cell exactly once, in contiguous ranges numbered 0, 1, …", () => {
    const input = clone(puckPairSpec()) as Draft;
    input.axes.push({ parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.9, count: 10 });
    const spec = parsedSpec(input);
    fc.assert(
      fc.property(fc.double({ min: 0.001, max: 50, noNaN: true }), fc.integer({ min: 1, max: 40 }), (targetChunkMs, maxCellsPerChunk) => {
        const chunks = planChunks(spec, { targetChunkMs, maxCellsPerChunk });
        expect(coverage(chunks)).toEqual([...Array(150).keys()]);
        expect(chunks.map((chunk) => chunk.index)).toEqual([...chunks.keys()]);
        for (const chunk of chunks) {
          expect(chunk.cellCount).toBeGreaterThanOrEqual(1);
          expect(chunk.cellCount).toBeLessThanOrEqual(maxCellsPerChunk);
          expect(Number.isInteger(chunk.predictedMs)).toBe(true);
        }
      }),
      { seed: 42, numRuns: 60 },
    );
  });

  it("is the same plan on every call", () => {
    const spec = parsedSpec(puckPairSpec());
    expect(planChunks(spec, { targetChunkMs: 0.01 })).toEqual(planChunks(spec, { targetChunkMs: 0.01 }));
  });

  it("closes a chunk once its predicted compute reaches the target", () => {
    const input = clone(ballPitBoxSpec()) as Draft;
    input.axes = [{ parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e5, count: 12 }];
    const spec = parsedSpec(input);
    const cellNs = predictCellNs(expandSweep(spec)[0].scenario, CALIBRATION);
    // Every cell has the same predicted cost (stiffness does not change a box step's cost).
    // A chunk starts at its fixed overhead; 3.5 cells above it: the 4th cell reaches the target.
    const targetChunkMs = (CALIBRATION.chunkOverheadNs + cellNs * 3.5) / 1e6;
    const chunks = planChunks(spec, { targetChunkMs });
    expect(chunks.map((chunk) => chunk.cellCount)).toEqual([4, 4, 4]);
  });

  it("refuses a non-positive target or cell bound", () => {
    const spec = parsedSpec(puckPairSpec());
    expect(() => planChunks(spec, { targetChunkMs: 0 })).toThrow(/targetChunkMs/);
    expect(() => planChunks(spec, { maxCellsPerChunk: 0 })).toThrow(/maxCellsPerChunk/);
  });
});
