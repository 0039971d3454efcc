/**
 * The safe envelope on hand-made verdict grids. Expected limits are worked out by hand from the
 * rule documented in lib/sweeps/envelope.ts (our own definition; no outside reference).
 */
import { describe, expect, it } from "vitest";
import type { Verdict } from "../../../lib/physics/types";
import { computeEnvelope, envelopeFriction, envelopeFrictionSchema, EnvelopeInputError } from "../../../lib/sweeps/envelope";
import { cellIndex, expandAxes, type ExpandedAxis } from "../../../lib/sweeps/grid";
import { parseSweepSpec, type SweepSpecInput } from "../../../lib/sweeps/spec";
import { findTemplate } from "../../../lib/sweeps/templates";

const axis = (parameter: string, values: (number | string)[]): ExpandedAxis => ({ parameter, label: parameter, unit: "", values });

/** A 2-axis grid from rows of "s" (stable) / "x" (exploded) / "." (not done), one row per x value. */
function grid(rows: string[], yValues: number[], xValues: (number | string)[] = rows.map((_, i) => i + 1)) {
  const axes = [axis("integrator", xValues), axis("dtS", yValues)];
  const verdicts = new Map<number, Verdict>();
  rows.forEach((row, ix) =>
    [...row].forEach((mark, iy) => {
      if (mark !== ".") verdicts.set(cellIndex(axes, [ix, iy]), mark === "s" ? "stable" : "exploded");
    }),
  );
  return { axes, verdictAt: (index: number) => verdicts.get(index) };
}

const Y = [1, 2, 4, 8, 10];

describe("computeEnvelope", () => {
  it("bound max with margin 0 gives the last stable y of the walk from the start; a row meeting an uncomputed cell is pending", () => {
    const g = grid(["ssxss", "sssss", "xssss", "ss.ss"], Y);
    const env = computeEnvelope({ ...g, x: 0, y: 1, margin: 0, bound: "max" });
    // Row 0 stops at y=4 (unstable) → 2; row 1 never stops → 10; row 2 unstable at the start → none;
    // row 3 meets a cell not done yet → pending (never "none stable"). Stable cells beyond a gap are not reached.
    expect(env.rows).toEqual([
      { x: 1, safeY: 2, yLimit: 2, status: "ok" },
      { x: 2, safeY: 10, yLimit: 10, status: "ok" },
      { x: 3, safeY: null, yLimit: null, status: "none-stable" },
      { x: 4, safeY: null, yLimit: null, status: "pending" },
    ]);
    expect(env.xPath).toBe("integrator");
    expect(env.yPath).toBe("dtS");
  });

  it("applies the margin exactly as the help text says: limit = (1 − margin) × safe", () => {
    const g = grid(["sssxs", "sssss"], Y);
    // Row 0: safe 4; 0.5 × 4 = 2; 0.9 × 4 = 3.6 (not snapped to a grid value). Row 1: safe 10 → 5.
    expect(computeEnvelope({ ...g, x: 0, y: 1, margin: 0.5, bound: "max" }).rows.map((row) => row.yLimit)).toEqual([2, 5]);
    expect(computeEnvelope({ ...g, x: 0, y: 1, margin: 0.1, bound: "max" }).rows[0].yLimit).toBe(0.9 * 4);
    // Issue 14's browser finding: a 10 % margin on 5.64 ms is 0.9 × 5.64 = 5.076 ms.
    const ms = grid(["ssx"], [4.1e-3, 5.64e-3, 7e-3]);
    expect(computeEnvelope({ ...ms, x: 0, y: 1, margin: 0.1, bound: "max" }).rows[0].yLimit).toBe(0.9 * 5.64e-3);
  });

  it("bound min walks down from the last y; limit = safe / (1 − margin)", () => {
    const g = grid(["xssss", "sxsss", "sssss"], Y);
    // Row 0: walk 10, 8, 4, 2, then 1 is unstable → safe 2; margin 0.5 → 4.
    expect(computeEnvelope({ ...g, x: 0, y: 1, margin: 0, bound: "min" }).rows.map((r) => r.yLimit)).toEqual([2, 4, 1]);
    expect(computeEnvelope({ ...g, x: 0, y: 1, margin: 0.5, bound: "min" }).rows[0].yLimit).toBe(4);
  });

  it("keeps other axes at the positions given", () => {
    const axes = [axis("a", [1, 2]), axis("b", [1, 2, 3]), axis("c", [10, 20])];
    const stable = new Set([cellIndex(axes, [0, 0, 1]), cellIndex(axes, [0, 1, 1]), cellIndex(axes, [0, 2, 1])]);
    const verdictAt = (index: number): Verdict => (stable.has(index) ? "stable" : "tunneled");
    expect(computeEnvelope({ axes, verdictAt, x: 2, y: 1, margin: 0, bound: "max", at: [0, 0, 0] }).rows).toEqual([
      { x: 10, safeY: null, yLimit: null, status: "none-stable" },
      { x: 20, safeY: 3, yLimit: 3, status: "ok" },
    ]);
    expect(computeEnvelope({ axes, verdictAt, x: 2, y: 1, margin: 0, bound: "max", at: [1, 0, 0] }).rows[1].yLimit).toBeNull();
  });

  it("names the field for inputs it cannot answer", () => {
    const g = grid(["sss"], [1, 2, 3], ["velocity-verlet"]);
    const failure = (input: Partial<Parameters<typeof computeEnvelope>[0]>) => {
      try {
        computeEnvelope({ ...g, x: 0, y: 1, margin: 0, bound: "max", ...input });
      } catch (error) {
        return error instanceof EnvelopeInputError ? error.field : "other";
      }
      return "none";
    };
    expect(failure({ x: 2 })).toBe("x");
    expect(failure({ y: 0 })).toBe("y");
    expect(failure({ margin: 0.95 })).toBe("margin");
    expect(failure({ margin: -0.1 })).toBe("margin");
    expect(failure({ bound: "up" as never })).toBe("bound");
    expect(failure({ x: 1, y: 0 })).toBe("y"); // y = integrator lists choices
    expect(failure({ at: [0] })).toBe("at");
    const negative = grid(["sss"], [-1, 0, 1]);
    expect(() => computeEnvelope({ ...negative, x: 0, y: 1, margin: 0.2, bound: "max" })).toThrow(/values ≤ 0/);
  });
});

