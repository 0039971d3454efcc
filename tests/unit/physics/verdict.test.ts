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
  maxOmegaH: 0.3,
  amplification: 1,
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

describe("verdict rules 2", () => {
  const rules2 = { ...damped, verdictRules: 2 };
  const undamped2 = { ...undamped, verdictRules: 2 };
  // Fields a rules-2 verdict reads; thresholds are the defaults of lib/physics/constants.ts.
  it("follows the precedence exploded → step-unstable → tunneled → deep-overlap → restitution-off → energy-drift → coarse-contact → stable", () => {
    const everything = { ...calm, exploded: true, maxOmegaH: 2.5, tunneled: true, maxOverlapFraction: 0.5, amplification: 1.5, maxEnergyErrorRel: 0.9 };
    expect(judge(everything, rules2, context).verdict).toBe("exploded");
    expect(judge({ ...everything, exploded: false }, rules2, context).verdict).toBe("step-unstable");
    expect(judge({ ...everything, exploded: false, maxOmegaH: 1.5 }, rules2, context).verdict).toBe("tunneled");
    expect(judge({ ...everything, exploded: false, maxOmegaH: 1.5, tunneled: false }, rules2, context).verdict).toBe("deep-overlap");
    expect(judge({ ...everything, exploded: false, maxOmegaH: 1.5, tunneled: false, maxOverlapFraction: 0.02 }, rules2, context).verdict).toBe("restitution-off");
    expect(judge({ ...calm, maxEnergyErrorRel: 0.9 }, rules2, context).verdict).toBe("coarse-contact");
    expect(judge(calm, rules2, context).verdict).toBe("stable");
    // Rules 1 (a stored sweep's scenario has no verdictRules) never give the new verdicts.
    expect(judge({ ...everything, exploded: false, tunneled: false, maxOverlapFraction: 0.02 }, damped, context).verdict).toBe("stable");
  });

  it("calls ω·h ≥ 2 step-unstable whatever the rebound, and an amplification beyond the limit too", () => {
    // Bound: Hairer, Lubich & Wanner 2006 (see lib/physics/constants.ts STEP_STABILITY_LIMIT_OMEGA_H).
    expect(judge({ ...calm, maxOmegaH: 2 }, rules2, context).verdict).toBe("step-unstable");
    expect(judge({ ...calm, maxOmegaH: 1.99 }, rules2, context).verdict).toBe("stable");
    const thrown = judge({ ...calm, maxOmegaH: 1.9, amplification: 2.6, effectiveRestitution: 2.08 }, rules2, context);
    expect(thrown.verdict).toBe("step-unstable");
    expect(thrown.reason).toBe("the contact sent the bodies apart 2.6× as fast as the model's restitution (limit 2×) at ω·h = 1.9");
  });

  it("flags a rebound off the target in both directions, relative to it", () => {
    // Issue 14's browser finding: 0.667 against 0.8 was stable while 0.811 was flagged.
    const low = judge({ ...calm, effectiveRestitution: 0.667, amplification: 0.667 / 0.8 }, rules2, context);
    expect(low.verdict).toBe("restitution-off");
    expect(low.reason).toBe("restitution 0.667 is -16.6% off the model's 0.8 (limit ±5%)");
    expect(judge({ ...calm, effectiveRestitution: 0.811, amplification: 0.811 / 0.8 }, rules2, context).verdict).toBe("stable");
    expect(judge({ ...calm, effectiveRestitution: 0.85, amplification: 0.85 / 0.8 }, rules2, context).verdict).toBe("restitution-off");
  });

  it("tells energy gained by a scene from a rebound off target", () => {
    const box = { ...rules2, scene: { kind: "box", count: 20, massKg: 1, radiusM: 0.05, widthM: 2, heightM: 2, maxSpeedMPerS: 1, gravityMPerS2: 0 } } as typeof rules2;
    const gained = judge({ ...calm, energyErrorRel: 0.05, amplification: null }, box, context);
    expect(gained.verdict).toBe("energy-drift");
    expect(gained.reason).toBe("the scene gained 5% energy over the run (limit 1%)");
    expect(judge({ ...calm, energyErrorRel: -0.05, amplification: null }, { ...undamped2, scene: box.scene }, context).verdict).toBe("energy-drift");
  });

  it("counts a contact resolved in fewer steps than the minimum, and an in-contact energy peak, as coarse-contact", () => {
    // calm: contactDurationS 0.01 s at h = 1e-4 s is 100 steps; 2e-4 s is 2 steps (< 3).
    const short = judge({ ...calm, contactDurationS: 2e-4 }, rules2, { ...context, stepS: 1e-4 });
    expect(short.verdict).toBe("coarse-contact");
    expect(short.reason).toBe("the first contact lasted 2 steps (minimum 3)");
    // Issue 14: energy peaked at 1.88× the start inside a contact.
    expect(judge({ ...calm, maxEnergyErrorRel: 0.88 }, rules2, context).reason).toBe("energy peaked 88% above the start inside a contact (limit 50%)");
  });
});
