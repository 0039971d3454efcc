/** The scene.pair list axis and scene.closingSpeedFraction: what each cell simulates, and what the schema refuses. */
import { describe, expect, it } from "vitest";
import { cellAt, expandAxes } from "@/lib/sweeps/grid";
import { AXIS_ONLY_PATHS, NUMERIC_PARAMETERS } from "@/lib/sweeps/parameters";
import { parseSweepSpec, type SweepSpecInput } from "@/lib/sweeps/spec";

function spec(axes: SweepSpecInput["axes"], damping: "none" | "restitution" = "restitution"): SweepSpecInput {
  return {
    scenario: {
      scene: { kind: "pair", massAKg: 1, massBKg: 1, radiusAM: 0.1, radiusBM: 0.1, speedAMPerS: 1, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 },
      contact: { model: "linear", stiffness: 1e4, damping: damping === "none" ? { kind: "none" } : { kind: "restitution", value: 0.5 } },
      integrator: "symplectic-euler",
      dtS: 1 / 60,
      substeps: 8,
      durationS: 0.5,
    },
    axes,
  };
}

const pairs = [
  { name: "crate × coin", massAKg: 3, radiusAM: 0.4, speedAMPerS: 2.5, massBKg: 0.6, radiusBM: 0.25, speedBMPerS: 3, stiffness: 2e4, restitution: 0.4 },
  { name: "coin × coin", massAKg: 0.6, radiusAM: 0.25, speedAMPerS: 3, massBKg: 0.6, radiusBM: 0.25, speedBMPerS: 3, stiffness: 3e4, restitution: 0.6 },
];

