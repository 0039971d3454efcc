import { describe, expect, it } from "vitest";
import fc from "fast-check";
import { DEFAULT_TOLERANCES } from "../../../lib/physics/constants";
import { SPEC_LIMITS, SWEEPABLE_PARAMETERS, parseSweepSpec, type SpecIssue } from "../../../lib/sweeps/spec";
import { ballPitBoxSpec, bumperWallSpec, clone, puckPairSpec, type Draft } from "./fixtures";

function issuesOf(input: unknown): SpecIssue[] {
  const result = parseSweepSpec(input);
  if (result.ok) throw new Error("expected the spec to be rejected");
  return result.issues;
}

function fieldsOf(input: unknown): string[] {
  return issuesOf(input).map((issue) => issue.field);
}

describe("sweep spec: the wall of a Hertz contact", () => {
  it("takes rigid or disc-material with a material, and names contact.wall otherwise", () => {
    for (const wall of ["rigid", "disc-material"]) {
      const spec = clone(bumperWallSpec()) as Draft;
      spec.scenario.contact.wall = wall;
      const result = parseSweepSpec(spec);
      expect(result.ok && result.spec.scenario.contact.wall).toBe(wall);
    }
    const unknown = clone(bumperWallSpec()) as Draft;
    unknown.scenario.contact.wall = "granite";
    expect(issuesOf(unknown)).toEqual([{ field: "scenario.contact.wall", message: "contact.wall must be disc-material or rigid" }]);
    const givenStiffness = clone(bumperWallSpec()) as Draft;
    givenStiffness.scenario.contact = { model: "hertz", stiffness: 1e9, wall: "rigid", damping: { kind: "none" } };
    expect(issuesOf(givenStiffness)).toEqual([{ field: "scenario.contact.wall", message: expect.stringContaining("contact.wall applies to the hertz model with contact.material only") }]);
    const linear = clone(puckPairSpec()) as Draft;
    linear.scenario.contact.wall = "rigid";
    expect(fieldsOf(linear)).toEqual(["scenario.contact.wall"]);
  });
});

describe("sweep spec: valid input", () => {
  it("parses into the engine's Scenario, with tolerances, substeps and seed defaulted", () => {
    const result = parseSweepSpec(bumperWallSpec());
    expect(result.ok).toBe(true);
    if (!result.ok) return;
    // The engine's defaults, without the resting-contact tolerances (left out so specs without them keep their form).
    const { restSpeedMPerS, creepFraction, restingOverlapFraction, ...impactDefaults } = DEFAULT_TOLERANCES;
    void [restSpeedMPerS, creepFraction, restingOverlapFraction];
    expect(result.spec.scenario.tolerances).toEqual(impactDefaults);
    expect(result.spec.scenario.substeps).toBe(1);
    expect(result.spec.scenario.seed).toBe(1);
    expect(result.spec.scenario.contact.damping).toEqual({ kind: "none" });
    expect(result.spec.version).toBe(1);
  });

  it("gives every parse its own default objects (no shared state between specs)", () => {
    const input = clone(bumperWallSpec()) as Draft;
    delete input.axes;
    delete input.scenario.contact.damping;
    const first = parseSweepSpec(input);
    const second = parseSweepSpec(input);
    if (!first.ok || !second.ok) throw new Error("expected both to parse");
    expect(first.spec.axes).not.toBe(second.spec.axes);
    expect(first.spec.scenario.contact.damping).not.toBe(second.spec.scenario.contact.damping);
    expect(first.spec.scenario.tolerances).not.toBe(second.spec.scenario.tolerances);
  });

  it("accepts its own output again unchanged (the stored form re-parses)", () => {
    for (const input of [puckPairSpec(), bumperWallSpec(), ballPitBoxSpec()]) {
      const first = parseSweepSpec(input);
      expect(first.ok).toBe(true);
      if (!first.ok) continue;
      const second = parseSweepSpec(clone(first.spec));
      expect(second).toEqual(first);
    }
  });

  it("lists every sweepable parameter with unit, label, bounds and integer flag for the form", () => {
    const paths = SWEEPABLE_PARAMETERS.map((parameter) => parameter.path);
    for (const path of ["contact.stiffness", "dtS", "substeps", "scene.massRatio", "scene.speedAMPerS", "scene.offsetFraction", "scene.count", "scene.angleDeg", "scene.gravityMPerS2", "integrator", "contact.model"]) {
      expect(paths).toContain(path);
    }
    for (const parameter of SWEEPABLE_PARAMETERS) {
      if (parameter.kind !== "number") continue;
      expect(parameter.min).toBeLessThan(parameter.max);
      expect(typeof parameter.unit).toBe("string");
      expect(parameter.label.length).toBeGreaterThan(0);
    }
    expect(SWEEPABLE_PARAMETERS.find((parameter) => parameter.path === "substeps")).toMatchObject({ integer: true });
  });
});

