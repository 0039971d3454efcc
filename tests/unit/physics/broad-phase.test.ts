/**
 * The broad phases (lib/physics/broad-phase.ts) hand the force pass the same pairs in the same
 * canonical (i, j) order, so a force pass gives the same bits whichever found them. The digests in
 * kernel-identity.test.ts cover the neighbour list and all pairs over whole runs; this covers the
 * third, the uniform grid laid out every step, which a run reaches only when the list cannot be built:
 * positions still finite but a step's displacement so large that its square overflows, so the list's
 * reach is not finite (an exploding run, in the step before its energy check stops it).
 */
import { describe, expect, it } from "vitest";
import { buildScene } from "@/lib/physics/scenes";
import { createContactField } from "@/lib/physics/contact-setup";
import { primeForces, stepSymplecticEuler } from "@/lib/physics/integrators";
import type { Scenario } from "@/lib/physics/types";
import { mixedBin } from "../../bench/contact-scenes";

/** Invented: the tilted prize bin of "Penny Tide", 64 mixed marbles, linear law with a dashpot. */
function binScenario(contact: Scenario["contact"]): Scenario {
  return {
    scene: mixedBin(8, 12, 1.5, 5),
    contact,
    integrator: "symplectic-euler",
    dtS: 1e-4,
    substeps: 1,
    durationS: 1e-3,
    tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.5, blowUpEnergyFactor: 1e6 },
    verdictRules: 2,
    seed: 5,
  };
}

/** Steps the bin with one broad phase; body 9 gets a kick whose step displacement squared overflows. */
function passes(scenario: Scenario, broadPhase: "grid" | "all-pairs"): { values: number[]; overflowed: boolean } {
  const setup = buildScene(scenario.scene, scenario.seed);
  const bodies = setup.bodies;
  const field = createContactField(scenario, setup.walls, setup.gravityMPerS2, bodies.count, broadPhase);
  primeForces(bodies, field);
  const values: number[] = [];
  const record = () => values.push(...bodies.fx, ...bodies.fy, ...field.pass, field.run.tunnelKind, field.run.tunnelBodyA, field.run.tunnelBodyB, field.run.firstContactPhase, field.run.firstContactA, field.run.firstContactB);
  for (let n = 0; n < 200; n++) {
    stepSymplecticEuler(bodies, field, scenario.dtS);
    record();
  }
  // 1e159 m/s × 1e-4 s: a displacement of 1e155 m, whose square (1e310) overflows; positions stay finite.
  bodies.vx[9] = 1e159;
  stepSymplecticEuler(bodies, field, scenario.dtS);
  const dx = bodies.x[9] - bodies.previousX[9];
  const overflowed = Number.isFinite(bodies.x[9]) && dx * dx === Infinity;
  record();
  for (let n = 0; n < 3; n++) {
    stepSymplecticEuler(bodies, field, scenario.dtS);
    record();
  }
  return { values, overflowed };
}

describe("broad phase: the per-step grid gives the same force passes as all pairs", () => {
  for (const [name, contact] of [
    ["linear law", { model: "linear", stiffness: 5e4, damping: { kind: "restitution", value: 0.5 } }],
    ["Hertz law (the general pair path)", { model: "hertz", stiffness: 3e7, damping: { kind: "restitution", value: 0.5 } }],
  ] as const) {
    it(`${name}: forces and pass values bit for bit, before and after a displacement whose square overflows`, () => {
      const scenario = binScenario(contact);
      const grid = passes(scenario, "grid");
      const allPairs = passes(scenario, "all-pairs");
      // The state the per-step grid exists for was reached, and the bin was in contact (not a vacuous match).
      expect(grid.overflowed).toBe(true);
      expect(grid.values.length).toBe(allPairs.values.length);
      const mismatches = grid.values.filter((value, index) => !Object.is(value, allPairs.values[index])).length;
      expect(mismatches).toBe(0);
      const contactCounts = grid.values.filter((_, index) => index % (2 * 64 + 15) === 2 * 64 + 1);
      expect(Math.max(...contactCounts)).toBeGreaterThan(10);
    });
  }
});
