import { describe, expect, it } from "vitest";
import { simulate } from "../../../lib/physics/index";
import type { Scenario } from "../../../lib/physics/types";
import { runChunkTask, unpackResults } from "../../../lib/sweeps/chunk-task";
import { pickMetrics } from "../../../lib/sweeps/results";
import { parseSweepSpec } from "../../../lib/sweeps/spec";
import { bumperWallSpec, clone, puckPairSpec, type Draft } from "./fixtures";

function scenarioOf(input: Draft): Scenario {
  const parsed = parseSweepSpec({ ...input, axes: [] });
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return parsed.spec.scenario;
}

describe("packed chunk results", () => {
  it("unpack to exactly what the engine returned: nulls, NaN, booleans and numbers", () => {
    const noContact = clone(bumperWallSpec()) as Draft;
    noContact.scenario.scene.gapM = 100; // never reaches the wall within the run: null restitution and contact time
    const blowUp = clone(puckPairSpec()) as Draft;
    Object.assign(blowUp.scenario, { integrator: "explicit-euler", dtS: 0.01, substeps: 1 });
    blowUp.scenario.contact.stiffness = 1e9;
    const scenarios = [scenarioOf(puckPairSpec()), scenarioOf(noContact), scenarioOf(blowUp)];
    const outcome = runChunkTask({ kind: "cells", chunkIndex: 5, cells: scenarios.map((scenario, i) => ({ index: 10 + i, axisValues: [i], scenario })) });
    const results = unpackResults(outcome, (index) => [index - 10]);
    const runs = scenarios.map((scenario) => simulate(scenario));
    expect(runs[1].metrics.effectiveRestitution).toBeNull();
    expect(runs[2].metrics.exploded).toBe(true);
    expect(results).toEqual(runs.map((run, i) => ({ index: 10 + i, axisValues: [i], verdict: run.verdict, reason: run.reason, metrics: pickMetrics(run.metrics) })));
    expect(outcome.chunkIndex).toBe(5);
    expect(Number.isInteger(outcome.wallMs) && outcome.wallMs >= 1).toBe(true);
  });
});