describe("sweep spec: rejected input names the field", () => {
  it("non-positive mass, radius, stiffness and dt", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.scenario.scene.massAKg = 0;
    spec.scenario.scene.radiusBM = -0.01;
    spec.scenario.contact.stiffness = -5;
    spec.scenario.dtS = 0;
    expect(fieldsOf(spec).sort()).toEqual(["scenario.contact.stiffness", "scenario.dtS", "scenario.scene.massAKg", "scenario.scene.radiusBM"]);
    expect(issuesOf(spec).find((issue) => issue.field === "scenario.scene.massAKg")?.message).toMatch(/> 0.*got 0/);
  });

  it("NaN and infinite values", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.scenario.scene.speedAMPerS = Number.NaN;
    spec.scenario.durationS = Number.POSITIVE_INFINITY;
    const issues = issuesOf(spec);
    expect(issues.map((issue) => issue.field).sort()).toEqual(["scenario.durationS", "scenario.scene.speedAMPerS"]);
    expect(issues.find((issue) => issue.field === "scenario.scene.speedAMPerS")?.message).toMatch(/finite number.*NaN/);
  });

  it("unknown fields, at any depth", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.colour = "teal";
    spec.scenario.scene.spin = 3;
    spec.axes[0].step = 2;
    expect(fieldsOf(spec).sort()).toEqual(["axes.0.step", "colour", "scenario.scene.spin"]);
  });

  it("a scene field of another scene kind", () => {
    const spec = clone(bumperWallSpec()) as Draft;
    spec.scenario.scene.offsetFraction = 0.2;
    expect(fieldsOf(spec)).toEqual(["scenario.scene.offsetFraction"]);
  });

  it("an axis parameter that does not apply to the chosen scene", () => {
    const spec = clone(bumperWallSpec()) as Draft;
    spec.axes = [{ parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.5, count: 3 }];
    const issues = issuesOf(spec);
    expect(issues).toEqual([{ field: "axes.0.parameter", message: expect.stringMatching(/does not apply to the wall scene.*pair/) }]);
  });

  it("an unknown axis parameter", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes[1].parameter = "scene.wobble";
    expect(fieldsOf(spec)).toEqual(["axes.1.parameter"]);
  });

  it("log spacing with a non-positive end", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes = [{ parameter: "scene.speedBMPerS", spacing: "log", from: 0, to: 2, count: 3 }];
    const issues = issuesOf(spec);
    expect(issues).toEqual([{ field: "axes.0.from", message: expect.stringMatching(/log spacing needs from and to > 0/) }]);
  });

  it("axis ends outside the parameter's range", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes = [{ parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 1, count: 5 }];
    expect(issuesOf(spec)).toEqual([{ field: "axes.0.to", message: expect.stringMatching(/impact offset must be ≥ 0 and < 1; got 1/) }]);
  });

  it("more cells than the limit, naming the limit and the count asked", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes = [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e7, count: 100 },
      { parameter: "scene.speedAMPerS", spacing: "linear", from: 1, to: 10, count: 100 },
      { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.9, count: 27 },
    ];
    // 100 × 100 × 27 = 270,000 > 262,144 (SPEC_LIMITS.maxCellsPerSweep).
    expect(issuesOf(spec)).toEqual([{ field: "axes", message: "270,000 cells (100 × 100 × 27) exceed the limit of 262,144 cells per sweep" }]);
    spec.axes[2].count = 26; // 260,000 cells: within the limit
    expect(parseSweepSpec(spec).ok).toBe(true);
  });

  it("steps per cell checked at the smallest dt of an axis, not the base dt", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.scenario.durationS = 1;
    spec.scenario.substeps = 4;
    // Base: 1 s × 4 / (1/240 s) = 960 steps. Axis end 1e-6 s: 4,000,000 steps > 2,000,000.
    spec.axes = [{ parameter: "dtS", spacing: "log", from: 1e-2, to: 1e-6, count: 5 }];
    const issues = issuesOf(spec);
    expect(issues).toHaveLength(1);
    expect(issues[0].field).toBe("axes.0");
    expect(issues[0].message).toContain("dtS = 0.000001");
    expect(issues[0].message).toContain("4,000,000");
    expect(issues[0].message).toContain(`limit of ${SPEC_LIMITS.maxStepsPerCell.toLocaleString("en-US")}`);
  });

  it("steps per cell from the base scenario name the scenario field", () => {
    const spec = clone(bumperWallSpec()) as Draft;
    spec.scenario.dtS = 1e-9; // 0.01 s / 1e-9 s = 10,000,000 steps
    expect(issuesOf(spec)).toEqual([{ field: "scenario.dtS", message: expect.stringContaining("= 1e7) exceed") }]);
  });

  it("the largest N of an axis against the body-steps limit", () => {
    const spec = clone(ballPitBoxSpec()) as Draft;
    spec.scenario.scene.widthM = 100;
    spec.scenario.scene.heightM = 100;
    spec.scenario.durationS = 10; // 10,000 steps per cell
    spec.axes = [{ parameter: "scene.count", values: [100, 60_000] }];
    expect(issuesOf(spec)).toEqual([{ field: "axes.0.values.1", message: expect.stringMatching(/discs N must be an integer ≥ 1 and ≤ 10,000.*got 60,000/) }]);
    spec.axes = [{ parameter: "scene.count", values: [100, 9_000] }];
    // 9,000 bodies × 10,000 steps = 9e7 ≤ 5e8: fine. 100 s → 9e8 > 5e8.
    expect(parseSweepSpec(spec).ok).toBe(true);
    spec.scenario.durationS = 100;
    expect(issuesOf(spec)).toEqual([{ field: "axes.0", message: expect.stringMatching(/scene.count = 9000.*9,000 × 100,000.*5e8/) }]);
  });

  it("a box too full to place its discs", () => {
    const spec = clone(ballPitBoxSpec()) as Draft;
    spec.axes = [{ parameter: "scene.radiusM", spacing: "linear", from: 0.01, to: 0.1, count: 4 }];
    // 20 discs of radius 0.1 m need cells wider than 0.2 m: a 1 m box has at most 4 × 4 = 16 of them.
    expect(issuesOf(spec)).toEqual([{ field: "axes.0", message: expect.stringMatching(/scene.radiusM = 0.1: 20 discs of radius 0.1 m do not fit/) }]);
    spec.axes[0].to = 0.09; // 5 × 4 cells of 0.2 m × 0.25 m hold 20 discs of 0.18 m diameter
    expect(parseSweepSpec(spec).ok).toBe(true);
  });

  it("a Hertz contact with both a stiffness and a material, and a linear one without stiffness", () => {
    const hertz = clone(bumperWallSpec()) as Draft;
    hertz.scenario.contact.stiffness = 1e9;
    expect(fieldsOf(hertz)).toEqual(["scenario.contact.model"]);
    const linear = clone(puckPairSpec()) as Draft;
    delete linear.scenario.contact.stiffness;
    linear.axes = [];
    expect(fieldsOf(linear)).toEqual(["scenario.contact.model"]);
  });

  it("a contact.model axis whose choices are not all complete in the scenario", () => {
    const spec = clone(bumperWallSpec()) as Draft;
    spec.axes = [{ parameter: "contact.model", values: ["hertz", "linear"] }];
    const issues = issuesOf(spec);
    expect(issues.map((issue) => issue.field)).toEqual(["axes.0", "axes.0"]);
    expect(issues).toContainEqual({ field: "axes.0", message: expect.stringMatching(/contact.model = linear.*linear contact model needs contact.stiffness/) });
    expect(issues).toContainEqual({ field: "axes.0", message: expect.stringMatching(/contact.material applies to the hertz model only/) });
  });

  it("a damping axis that does not match the scenario's damping kind", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes = [{ parameter: "contact.damping.coefficient", spacing: "linear", from: 0, to: 2, count: 3 }];
    expect(issuesOf(spec)).toEqual([{ field: "axes.0.parameter", message: expect.stringContaining('damping.kind "coefficient"; it is "restitution"') }]);
  });

  it("a mass-ratio axis together with a massBKg axis, and a parameter swept twice", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes = [
      { parameter: "scene.massRatio", spacing: "log", from: 0.1, to: 10, count: 3 },
      { parameter: "scene.massBKg", values: [0.2, 0.4] },
    ];
    expect(fieldsOf(spec)).toEqual(["axes.0.parameter"]);
    spec.axes = [
      { parameter: "dtS", values: [0.001, 0.002] },
      { parameter: "dtS", values: [0.003] },
    ];
    expect(issuesOf(spec)).toEqual([{ field: "axes.1.parameter", message: "dtS is already swept by axes.0" }]);
  });

  it("an integer parameter whose range cannot give count distinct integers", () => {
    const spec = clone(ballPitBoxSpec()) as Draft;
    spec.axes = [{ parameter: "scene.count", spacing: "linear", from: 10, to: 12, count: 5 }];
    expect(issuesOf(spec)).toEqual([{ field: "axes.0.count", message: expect.stringMatching(/only 3 distinct values.*count 5 asked/) }]);
    spec.axes = [{ parameter: "substeps", spacing: "linear", from: 1, to: 2.5, count: 2 }];
    expect(fieldsOf(spec)).toEqual(["axes.0.to"]);
  });

  it("a range axis missing its count, and a choice axis given a range", () => {
    const spec = clone(puckPairSpec()) as Draft;
    delete spec.axes[0].count;
    expect(fieldsOf(spec)).toEqual(["axes.0.count"]);
    const choice = clone(puckPairSpec()) as Draft;
    choice.axes = [{ parameter: "integrator", spacing: "linear", from: 0, to: 1, count: 2 }];
    expect(fieldsOf(choice)).toEqual(["axes.0.values"]);
    choice.axes = [{ parameter: "integrator", values: ["velocity-verlet", "leapfrog"] }];
    expect(issuesOf(choice)).toEqual([{ field: "axes.0.values.1", message: expect.stringContaining('got "leapfrog"') }]);
  });

  it("more than three axes", () => {
    const spec = clone(puckPairSpec()) as Draft;
    spec.axes.push({ parameter: "scene.gapM", values: [0.01] }, { parameter: "scene.speedAMPerS", values: [2, 3] });
    expect(fieldsOf(spec)).toEqual(["axes"]);
  });
});

