import { describe, expect, it } from "vitest";
import type { Scenario } from "../../../lib/physics/types";
import { predictSweep } from "../../../lib/sweeps/chunks";
import { CALIBRATION, QUOTE_BAND, estimateContactDurationS, predictCellNs } from "../../../lib/sweeps/cost";
import { planChunks } from "../../../lib/sweeps/chunks";
import { expandSweep } from "../../../lib/sweeps/grid";
import { type SweepSpecInput } from "../../../lib/sweeps/spec";
import { ballPitBoxSpec, bumperWallSpec, clone, puckPairSpec, type Draft, parsedSpec } from "./fixtures";

function baseScenario(input: SweepSpecInput): Scenario {
  return parsedSpec({ ...clone(input), axes: [] }).scenario;
}

describe("cost model", () => {
  it("predicts contact durations from the closed forms", () => {
    const pair = baseScenario(puckPairSpec());
    const reducedMassKg = (0.17 * 0.4) / (0.17 + 0.4);
    // Luding 2008, Eur. J. Environ. Civ. Eng. 12, "Introduction to discrete element methods": t_c = π/ω, ω = √(k/m_eff).
    expect(estimateContactDurationS(pair, reducedMassKg, 0.02, 6)).toBeCloseTo(Math.PI / Math.sqrt(2e5 / reducedMassKg), 12);
    const wall = baseScenario(bumperWallSpec());
    // Johnson 1985, Contact Mechanics, §11.1: t_c ≈ 2.87·(m*²/(R*·E*²·v))^(1/5); E* = E/(2(1−ν²)) for one material.
    const effectiveModulusPa = 2e11 / (2 * (1 - 0.3 * 0.3));
    const johnson = 2.87 * Math.pow((0.08 * 0.08) / (0.0135 * effectiveModulusPa * effectiveModulusPa * 3), 0.2);
    expect(estimateContactDurationS(wall, 0.08, 0.0135, 3) / johnson).toBeCloseTo(1, 2);
  });

  it("prices a pair cell by its contact steps, not by duration / dt (the engine's free-flight jump)", () => {
    const pair = baseScenario(puckPairSpec());
    const longer = { ...pair, durationS: pair.durationS * 100 };
    expect(predictCellNs(longer)).toBe(predictCellNs(pair));
    const finerSteps = { ...pair, substeps: pair.substeps * 10 };
    // Contact of π/ω ≈ 2.42 ms (k = 2e5 N/m, m_eff = 0.119 kg): 3 substeps of 1/960 s, 24 of 1/9600 s, each +2 for entry and exit.
    const contactS = Math.PI / Math.sqrt(2e5 / ((0.17 * 0.4) / 0.57));
    const contactSteps = (substepS: number) => Math.ceil(contactS / substepS) + 2;
    expect(predictCellNs(finerSteps) - predictCellNs(pair)).toBeCloseTo((contactSteps(1 / 9600) - contactSteps(1 / 960)) * CALIBRATION.pairContactStepNs, 6);
  });

  it("prices a box cell per step and per body", () => {
    const box = baseScenario(ballPitBoxSpec());
    const steps = (scenario: Scenario) => Math.ceil((scenario.durationS * scenario.substeps) / scenario.dtS - 1e-9);
    const expected = (scenario: Scenario, bodies: number) => CALIBRATION.cellOverheadNs + steps(scenario) * (CALIBRATION.boxStepNs + bodies * CALIBRATION.boxBodyStepNs);
    expect(predictCellNs(box)).toBeCloseTo(expected(box, 20), 6);
    const doubled = { ...box, durationS: box.durationS * 2, scene: { ...box.scene, count: 40 } } as Scenario;
    expect(predictCellNs(doubled)).toBeCloseTo(expected(doubled, 40), 6);
  });

  it("sums a sweep as it will be billed: per chunk, its cells and fixed overhead, rounded up to whole ms", () => {
    const spec = parsedSpec(ballPitBoxSpec());
    const cells = expandSweep(spec);
    const chunks = planChunks(spec, { maxCellsPerChunk: 2 });
    expect(chunks.map((chunk) => chunk.cellCount)).toEqual([2, 1]);
    const chunkMs = (from: number, to: number) =>
      Math.ceil((CALIBRATION.chunkOverheadNs + cells.slice(from, to).reduce((sum, cell) => sum + predictCellNs(cell.scenario), 0)) / 1e6);
    expect(chunks.map((chunk) => chunk.predictedMs)).toEqual([chunkMs(0, 2), chunkMs(2, 3)]);
    const estimate = predictSweep(spec, { maxCellsPerChunk: 2 });
    expect(estimate).toMatchObject({ cells: 3, chunks: 2, computeMs: chunkMs(0, 2) + chunkMs(2, 3) });
    expect(estimate.bandMs).toEqual({ low: Math.floor(estimate.computeMs * QUOTE_BAND.low), high: Math.ceil(estimate.computeMs * QUOTE_BAND.high) });
    expect(QUOTE_BAND.low).toBeLessThan(1);
    expect(QUOTE_BAND.high).toBeGreaterThan(1);
  });

  it("charges the Hertz restitution solve once per distinct target restitution in a chunk", () => {
    const input = clone(bumperWallSpec()) as Draft;
    input.scenario.contact.damping = { kind: "restitution", value: 0.7 };
    input.axes = [
      { parameter: "contact.damping.restitution", values: [0.5, 0.6, 0.7] },
      { parameter: "scene.angleDeg", values: [0, 30] },
    ];
    const spec = parsedSpec(input);
    const cellsNs = expandSweep(spec).reduce((sum, cell) => sum + predictCellNs(cell.scenario), 0);
    const [chunk] = planChunks(spec, { targetChunkMs: 1e6 });
    expect(chunk.predictedMs).toBe(Math.ceil((CALIBRATION.chunkOverheadNs + cellsNs + 3 * CALIBRATION.hertzRestitutionSolveNs) / 1e6));
  });
});