describe("envelopeFriction: the friction settings beside the normal ones", () => {
  const frictionOf = (input: SweepSpecInput) => {
    const parsed = parseSweepSpec(input);
    if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
    return envelopeFriction(parsed.spec, expandAxes(parsed.spec));
  };

  it("lists the swept μ and k_t ratios of the ramp template, with the fixed tangential damping and no rolling resistance", () => {
    const friction = frictionOf(findTemplate("ramp-creep")!.spec);
    expect(envelopeFrictionSchema.safeParse(friction).success).toBe(true);
    if (friction.kind !== "coulomb") throw new Error("the ramp template has friction");
    expect(friction.coefficient).toHaveLength(10);
    expect(friction.coefficient[0]).toBeCloseTo(0.1, 12);
    expect(friction.coefficient[9]).toBeCloseTo(1, 12);
    expect(friction.stiffnessRatio).toEqual([2 / 7, 1, 3]);
    expect(friction.stiffnessNPerM).toBeNull();
    expect(friction.staticCoefficient).toBeNull();
    expect(friction.dampingRatio).toEqual([0.5]);
    expect(friction.rollingResistance).toEqual([0]);
  });

  it("says none for a frictionless sweep, and gives k_t in N/m (no ratio) when the spec sets it so", () => {
    const frictionless = findTemplate("frame-rate-stiffness")!.spec;
    expect(frictionOf(frictionless)).toEqual({ kind: "none" });
    const given: SweepSpecInput = {
      ...frictionless,
      scenario: { ...frictionless.scenario, contact: { ...frictionless.scenario.contact, friction: { coefficient: 0.3, staticCoefficient: 0.45, stiffness: 5000 }, rollingResistance: 0.02 } },
      axes: [frictionless.axes![0], { parameter: "contact.rollingResistance", values: [0.05, 0.01] }],
    };
    // Default tangential damping 0 (docs/sweep-spec.md); the swept μ_r sorted ascending.
    expect(frictionOf(given)).toEqual({ kind: "coulomb", model: "cundall-strack", coefficient: [0.3], staticCoefficient: [0.45], stiffnessRatio: null, stiffnessNPerM: [5000], dampingRatio: [0], rollingResistance: [0.01, 0.05] });
  });
});