describe("sweep spec: generated mutations (fast-check)", () => {
  type Mutation = { field: string; apply: (spec: Draft) => void };
  const mutations: Mutation[] = [
    { field: "scenario.scene.massAKg", apply: (spec) => (spec.scenario.scene.massAKg = -Math.abs(spec.scenario.scene.massAKg)) },
    { field: "scenario.scene.massBKg", apply: (spec) => (spec.scenario.scene.massBKg = Number.NaN) },
    { field: "scenario.scene.radiusAM", apply: (spec) => (spec.scenario.scene.radiusAM = 0) },
    { field: "scenario.dtS", apply: (spec) => (spec.scenario.dtS = Number.NEGATIVE_INFINITY) },
    { field: "scenario.contact.stiffness", apply: (spec) => (spec.scenario.contact.stiffness = -1) },
    { field: "scenario.scene.offsetFraction", apply: (spec) => (spec.scenario.scene.offsetFraction = 1.5) },
    { field: "scenario.extra", apply: (spec) => (spec.scenario.extra = true) },
    { field: "axes.0.parameter", apply: (spec) => (spec.axes[0].parameter = "scene.angleDeg") },
    { field: "axes.0.from", apply: (spec) => ((spec.axes[0] = { parameter: "scene.speedAMPerS", spacing: "log", from: -1, to: 5, count: 3 }), undefined) },
    { field: "axes", apply: (spec) => ((spec.axes = [{ parameter: "scene.speedAMPerS", spacing: "linear", from: 1, to: 9, count: 600 }, { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 600 }]), undefined) },
  ];

  it("any generated pair spec within limits parses; each mutation is rejected with its field path", () => {
    const validSpec = fc.record({
      massAKg: fc.double({ min: 0.01, max: 10, noNaN: true }),
      massBKg: fc.double({ min: 0.01, max: 10, noNaN: true }),
      radius: fc.double({ min: 0.01, max: 0.5, noNaN: true }),
      speed: fc.double({ min: 0.1, max: 20, noNaN: true }),
      offset: fc.double({ min: 0, max: 0.95, noNaN: true }),
      stiffnessFrom: fc.double({ min: 1e2, max: 1e5, noNaN: true }),
      count: fc.integer({ min: 1, max: 6 }),
    });
    fc.assert(
      fc.property(validSpec, fc.constantFrom(...mutations), (values, mutation) => {
        const spec: Draft = clone(puckPairSpec());
        Object.assign(spec.scenario.scene, {
          massAKg: values.massAKg,
          massBKg: values.massBKg,
          radiusAM: values.radius,
          radiusBM: values.radius,
          speedAMPerS: values.speed,
          offsetFraction: values.offset,
        });
        spec.axes = [{ parameter: "contact.stiffness", spacing: "log", from: values.stiffnessFrom, to: values.stiffnessFrom * 100, count: values.count }];
        if (values.count === 1) spec.axes[0].to = values.stiffnessFrom;
        expect(parseSweepSpec(spec).ok).toBe(true);
        mutation.apply(spec);
        expect(fieldsOf(spec)).toContain(mutation.field);
      }),
      { seed: 20261201, numRuns: 150 },
    );
  });
});

