/** Sweep specs over a snapshot scene: the same schema, limits, grid, cost model and chunk runner as every scene. */
import { readFileSync } from "node:fs";
import path from "node:path";
import { describe, expect, it } from "vitest";
import { simulate } from "../../../lib/physics/index";
import { runChunkTask, unpackResults } from "../../../lib/sweeps/chunk-task";
import { predictCellNs, CALIBRATION } from "../../../lib/sweeps/cost";
import { expandSweep } from "../../../lib/sweeps/grid";
import { pickMetrics } from "../../../lib/sweeps/results";
import { SPEC_LIMITS, parametersForScene, parseSweepSpec, stepsPerCell, type SweepSpecInput } from "../../../lib/sweeps/spec";
import { parseSnapshotFile, snapshotScene } from "../../../lib/snapshots/format";

const exampleFile = readFileSync(path.join(process.cwd(), "examples", "snapshots", "crateslide-loading-bay.json"));

function loadingBay() {
  const parsed = parseSnapshotFile(exampleFile);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.problems));
  return snapshotScene(parsed.snapshot);
}

function spec(scene: unknown, overrides: Partial<SweepSpecInput["scenario"]> = {}, axes: SweepSpecInput["axes"] = []): unknown {
  return {
    scenario: { scene, contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.5 } }, integrator: "velocity-verlet", dtS: 1e-3, substeps: 1, durationS: 0.2, ...overrides },
    axes,
  };
}

describe("snapshot scene in the sweep spec", () => {
  it("parses the example loading bay with defaults filled in, and the parsed spec parses again unchanged", () => {
    const parsed = parseSweepSpec(spec({ kind: "snapshot", bodies: loadingBay().bodies }));
    expect(parsed.ok ? [] : parsed.issues).toEqual([]);
    if (!parsed.ok) return;
    expect(parsed.spec.scenario.scene).toMatchObject({ kind: "snapshot", walls: [], gravityMPerS2: 0, speedScale: 1 });
    const again = parseSweepSpec(parsed.spec);
    expect(again.ok && again.spec).toEqual(parsed.spec);
  });

  it("names every bad field of every body and wall with its path, and initial overlaps by body", () => {
    const bad = parseSweepSpec(spec({ kind: "snapshot", bodies: [{ xM: 0, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 0, radiusM: 0.1 }, { xM: 1, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 1 }], walls: [{ normalX: 0, normalY: 0, offsetM: 0 }] }));
    expect(bad.ok).toBe(false);
    if (bad.ok) return;
    expect(bad.issues.map((issue) => issue.field)).toEqual(["scenario.scene.bodies.0.massKg", "scenario.scene.bodies.1.radiusM", "scenario.scene.walls.0.normalX"]);
    const overlapping = parseSweepSpec(spec({ kind: "snapshot", bodies: [{ xM: 0, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 1, radiusM: 0.1 }, { xM: 0.15, yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 1, radiusM: 0.1 }] }));
    expect(overlapping.ok ? [] : overlapping.issues).toEqual([{ field: "scenario.scene.bodies.0", message: expect.stringMatching(/^discs 1 and 2 start overlapping by 50% of the smaller radius/) }]);
  });

  it("states the body limit and the body × steps limit with the numbers", () => {
    const body = (i: number) => ({ xM: (i % 200) * 0.3, yM: Math.floor(i / 200) * 0.3, vxMPerS: 0, vyMPerS: 0, massKg: 1, radiusM: 0.1 });
    const tooMany = parseSweepSpec(spec({ kind: "snapshot", bodies: Array.from({ length: SPEC_LIMITS.maxBodies + 1 }, (_, i) => body(i)) }));
    expect(tooMany.ok ? [] : tooMany.issues).toEqual([{ field: "scenario.scene.bodies", message: "10,001 bodies exceed the limit of 10,000 bodies per scene" }]);
    // 10,000 bodies × 100,000 steps = 1e9 > 5e8 (SPEC_LIMITS.maxBodyStepsPerCell).
    const tooLong = parseSweepSpec(spec({ kind: "snapshot", bodies: Array.from({ length: 10_000 }, (_, i) => body(i)) }, { dtS: 1e-4, durationS: 10 }));
    expect(tooLong.ok ? [] : tooLong.issues).toEqual([{ field: "scenario.scene.bodies", message: "bodies × steps per cell (10,000 × 100,000) exceed the limit of 5e8" }]);
  });

  it("sweeps the contact, integrator, step and the snapshot's speed scale and gravity, not the built-in scenes' fields", () => {
    const paths = parametersForScene("snapshot").map((parameter) => parameter.path);
    expect(paths).toEqual(expect.arrayContaining(["dtS", "substeps", "contact.stiffness", "contact.damping.restitution", "integrator", "contact.model", "scene.speedScale", "scene.gravityMPerS2"]));
    expect(paths).not.toContain("scene.count");
    const wrong = parseSweepSpec(spec(loadingBay(), {}, [{ parameter: "scene.radiusM", values: [0.1, 0.2] }]));
    expect(wrong.ok).toBe(false);
  });

  it("expands a speed-scale × stiffness grid whose cells run through a chunk exactly as the engine runs them", () => {
    const parsed = parseSweepSpec(spec(loadingBay(), { durationS: 0.05 }, [
      { parameter: "scene.speedScale", values: [0.5, 2] },
      { parameter: "contact.stiffness", spacing: "log", from: 1e4, to: 1e6, count: 2 },
    ]));
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
    const cells = expandSweep(parsed.spec);
    expect(cells.map((cell) => cell.axisValues)).toEqual([[0.5, 1e4], [0.5, 1e6], [2, 1e4], [2, 1e6]]);
    const scene = cells[2].scenario.scene;
    expect(scene.kind === "snapshot" && scene.speedScale).toBe(2);
    const outcome = runChunkTask({ kind: "range", chunkIndex: 0, spec: parsed.spec, firstCell: 0, cellCount: cells.length });
    const results = unpackResults(outcome, (index) => cells[index].axisValues);
    // Determinism: the chunk's results are the engine's own, cell by cell.
    expect(results.map((result) => [result.verdict, result.metrics])).toEqual(cells.map((cell) => { const run = simulate(cell.scenario); return [run.verdict, pickMetrics(run.metrics)]; }));
    // Priced per body and step like the box scene (lib/sweeps/cost.ts calibration constants).
    expect(predictCellNs(cells[0].scenario)).toBe(CALIBRATION.cellOverheadNs + stepsPerCell(cells[0].scenario) * (CALIBRATION.boxStepNs + 41 * CALIBRATION.boxBodyStepNs));
  });
});

describe("result cache identity of snapshot cells", () => {
  it("equal scenes hash equal (also from a fresh copy), any changed disc or field changes the hash", async () => {
    const { scenarioHash } = await import("../../../lib/sweeps/hash");
    const parsed = parseSweepSpec(spec(loadingBay()));
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
    const scenario = parsed.spec.scenario;
    const copy = structuredClone(scenario);
    expect(scenarioHash(copy)).toBe(scenarioHash(scenario));
    const moved = structuredClone(scenario);
    if (moved.scene.kind === "snapshot") moved.scene.bodies[40].xM += 1e-9;
    expect(scenarioHash(moved)).not.toBe(scenarioHash(scenario));
    const faster = structuredClone(scenario);
    if (faster.scene.kind === "snapshot") faster.scene.speedScale = 2;
    expect(scenarioHash(faster)).not.toBe(scenarioHash(scenario));
  });
});
