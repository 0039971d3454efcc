/**
 * The slope and stack scenes and the resting-contact verdicts (creep, jitter, sinking). Invented
 * props: "Puckworks" studio's supply crates on a loading ramp and a tower of loot coins.
 */
import { describe, expect, it } from "vitest";
import { simulate, slidingAngleDeg, staticOverlapM, type ContactSpec, type Scenario, type SlopeScene, type StackScene } from "@/lib/physics";
import { scenario } from "./fixtures";

const G = 9.81;

function contact(stiffness: number, coefficient: number, extra: Partial<ContactSpec> = {}): ContactSpec {
  return { model: "linear", stiffness, damping: { kind: "restitution", value: 0.3 }, friction: { coefficient, stiffnessRatio: 2 / 7, dampingRatio: 0.5 }, ...extra };
}

const crate = (angleDeg: number): SlopeScene => ({ kind: "slope", massKg: 4, radiusM: 0.2, angleDeg, speedMPerS: 0, spinRadPerS: 0, gravityMPerS2: G, body: "crate" });

describe("slope scene", () => {
  const run = (angleDeg: number, coefficient: number, dtS = 1e-3, extra: Partial<Scenario> = {}) =>
    simulate(scenario(crate(angleDeg), contact(1e6, coefficient), "symplectic-euler", dtS, 2, { verdictRules: 2, ...extra }));

  it("holds a crate below the sliding angle atan μ and lets it slide above it", () => {
    // μ = 0.5: atan 0.5 = 26.57° (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 2).
    expect(slidingAngleDeg(0.5)).toBeCloseTo(26.565, 3);
    const holds = run(20, 0.5);
    const slides = run(30, 0.5);
    expect(holds.verdict).toBe("stable");
    expect(holds.metrics.creepM!).toBeLessThan(1e-6);
    // Sliding at g(sin θ − μ cos θ) = 0.657 m/s², it covers ½·a·(2² − 1²) ≈ 0.99 m in the second second.
    expect(slides.metrics.creepM!).toBeGreaterThan(0.9);
    expect(slides.metrics.slidingSteps!).toBeGreaterThan(1000);
    // A sliding crate is no verdict by itself: friction did not claim to hold it.
    expect(slides.verdict).toBe("stable");
  });

  it("rests at the static overlap m·g·cos θ/k", () => {
    const result = run(20, 0.5, 1e-4);
    const expected = staticOverlapM(4, G * Math.cos((20 * Math.PI) / 180), 1e6); // force balance k·δ = m·g·cos θ
    expect(result.metrics.restingOverlapRatio!).toBeCloseTo(1, 3);
    expect(result.metrics.restingOverlapFraction! * 0.2).toBeCloseTo(expected, 9);
    expect(result.metrics.settleTimeS).not.toBeNull();
  });

  // At 24° (below atan 0.5 = 26.6°) the crate should hold. At a frame step where the damped normal
  // spring runs at ω·h = 1.25 the contact rattles, the normal force dips below m·g·cos θ for a step
  // at a time and the crate slips a little each time: it walks down the ramp.
  const rattlingCrate = (dtS: number) =>
    scenario(crate(24), { model: "linear", stiffness: 1e6, damping: { kind: "restitution", value: 0.3 }, friction: { coefficient: 0.5, stiffnessRatio: 1 } }, "symplectic-euler", dtS, 2, { verdictRules: 2 });
  const rattling = (tolerances: Partial<Scenario["tolerances"]>) => {
    const base = rattlingCrate(2.5e-3);
    return simulate({ ...base, tolerances: { ...base.tolerances, ...tolerances } });
  };

  it("calls jitter when a crate friction should hold keeps rattling on the ramp", () => {
    const result = rattling({});
    expect(result.verdict).toBe("jitter");
    expect(result.reason).toMatch(/still moved at up to .* m\/s over the last quarter of the run \(limit 0.01 m\/s\)/);
  });

  it("calls creep when the rattling crate, allowed to move, walks down the ramp, and names the distance", () => {
    const result = rattling({ restSpeedMPerS: 1 });
    expect(result.verdict).toBe("creep");
    expect(result.metrics.creepM!).toBeGreaterThan(0.01 * 0.2);
    expect(result.reason).toMatch(/friction should hold the body at 24°, yet it moved .* m down the slope/);
  });

  it("the same crate at a fine frame step holds: no creep", () => {
    const result = simulate(rattlingCrate(1e-3));
    expect(result.verdict).toBe("stable");
    expect(result.metrics.creepM!).toBeLessThan(1e-5);
  });
});

describe("stack scene", () => {
  const tower = (count: number, perturbationFraction = 0.01): StackScene => ({ kind: "stack", count, massKg: 0.05, radiusM: 0.015, gravityMPerS2: G, perturbationFraction });

  it("settles a straight tower of ten coins with the bottom overlap at N·m·g/k", () => {
    // Unperturbed, the coins never touch the channel walls: the bottom coin carries the whole tower,
    // δ = N·m·g/k (force balance). (Perturbed, wall friction carries part of the weight.)
    const result = simulate(scenario(tower(10, 0), contact(1e5, 0.5), "velocity-verlet", 1e-4, 2, { verdictRules: 2 }));
    expect(result.metrics.restingOverlapRatio!).toBeCloseTo(1, 3);
    expect(result.metrics.settleTimeS).not.toBeNull();
    expect(result.verdict).toBe("stable");
  });

  it("calls sinking when a soft spring lets the tower sink past the resting tolerance", () => {
    // k = 2000 N/m: 10 · 0.05 · 9.81 / 2000 = 2.45 mm, 16 % of the radius (the deep-overlap tolerance set out of the way).
    const result = simulate(scenario(tower(10), contact(2000, 0.5), "velocity-verlet", 1e-3, 3, { verdictRules: 2, tolerances: { ...scenario(tower(1), contact(1, 1), "velocity-verlet", 1, 1).tolerances, maxOverlapFraction: 100 } }));
    expect(result.verdict).toBe("sinking");
    expect(result.reason).toMatch(/of its radius deep in its support \(limit 2%\)/);
  });

  it("calls jitter when the coins never come to rest (undamped springs)", () => {
    const undamped: ContactSpec = { model: "linear", stiffness: 1e5, damping: { kind: "none" }, friction: { coefficient: 0.5 } };
    const result = simulate(scenario(tower(10), undamped, "velocity-verlet", 1e-4, 1, { verdictRules: 2 }));
    expect(result.verdict).toBe("jitter");
    expect(result.metrics.residualMaxSpeedMPerS!).toBeGreaterThan(0.01);
  });

  it("refuses a stack beyond the engine's limit", () => {
    expect(() => simulate(scenario(tower(1001), contact(1e4, 0.5), "velocity-verlet", 1e-4, 0.001))).toThrow(/count must be an integer from 1 to 1000/);
  });
});
