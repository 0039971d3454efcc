import { describe, expect, it } from "vitest";
import { reducedMassKg, simulate, type Scene } from "@/lib/physics";
import { headOnPair, linearContact, scenario } from "./fixtures";

const stiffness = 2e6; // stiff enough that the overlap stays below 1 % of the radius
const radiusM = 0.05;

/** Final velocities of both discs from a time series with two samples (start, end). */
function finalVelocities(scene: Scene, dtS: number, durationS: number, integrator: "velocity-verlet" | "symplectic-euler" = "velocity-verlet") {
  const result = simulate(scenario(scene, linearContact(stiffness), integrator, dtS, durationS), { maxSamples: 2 });
  const series = result.series!;
  const end = series.tS.length - 1;
  const velocity = (body: number, mass: number) => [series.bodies[body].pxNs[end] / mass, series.bodies[body].pyNs[end] / mass];
  return { result, velocity };
}

describe("elastic collision outcomes", () => {
  it("head-on, unequal masses, both moving: textbook final velocities, error shrinking with dt", () => {
    const [ma, mb, va, vb] = [0.3, 0.7, 2.0, 0.5]; // an invented curling stone hitting a heavier one coming towards it
    // Halliday, Resnick & Walker, Fundamentals of Physics, elastic collision in one dimension:
    // v1f = (m1 − m2)/(m1 + m2)·v1i + 2m2/(m1 + m2)·v2i, v2f = 2m1/(m1 + m2)·v1i + (m2 − m1)/(m1 + m2)·v2i (B moves at −vb).
    const expectedA = ((ma - mb) / (ma + mb)) * va + ((2 * mb) / (ma + mb)) * -vb;
    const expectedB = ((2 * ma) / (ma + mb)) * va + ((mb - ma) / (ma + mb)) * -vb;
    const contactTime = Math.PI / Math.sqrt(stiffness / reducedMassKg(ma, mb));
    const errors = [20, 80].map((stepsPerContact) => {
      const { velocity } = finalVelocities(headOnPair(ma, mb, va, vb, 0.001, radiusM), contactTime / stepsPerContact, 0.01);
      return Math.max(Math.abs(velocity(0, ma)[0] - expectedA), Math.abs(velocity(1, mb)[0] - expectedB)) / va;
    });
    // Tolerance: 0.1 % of the impact speed at 80 steps per contact (common practice for a resolved contact).
    expect(errors[1]).toBeLessThan(1e-3);
    expect(errors[1]).toBeLessThan(errors[0]);
  });

  it("oblique, unequal masses: the normal component follows the 1D formula, the tangential one is untouched", () => {
    const [ma, mb, va, offset] = [0.5, 1.5, 1.2, 0.6];
    const scene: Scene = { kind: "pair", massAKg: ma, massBKg: mb, radiusAM: radiusM, radiusBM: radiusM, speedAMPerS: va, speedBMPerS: 0, offsetFraction: offset, gapM: 0.001 };
    // Goldstein, Poole & Safko 2002, Classical Mechanics (frictionless elastic impact): with n the line of centres at touch,
    // v_A' = v_A − 2m_B/(m_A+m_B)·(v_A·n)n, v_B' = 2m_A/(m_A+m_B)·(v_A·n)n.
    const normalX = Math.sqrt(1 - offset * offset);
    const normalY = offset;
    const approach = va * normalX;
    const expected = {
      ax: va - ((2 * mb) / (ma + mb)) * approach * normalX,
      ay: -((2 * mb) / (ma + mb)) * approach * normalY,
      bx: ((2 * ma) / (ma + mb)) * approach * normalX,
      by: ((2 * ma) / (ma + mb)) * approach * normalY,
    };
    const contactTime = Math.PI / Math.sqrt(stiffness / reducedMassKg(ma, mb));
    const { result, velocity } = finalVelocities(scene, contactTime / 200, 0.01);
    const [ax, ay] = velocity(0, ma);
    const [bx, by] = velocity(1, mb);
    // The normal turns by ~δ_max/R during the contact (δ_max/R ≈ 0.3 % here), which bounds the deviation (derived).
    const tolerance = 3 * result.metrics.maxOverlapFraction * va;
    expect(Math.abs(ax - expected.ax)).toBeLessThan(tolerance);
    expect(Math.abs(ay - expected.ay)).toBeLessThan(tolerance);
    expect(Math.abs(bx - expected.bx)).toBeLessThan(tolerance);
    expect(Math.abs(by - expected.by)).toBeLessThan(tolerance);
    // Overlap below 1 % of the radius keeps the tolerance above meaningful (common practice for a stiff contact).
    expect(result.metrics.maxOverlapFraction).toBeLessThan(0.01);
  });
});

