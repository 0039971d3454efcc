import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { simulate, type ContactSpec, type Metrics, type Scene } from "@/lib/physics";
import { scenario } from "./fixtures";

/** Agreement to 1e-9 relative; quantities that are themselves rounding-level (drifts) get a 1e-12 absolute floor. */
function expectClose(fast: number | null, plain: number | null, field: string): void {
  if (fast === null || plain === null) {
    expect(fast, field).toBe(plain);
    return;
  }
  expect(Math.abs(fast - plain), field).toBeLessThanOrEqual(1e-9 * Math.max(Math.abs(fast), Math.abs(plain)) + 1e-12);
}

function compare(fast: Metrics, plain: Metrics): void {
  for (const key of Object.keys(plain) as (keyof Metrics)[]) {
    const a = fast[key];
    const b = plain[key];
    if (typeof b === "boolean") expect(a, key).toBe(b);
    else expectClose(a as number | null, b as number | null, key);
  }
}

const contactArbitrary = fc.oneof(
  fc.record({
    model: fc.constant("linear" as const),
    stiffness: fc.double({ min: 1e3, max: 1e6, noNaN: true }),
    damping: fc.oneof(fc.constant({ kind: "none" as const }), fc.record({ kind: fc.constant("restitution" as const), value: fc.double({ min: 0.2, max: 0.99, noNaN: true }) })),
  }),
  fc.record({
    model: fc.constant("hertz" as const),
    material: fc.record({ youngsModulusPa: fc.double({ min: 1e6, max: 1e8, noNaN: true }), poissonRatio: fc.double({ min: 0.1, max: 0.45, noNaN: true }) }),
    damping: fc.oneof(fc.constant({ kind: "none" as const }), fc.record({ kind: fc.constant("coefficient" as const), value: fc.double({ min: 0, max: 5, noNaN: true }) })),
  }),
) as fc.Arbitrary<ContactSpec>;

const pairArbitrary: fc.Arbitrary<Scene> = fc.record({
  kind: fc.constant("pair" as const),
  massAKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  massBKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  radiusAM: fc.double({ min: 0.02, max: 0.08, noNaN: true }),
  radiusBM: fc.double({ min: 0.02, max: 0.08, noNaN: true }),
  speedAMPerS: fc.double({ min: 0, max: 3, noNaN: true }),
  speedBMPerS: fc.double({ min: 0, max: 3, noNaN: true }),
  offsetFraction: fc.double({ min: 0, max: 0.95, noNaN: true }),
  gapM: fc.double({ min: 0, max: 0.2, noNaN: true }),
});

const wallArbitrary: fc.Arbitrary<Scene> = fc.record({
  kind: fc.constant("wall" as const),
  massKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  radiusM: fc.double({ min: 0.02, max: 0.08, noNaN: true }),
  speedMPerS: fc.double({ min: 0.1, max: 3, noNaN: true }),
  angleDeg: fc.double({ min: 0, max: 80, noNaN: true }),
  gapM: fc.double({ min: 0, max: 0.2, noNaN: true }),
});

const rowArbitrary: fc.Arbitrary<Scene> = fc.record({
  kind: fc.constant("row" as const),
  count: fc.integer({ min: 1, max: 5 }),
  massKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  radiusM: fc.double({ min: 0.02, max: 0.05, noNaN: true }),
  strikerMassKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  strikerSpeedMPerS: fc.double({ min: 0.1, max: 3, noNaN: true }),
  spacingM: fc.double({ min: 0, max: 0.05, noNaN: true }),
  gapM: fc.double({ min: 0, max: 0.1, noNaN: true }),
});

const smallBoxArbitrary: fc.Arbitrary<Scene> = fc.record({
  kind: fc.constant("box" as const),
  count: fc.integer({ min: 1, max: 8 }),
  massKg: fc.double({ min: 0.05, max: 2, noNaN: true }),
  radiusM: fc.double({ min: 0.01, max: 0.03, noNaN: true }),
  widthM: fc.double({ min: 0.3, max: 1, noNaN: true }),
  heightM: fc.double({ min: 0.3, max: 1, noNaN: true }),
  maxSpeedMPerS: fc.double({ min: 0, max: 3, noNaN: true }),
  gravityMPerS2: fc.constant(0),
});

describe("fast stepping (free-flight jumps, early finish) agrees with plain stepping", () => {
  it("over random pair, wall, row and small gravity-free box scenarios, for every integrator", () => {
    fc.assert(
      fc.property(
        fc.oneof(pairArbitrary, wallArbitrary, rowArbitrary, smallBoxArbitrary),
        contactArbitrary,
        fc.constantFrom("symplectic-euler" as const, "velocity-verlet" as const, "explicit-euler" as const),
        fc.integer({ min: 1, max: 3 }),
        (scene, contact, integrator, substeps) => {
          const run = scenario(scene, contact, integrator, 2e-4, 0.3, { substeps });
          const fast = simulate(run);
          const plain = simulate(run, { stepping: "plain" });
          compare(fast.metrics, plain.metrics);
          // Stronger than 1e-9: the approach replicates plain stepping's additions, so metrics are byte-identical.
          expect(JSON.stringify(fast.metrics)).toBe(JSON.stringify(plain.metrics));
          expect(fast.verdict).toBe(plain.verdict);
        },
      ),
      { seed: 20261201, numRuns: 300 },
    );
  });

  it("skips free flight: a long approach costs no more than the contact itself", () => {
    const scene: Scene = { kind: "pair", massAKg: 0.2, massBKg: 0.2, radiusAM: 0.03, radiusBM: 0.03, speedAMPerS: 1, speedBMPerS: 0, offsetFraction: 0.2, gapM: 0.5 };
    const run = scenario(scene, { model: "linear", stiffness: 1e5, damping: { kind: "none" } }, "velocity-verlet", 1e-5, 2);
    const fast = simulate(run);
    expect(fast.metrics.steps).toBe(200000); // all steps are accounted for
    expect(fast.metrics.contactSteps).toBeGreaterThan(50);
    compare(fast.metrics, simulate(run, { stepping: "plain" }).metrics);
  });

  it("records the same time series with and without jumps, and the same metrics with and without a series", () => {
    const scene: Scene = { kind: "wall", massKg: 0.3, radiusM: 0.04, speedMPerS: 2, angleDeg: 25, gapM: 0.3 };
    const run = scenario(scene, { model: "linear", stiffness: 5e4, damping: { kind: "restitution", value: 0.7 } }, "symplectic-euler", 1e-4, 1);
    const fast = simulate(run, { maxSamples: 101 });
    const plain = simulate(run, { maxSamples: 101, stepping: "plain" });
    expect(fast.series!.tS).toEqual(plain.series!.tS);
    expect(fast.series!.tS.length).toBe(101);
    fast.series!.bodies[0].xM.forEach((x, k) => expect(Math.abs(x - plain.series!.bodies[0].xM[k])).toBeLessThan(1e-12));
    expect(JSON.stringify(simulate(run).metrics)).toBe(JSON.stringify(fast.metrics));
  });
});
