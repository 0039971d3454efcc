/**
 * False tunnelling in piles: neighbours in a resting pile sit nanometres apart and slide against
 * each other as the pile settles; the skipped-contact and entered-past-closest-approach checks must
 * not call those near misses tunnels (lib/physics/contact-field.ts SKIPPED_CONTACT_DEPTH_FRACTION).
 * The threshold tests in tunnelling.test.ts (just below and just above the tunnelling speed) still
 * hold with the tolerance; they run unchanged.
 */
import { describe, expect, it } from "vitest";
import { simulate, type Scenario, type Scene, type SnapshotBody, type SnapshotScene } from "@/lib/physics";
import { DEFAULT_TOLERANCES } from "@/lib/physics/constants";

// Invented: "Gravelgate" quarry, a bin of river stones (discs of 0.5 m radius, 1 kg) at rest.
const RADIUS_M = 0.5;
const MASS_KG = 1;
const STIFFNESS_N_PER_M = 1e5;

/**
 * A settled pile: rows of touching discs in hexagonal packing (the stable packing of equal discs)
 * on a floor between two walls, at rest. Gravity then compresses it by the weight above each contact.
 */
function pile(count: number, perRow: number): SnapshotScene {
  const spacingX = 2 * RADIUS_M + 1e-9;
  const spacingY = Math.sqrt(3) * RADIUS_M + 1e-9;
  const bodies: SnapshotBody[] = [];
  for (let row = 0; bodies.length < count; row++) {
    const shifted = row % 2 === 1;
    const inRow = shifted ? perRow - 1 : perRow;
    for (let i = 0; i < inRow && bodies.length < count; i++) {
      bodies.push({ xM: RADIUS_M + (shifted ? RADIUS_M : 0) + i * spacingX, yM: RADIUS_M + 1e-9 + row * spacingY, vxMPerS: 0, vyMPerS: 0, massKg: MASS_KG, radiusM: RADIUS_M });
    }
  }
  const widthM = perRow * spacingX + 1e-9;
  return {
    kind: "snapshot",
    bodies,
    walls: [
      { normalX: 0, normalY: 1, offsetM: 0 },
      { normalX: 1, normalY: 0, offsetM: 0 },
      { normalX: -1, normalY: 0, offsetM: -widthM },
    ],
    gravityMPerS2: 9.81,
    speedScale: 1,
  };
}

function settle(scene: SnapshotScene): ReturnType<typeof simulate> {
  // ω·dt = 0.2 for a disc–disc contact (m_eff = m/2), the setting.
  const omega = Math.sqrt(STIFFNESS_N_PER_M / (MASS_KG / 2));
  const scenario: Scenario = {
    scene,
    contact: { model: "linear", stiffness: STIFFNESS_N_PER_M, damping: { kind: "restitution", value: 0.5 } },
    integrator: "symplectic-euler",
    dtS: 0.2 / omega,
    substeps: 1,
    durationS: 0.3,
    tolerances: { ...DEFAULT_TOLERANCES },
    verdictRules: 2,
    seed: 1,
  };
  return simulate(scenario, { maxSamples: 4 });
}

describe("a settled pile is not tunnelled", () => {
  it.each([
    [1000, 40],
    [4000, 80],
  ])("%i discs at ω·dt = 0.2", (count, perRow) => {
    const result = settle(pile(count, perRow));
    expect(result.metrics.maxOmegaH).toBeCloseTo(0.2, 12);
    // A calm pile: shallow overlaps (the weight of at most 50 rows: well under 7 % of r).
    expect(result.metrics.maxOverlapFraction).toBeLessThan(0.07);
    expect(result.metrics.tunneled).toBe(false);
    expect(result.verdict).not.toBe("tunneled");
  }, 300_000);
});

describe("a near miss is not a pass-through", () => {
  // Two stones, one gliding past the other at an impact offset f of the sum of radii R: its straight
  // path comes within f·R of the other's centre, so it cuts into contact by (1 − f)·R (geometry).
  // Each step moves 1 cm, far more than the chord the path spends inside contact, so no step ends
  // overlapping and only the skipped-contact check can see it.
  function glide(offsetFraction: number, speedMPerS = 10, gapM = 0.0123): ReturnType<typeof simulate> {
    const scene: Scene = { kind: "pair", massAKg: MASS_KG, massBKg: MASS_KG, radiusAM: RADIUS_M, radiusBM: RADIUS_M, speedAMPerS: speedMPerS, speedBMPerS: 0, offsetFraction, gapM };
    return simulate({ scene, contact: { model: "linear", stiffness: STIFFNESS_N_PER_M, damping: { kind: "none" } }, integrator: "symplectic-euler", dtS: 1e-3, substeps: 1, durationS: 0.4, tolerances: { ...DEFAULT_TOLERANCES }, verdictRules: 2, seed: 1 });
  }

  it("a path grazing contact by 100 nm within one step is no tunnel", () => {
    // (1 − f)·R = 1e-7 × 1 m = 100 nm, the scale of the pile (3 nm before, 7.7 nm after).
    const result = glide(1 - 1e-7);
    expect(result.metrics.contactSteps).toBe(0);
    expect(result.metrics.tunneled).toBe(false);
  });

  it("a path cutting 1 % of a radius into contact within one step is a tunnel", () => {
    // (1 − f)·R = 0.005 × 1 m = 5 mm = 1 % of the 0.5 m radius, ten times the tolerance. The path
    // spends a chord 2R·√(1 − f²) ≈ 0.2 m inside contact; steps of 0.5 m skip it at most phases.
    let skipped = 0;
    for (let phase = 0; phase < 1; phase += 0.1) {
      const result = glide(1 - 0.005, 500, (1 + phase) * 0.5);
      if (result.metrics.contactSteps > 0) continue;
      skipped++;
      expect(result.metrics.tunneled).toBe(true);
      expect(result.reason).toMatch(/passed each other within one step/);
    }
    expect(skipped).toBeGreaterThan(0);
  });
});
