import { describe, expect, it } from "vitest";
import { expandAxes, cellCount } from "@/lib/sweeps/grid";
import { parseSweepSpec } from "@/lib/sweeps/spec";
import { SWEEP_TEMPLATES, TEMPLATE_MAX_CELLS, findTemplate } from "@/lib/sweeps/templates";

describe("sweep templates", () => {
  it("offers at least three templates with distinct ids, a title and a question", () => {
    expect(SWEEP_TEMPLATES.length).toBeGreaterThanOrEqual(3);
    expect(new Set(SWEEP_TEMPLATES.map((template) => template.id)).size).toBe(SWEEP_TEMPLATES.length);
    for (const template of SWEEP_TEMPLATES) {
      expect(template.title.length).toBeGreaterThan(0);
      expect(template.question.endsWith("?")).toBe(true);
      expect(findTemplate(template.id)).toBe(template);
    }
  });

  it.each(SWEEP_TEMPLATES.map((template) => [template.id, template] as const))("%s is a valid spec within the demo cell count", (_id, template) => {
    const parsed = parseSweepSpec(template.spec);
    if (!parsed.ok) throw new Error(`${template.id}: ${parsed.issues.map((issue) => `${issue.field}: ${issue.message}`).join("; ")}`);
    const cells = cellCount(expandAxes(parsed.spec));
    expect(cells).toBeGreaterThan(1);
    expect(cells).toBeLessThanOrEqual(TEMPLATE_MAX_CELLS);
  });

  it("covers the three questions: frame rate × stiffness with both integrators, speed × dt, mass ratio × stiffness", () => {
    const paths = (id: string) => findTemplate(id)!.spec.axes!.map((axis) => axis.parameter);
    expect(paths("frame-rate-stiffness")).toEqual(["contact.stiffness", "dtS", "integrator"]);
    expect(findTemplate("frame-rate-stiffness")!.spec.axes![2].values).toEqual(["symplectic-euler", "velocity-verlet"]);
    // 30, 60 and 120 Hz frame steps (common practice for game frame rates).
    expect(findTemplate("frame-rate-stiffness")!.spec.axes![1].values).toEqual([1 / 120, 1 / 60, 1 / 30]);
    expect(paths("tunnelling-speed")).toEqual(["scene.speedMPerS", "dtS"]);
    expect(paths("mass-ratio-penetration")).toEqual(["scene.massRatio", "contact.stiffness"]);
  });
});