describe("sweep spec: friction, spin and the resting scenes (issue #15)", () => {
  const withFriction = (friction: unknown): Draft => {
    const spec = clone(puckPairSpec()) as Draft;
    (spec.scenario.contact as Record<string, unknown>).friction = friction;
    return spec;
  };

  it("accepts friction, rolling resistance and the slope and stack scenes, with their axes", () => {
    const spec = withFriction({ coefficient: 0.4, stiffnessRatio: 2 / 7, dampingRatio: 0.2 });
    (spec.scenario.contact as Record<string, unknown>).rollingResistance = 0.02;
    spec.axes = [{ parameter: "contact.friction.coefficient", spacing: "linear", from: 0.1, to: 0.9, count: 5 }, { parameter: "contact.friction.stiffnessRatio", values: [2 / 7, 0.5, 1] }];
    expect(parseSweepSpec(spec).ok).toBe(true);
    const ramp = {
      scenario: {
        scene: { kind: "slope", massKg: 4, radiusM: 0.2, angleDeg: 15, gravityMPerS2: 9.81, body: "crate" },
        contact: { model: "linear", stiffness: 1e6, damping: { kind: "restitution", value: 0.3 }, friction: { coefficient: 0.5 } },
        integrator: "symplectic-euler",
        dtS: 1 / 60,
        substeps: 8,
        durationS: 2,
      },
      axes: [
        { parameter: "scene.angleDeg", spacing: "linear", from: 5, to: 40, count: 8 },
        { parameter: "contact.friction.coefficient", spacing: "linear", from: 0.1, to: 0.8, count: 8 },
      ],
    };
    expect(parseSweepSpec(ramp).ok).toBe(true);
    const tower = {
      scenario: {
        scene: { kind: "stack", count: 10, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81 },
        contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.3 }, friction: { coefficient: 0.5 } },
        integrator: "velocity-verlet",
        dtS: 1 / 240,
        substeps: 8,
        durationS: 1,
      },
      axes: [{ parameter: "scene.count", values: [5, 10, 20, 40] }],
    };
    expect(parseSweepSpec(tower).ok).toBe(true);
  });

  it.each([
    ["a negative μ", { coefficient: -0.1 }, "scenario.contact.friction.coefficient", /≥ 0/],
    ["μ = NaN", { coefficient: Number.NaN }, "scenario.contact.friction.coefficient", /finite number.*NaN/],
    ["μ over the limit of 10", { coefficient: 11 }, "scenario.contact.friction.coefficient", /≤ 10/],
    ["k_t ratio 0", { coefficient: 0.5, stiffnessRatio: 0 }, "scenario.contact.friction.stiffnessRatio", /> 0/],
  ])("refuses %s, naming the field and the limit", (_what, friction, field, message) => {
    const issues = issuesOf(withFriction(friction));
    expect(issues.map((issue) => issue.field)).toEqual([field]);
    expect(issues[0].message).toMatch(message);
  });

  it("refuses a stack of more discs than the limit, and an axis that reaches past it", () => {
    const tower = (count: number, axis?: unknown) => ({
      scenario: {
        scene: { kind: "stack", count, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81 },
        contact: { model: "linear", stiffness: 1e5, damping: { kind: "none" } },
        integrator: "velocity-verlet",
        dtS: 1e-3,
        durationS: 0.01,
      },
      axes: axis ? [axis] : [{ parameter: "contact.stiffness", values: [1e5, 1e6] }],
    });
    expect(fieldsOf(tower(1001))).toEqual(["scenario.scene.count"]);
    expect(issuesOf(tower(1001))[0].message).toMatch(/1,?000/);
    expect(fieldsOf(tower(10, { parameter: "scene.count", values: [10, 2000] }))).toContain("axes.0.values.1");
  });
});