describe("row of discs", () => {
  it("equal masses with gaps pass the striker's velocity down the chain to the last disc", () => {
    // Sequential elastic impacts of equal masses exchange velocities (Halliday, Resnick & Walker, 1D elastic collision with m1 = m2).
    const scene: Scene = { kind: "row", count: 5, massKg: 0.1, radiusM: 0.02, strikerMassKg: 0.1, strikerSpeedMPerS: 1.2, spacingM: 0.005, gapM: 0.01 };
    const contactTime = Math.PI / Math.sqrt(stiffness / 0.05);
    const result = simulate(scenario(scene, linearContact(stiffness), "velocity-verlet", contactTime / 100, 0.2), { maxSamples: 2 });
    const end = result.series!.tS.length - 1;
    const speeds = result.series!.bodies.map((track) => track.pxNs[end] / 0.1);
    // Tolerance: 0.1 % of the striker's speed at 100 steps per contact (common practice for a resolved contact).
    for (let k = 0; k < 5; k++) expect(Math.abs(speeds[k])).toBeLessThan(1e-3 * 1.2);
    expect(Math.abs(speeds[5] - 1.2)).toBeLessThan(1e-3 * 1.2);
    expect(result.metrics.tunneled).toBe(false);
  });
});

describe("momentum", () => {
  it.each(["symplectic-euler", "velocity-verlet", "explicit-euler"] as const)("is conserved to rounding in pair and row scenes with %s", (integrator) => {
    const pair: Scene = { kind: "pair", massAKg: 0.3, massBKg: 1.1, radiusAM: 0.04, radiusBM: 0.07, speedAMPerS: 1.7, speedBMPerS: 0.4, offsetFraction: 0.35, gapM: 0.01 };
    const row: Scene = { kind: "row", count: 6, massKg: 0.2, radiusM: 0.03, strikerMassKg: 0.5, strikerSpeedMPerS: 1, spacingM: 0.002, gapM: 0.01 };
    for (const scene of [pair, row]) {
      const result = simulate(scenario(scene, linearContact(5e4, { kind: "restitution", value: 0.8 }), integrator, 2e-5, 0.2), { stepping: "plain" });
      // Conservation of momentum (Newton's third law: the engine applies ±F along the same line).
      expect(Math.abs(result.metrics.momentumDriftRelX)).toBeLessThan(1e-12);
      expect(Math.abs(result.metrics.momentumDriftRelY)).toBeLessThan(1e-12);
      expect(result.metrics.contactSteps).toBeGreaterThan(0);
    }
  });

  it("in a walled box with gravity, the momentum change equals the wall and gravity impulses", () => {
    const box: Scene = { kind: "box", count: 200, massKg: 0.01, radiusM: 0.01, widthM: 0.6, heightM: 0.6, maxSpeedMPerS: 1.5, gravityMPerS2: 9.81 };
    const result = simulate(scenario(box, linearContact(2e3, { kind: "restitution", value: 0.9 }), "velocity-verlet", 1e-4, 0.5));
    // Impulse–momentum theorem: ΔP = ∫F_external dt; the metric is the unexplained remainder, relative to |P_start|.
    expect(Math.abs(result.metrics.momentumDriftRelX)).toBeLessThan(1e-9);
    expect(Math.abs(result.metrics.momentumDriftRelY)).toBeLessThan(1e-9);
    expect(result.metrics.contactSteps).toBeGreaterThan(100);
  });
});