describe("scene.pair", () => {
  it("sets both bodies, stiffness and restitution of each cell; the fraction then scales both speeds", () => {
    const parsed = parseSweepSpec(spec([{ parameter: "scene.closingSpeedFraction", values: [0.5, 1] }, { parameter: "scene.pair", values: pairs.map((p) => p.name), pairs }]));
    expect(parsed.ok ? [] : parsed.issues).toEqual([]);
    if (!parsed.ok) return;
    const axes = expandAxes(parsed.spec);
    expect(axes[1]).toMatchObject({ parameter: "scene.pair", label: "object pair", values: ["crate × coin", "coin × coin"] });
    // Cell (fraction 0.5, pair coin × coin): the pair applies first even though its axis comes second.
    const cell = cellAt(parsed.spec, axes, 1);
    expect(cell.scenario.scene).toMatchObject({ massAKg: 0.6, massBKg: 0.6, radiusAM: 0.25, speedAMPerS: 1.5, speedBMPerS: 1.5 });
    expect(cell.scenario.contact.stiffness).toBe(3e4);
    expect(cell.scenario.contact.damping).toEqual({ kind: "restitution", value: 0.6 });
    // The base scenario is untouched.
    expect(parsed.spec.scenario.contact.stiffness).toBe(1e4);
  });

  it("refuses mismatched names, axes that sweep what a pair sets, and restitution without restitution damping", () => {
    const bad = (axes: SweepSpecInput["axes"], damping: "none" | "restitution" = "restitution") => {
      const parsed = parseSweepSpec(spec(axes, damping));
      return parsed.ok ? [] : parsed.issues.map((issue) => `${issue.field}: ${issue.message}`);
    };
    expect(bad([{ parameter: "scene.pair", values: ["crate × coin", "oops"], pairs }])).toEqual(['axes.0.values.1: values.1 must be the name of pairs.1 ("coin × coin"); got "oops"']);
    expect(bad([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs }, { parameter: "scene.massAKg", values: [1, 2] }])).toEqual([
      "axes.1.parameter: scene.massAKg is set by the scene.pair axis (axes.0): it cannot be swept as well",
    ]);
    expect(bad([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs }], "none")).toEqual([
      'axes.0.pairs: pairs with their own restitution need scenario.contact.damping.kind "restitution"; it is "none"',
    ]);
    expect(bad([{ parameter: "scene.offsetFraction", values: [0], pairs }])).toEqual(["axes.0.pairs: pairs belong to a scene.pair axis only"]);
  });

  it("sets each cell's friction coefficient and rolling resistance from its pair, keeping the scenario's other friction settings", () => {
    const input = spec([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: [{ ...pairs[0], friction: 0.5, rollingResistance: 0.01 }, { ...pairs[1], friction: 0, rollingResistance: 0 }] }]);
    input.scenario.contact.friction = { coefficient: 0.3, stiffnessRatio: 1 };
    const parsed = parseSweepSpec(input);
    expect(parsed.ok ? [] : parsed.issues).toEqual([]);
    if (!parsed.ok) return;
    const axes = expandAxes(parsed.spec);
    expect(cellAt(parsed.spec, axes, 0).scenario.contact).toMatchObject({ friction: { coefficient: 0.5, stiffnessRatio: 1 }, rollingResistance: 0.01 });
    expect(cellAt(parsed.spec, axes, 1).scenario.contact).toMatchObject({ friction: { coefficient: 0, stiffnessRatio: 1 }, rollingResistance: 0 });
    expect(parsed.spec.scenario.contact.friction).toEqual({ coefficient: 0.3, stiffnessRatio: 1 });
  });

  it("refuses per-pair friction out of range, given for some pairs only, or swept by another axis as well", () => {
    const bad = (axes: SweepSpecInput["axes"]) => {
      const parsed = parseSweepSpec(spec(axes));
      return parsed.ok ? [] : parsed.issues.map((issue) => issue.field);
    };
    const withFriction = (a: number | undefined, b: number | undefined) => [{ ...pairs[0], friction: a }, { ...pairs[1], friction: b }];
    expect(bad([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: withFriction(-0.1, 0.2) }])).toEqual(["axes.0.pairs.0.friction"]);
    expect(bad([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: withFriction(0.2, Number.NaN) }])).toEqual(["axes.0.pairs.1.friction"]);
    expect(bad([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: withFriction(0.2, 11) }])).toEqual(["axes.0.pairs.1.friction"]);
    const some = parseSweepSpec(spec([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: withFriction(0.2, undefined) }]));
    expect(some.ok ? [] : some.issues.map((issue) => `${issue.field}: ${issue.message}`)).toEqual(["axes.0.pairs: give a friction for every pair or for none"]);
    const swept = spec([{ parameter: "scene.pair", values: pairs.map((p) => p.name), pairs: withFriction(0.2, 0.4) }, { parameter: "contact.friction.coefficient", values: [0.1, 0.2] }]);
    swept.scenario.contact.friction = { coefficient: 0.1 };
    const clash = parseSweepSpec(swept);
    expect(clash.ok ? [] : clash.issues.map((issue) => `${issue.field}: ${issue.message}`)).toEqual([
      "axes.1.parameter: contact.friction.coefficient is set per pair by the scene.pair axis (axes.0): it cannot be swept as well",
    ]);
  });
});

describe("scenario fields a form may offer", () => {
  const base = spec([]);
  const withSceneField = (path: string, value: number) => ({ ...base, scenario: { ...base.scenario, scene: { ...base.scenario.scene, [path.slice("scene.".length)]: value } } });
  it("axis-only parameters are not fields of a scene: a spec that sets one there is refused", () => {
    for (const path of AXIS_ONLY_PATHS) {
      const parsed = parseSweepSpec(withSceneField(path, 1));
      expect(parsed.ok, path).toBe(false);
    }
  });
  it("every other pair parameter is a field the scene accepts", () => {
    const offered = NUMERIC_PARAMETERS.filter((p) => p.path.startsWith("scene.") && !AXIS_ONLY_PATHS.has(p.path) && p.scenes !== "all" && p.scenes.includes("pair"));
    expect(offered.length).toBeGreaterThan(0);
    for (const parameter of offered) {
      const current = (base.scenario.scene as Record<string, unknown>)[parameter.path.slice("scene.".length)] as number;
      expect(parseSweepSpec(withSceneField(parameter.path, current)).ok, parameter.path).toBe(true);
    }
  });
});
