import { describe, expect, it } from "vitest";
import { DEFAULT_TOLERANCES, explicitEulerEnergyGrowthPerStep, judge, simulate, type Metrics, type Scene } from "@/lib/physics";
import { linearContact, scenario } from "./fixtures";

const calm: Metrics = {
  momentumDriftRelX: 0,
  momentumDriftRelY: 0,
  energyErrorRel: 0.001,
  maxEnergyErrorRel: 0.002,
  effectiveRestitution: 0.8,
  maxOverlapFraction: 0.02,
  contactDurationS: 0.01,
  contactSteps: 10,
  tunneled: false,
  exploded: false,
  steps: 1000,
};
const context = { explodedAtS: 0.5, energy: 2e4, startEnergy: 1, tunnelAtS: 0.25, tunnelKind: 2, tunnelBodyA: 0, tunnelBodyB: 1, expectedRestitution: 0.8 };
const pairScene: Scene = { kind: "pair", massAKg: 1, massBKg: 1, radiusAM: 0.05, radiusBM: 0.05, speedAMPerS: 1, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 };
const damped = scenario(pairScene, linearContact(1e5, { kind: "restitution", value: 0.8 }), "velocity-verlet", 1e-4, 1);
const undamped = scenario(pairScene, linearContact(1e5), "velocity-verlet", 1e-4, 1);

describe("verdict", () => {
  it("follows the precedence exploded → tunneled → deep-overlap → energy-drift → stable", () => {
    const everything = { ...calm, exploded: true, tunneled: true, maxOverlapFraction: 0.5, energyErrorRel: 0.5 };
    expect(judge(everything, damped, context).verdict).toBe("exploded");
    expect(judge({ ...everything, exploded: false }, damped, context).verdict).toBe("tunneled");
    expect(judge({ ...everything, exploded: false, tunneled: false }, damped, context).verdict).toBe("deep-overlap");
    expect(judge({ ...calm, energyErrorRel: 0.5 }, damped, context).verdict).toBe("energy-drift");
    expect(judge(calm, damped, context).verdict).toBe("stable");
  });

  it("treats energy loss as intended only when the contact is damped", () => {
    const lossy = { ...calm, energyErrorRel: -0.36, effectiveRestitution: 0.8 };
    expect(judge(lossy, damped, context).verdict).toBe("stable");
    expect(judge(lossy, undamped, { ...context, expectedRestitution: 1 }).verdict).toBe("energy-drift");
  });

  it("flags a restitution above the model's by more than the tolerance", () => {
    const bouncy = { ...calm, energyErrorRel: -0.2, effectiveRestitution: 0.8 + 2 * DEFAULT_TOLERANCES.energyDriftRel };
    const result = judge(bouncy, damped, context);
    expect(result.verdict).toBe("energy-drift");
    expect(result.reason).toMatch(/restitution/);
  });

  it("explains itself", () => {
    expect(judge({ ...calm, exploded: true }, damped, context).reason).toMatch(/×2e\+4|×20000/);
    expect(judge({ ...calm, tunneled: true }, damped, context).reason).toBe("disc 0 passed through disc 1 at t = 0.25 s");
    expect(judge({ ...calm, maxOverlapFraction: 0.234 }, damped, context).reason).toBe("overlap reached 23.4% of the smaller radius (limit 10%)");
  });

  it("an explicit-Euler contact gains energy (×(1 + ω²dt²) per contact step) and is flagged energy-drift", () => {
    const scene: Scene = { kind: "wall", massKg: 1, radiusM: 0.05, speedMPerS: 0.2, angleDeg: 0, gapM: 0.001 };
    const omega = Math.sqrt(1e4 / 1);
    const dtS = 0.05 / omega;
    const result = simulate(scenario(scene, linearContact(1e4), "explicit-euler", dtS, 0.2));
    // Growth per step from the oscillator's step matrix; over the ~π/(ω·dt) contact steps the energy rises well beyond 1 %.
    expect(explicitEulerEnergyGrowthPerStep(omega, dtS) ** result.metrics.contactSteps).toBeGreaterThan(1.1);
    expect(result.metrics.energyErrorRel).toBeGreaterThan(0.1);
    expect(result.verdict).toBe("energy-drift");
  });
});
