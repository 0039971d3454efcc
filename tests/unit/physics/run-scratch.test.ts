/**
 * A caller that runs many cells lends each run one scratch (a contact field to reconfigure and the
 * two-body loop's state vector; lib/physics/simulate.ts `createRunScratch`), as a chunk of a sweep
 * does. Whatever the scratch served before, a run must give exactly what a run on fresh state gives:
 * stored results are compared byte for byte (the engine's determinism contract), so a value left
 * over from an earlier cell would change a stored cell.
 */
import { describe, expect, it } from "vitest";
import { createRunScratch, simulate } from "@/lib/physics/simulate";
import type { ContactSpec, RunOptions, Scenario, Scene } from "@/lib/physics/types";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.2, blowUpEnergyFactor: 1e6 };

function scenario(scene: Scene, contact: ContactSpec, overrides: Partial<Scenario> = {}): Scenario {
  return { scene, contact, integrator: "symplectic-euler", dtS: 1e-4, substeps: 1, durationS: 0.05, tolerances: TOLERANCES, verdictRules: 3, seed: 3, ...overrides };
}

const linear: ContactSpec = { model: "linear", stiffness: 2e4, damping: { kind: "restitution", value: 0.7 } };
const frictional: ContactSpec = { model: "hertz", material: { youngsModulusPa: 1e7, poissonRatio: 0.3 }, damping: { kind: "restitution", value: 0.6 }, friction: { coefficient: 0.4 }, rollingResistance: 0.01 };

/** Cells that take every path a scratch is lent to: the two-body loop, the general loop with walls, gravity, friction, rest metrics. */
const CELLS: { name: string; scenario: Scenario; options?: RunOptions }[] = [
  { name: "pair cell (two-body loop), fast stepping", scenario: scenario({ kind: "pair", massAKg: 0.05, massBKg: 0.2, radiusAM: 0.02, radiusBM: 0.03, speedAMPerS: 2, speedBMPerS: 0.5, offsetFraction: 0.3, gapM: 0.01 }, linear) },
  { name: "pair cell that tunnels (two-body loop), plain stepping", scenario: scenario({ kind: "pair", massAKg: 0.05, massBKg: 0.05, radiusAM: 0.005, radiusBM: 0.005, speedAMPerS: 60, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 }, { ...linear, stiffness: 50 }, { dtS: 1e-3, verdictRules: 1 }), options: { stepping: "plain" } },
  { name: "Hertz disc with friction glancing off a wall", scenario: scenario({ kind: "wall", massKg: 0.3, radiusM: 0.04, speedMPerS: 2, angleDeg: 25, gapM: 0.005, spinRadPerS: 3 }, frictional, { integrator: "velocity-verlet" }) },
  { name: "crate on a slope (gravity, rest metrics)", scenario: scenario({ kind: "slope", massKg: 4, radiusM: 0.2, angleDeg: 20, speedMPerS: 0, spinRadPerS: 0, gravityMPerS2: 9.81, body: "crate" }, { ...linear, stiffness: 1e6, friction: { coefficient: 0.5 } }) },
  { name: "box of 40 discs under gravity (grid)", scenario: scenario({ kind: "box", count: 40, massKg: 0.01, radiusM: 0.01, widthM: 0.2, heightM: 0.2, maxSpeedMPerS: 1, gravityMPerS2: 9.81 }, linear), options: { maxSamples: 5 } },
];

describe("a run lent a scratch gives the results of a run on fresh state", () => {
  const fresh = CELLS.map((cell) => JSON.stringify(simulate(cell.scenario, cell.options)));

  it("in order, then in reverse order, through one scratch", () => {
    const scratch = createRunScratch();
    const order = [...CELLS.keys(), ...[...CELLS.keys()].reverse()];
    for (const i of order) expect(JSON.stringify(simulate(CELLS[i].scenario, CELLS[i].options, scratch)), CELLS[i].name).toBe(fresh[i]);
  });

  it("the cells are not all alike (the comparison could fail)", () => {
    expect(new Set(fresh).size).toBe(CELLS.length);
  });
});
