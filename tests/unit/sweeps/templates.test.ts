import { describe, expect, it } from "vitest";
import { simulate, slidingAccelerationMPerS2, slidingAngleDeg, staticOverlapM, DEFAULT_TOLERANCES } from "@/lib/physics";
import { cellAt, expandAxes, cellCount } from "@/lib/sweeps/grid";
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
    expect(paths("ramp-creep")).toEqual(["contact.friction.coefficient", "scene.angleDeg", "contact.friction.stiffnessRatio"]);
    expect(paths("stack-settle")).toEqual(["scene.count", "contact.stiffness"]);
  });
});

/** Every cell of a template, computed as the sweep runner computes it. */
function runTemplate(id: string, keep: (values: readonly (number | string)[]) => boolean = () => true) {
  const parsed = parseSweepSpec(findTemplate(id)!.spec);
  if (!parsed.ok) throw new Error(`${id} must parse`);
  const axes = expandAxes(parsed.spec);
  const cells = [];
  for (let index = 0; index < cellCount(axes); index++) {
    const cell = cellAt(parsed.spec, axes, index);
    if (!keep(cell.axisValues)) continue;
    cells.push({ values: cell.axisValues as number[], scenario: cell.scenario, result: simulate(cell.scenario) });
  }
  return cells;
}

describe("ramp template: where crates hold, creep and slide", () => {
  const G = 9.81;
  const cells = runTemplate("ramp-creep");
  // Cells within half a degree of the sliding angle are left out: there the margin is rounding.
  const SIDE_MARGIN_DEG = 0.5;
  const side = (coefficient: number, angleDeg: number) => {
    // A crate (rotation held) slides once tan θ > μ: Kleppner & Kolenkow, An Introduction to
    // Mechanics, 2nd ed. 2014, ch. 2 (the block on an incline with friction).
    const sliding = slidingAngleDeg(coefficient);
    return angleDeg > sliding + SIDE_MARGIN_DEG ? "slides" : angleDeg < sliding - SIDE_MARGIN_DEG ? "holds" : "on-the-line";
  };

  it("slides wherever tan θ > μ, by the distance g(sin θ − μ cos θ) gives over the second half of the run", () => {
    const above = cells.filter(({ values: [mu, angle] }) => side(mu, angle) === "slides");
    expect(above.length).toBeGreaterThan(50);
    for (const { values, scenario, result } of above) {
      const [mu, angle] = values;
      // Sliding from rest at a = g(sin θ − μ cos θ) (Kleppner & Kolenkow 2014, ch. 2): ½·a·(T² − (T/2)²) in the second half.
      const T = scenario.durationS;
      const expected = 0.5 * slidingAccelerationMPerS2(angle, G, mu) * (T * T - (T / 2) * (T / 2));
      // Just past the line the sliding acceleration is small and the crate's stick at the start (the
      // tangential spring stretching to the Coulomb limit) weighs more: there, at least half the
      // distance; well past it (a ≥ 1 m/s²), within 3 %.
      const error = (result.metrics.creepM! - expected) / expected;
      if (slidingAccelerationMPerS2(angle, G, mu) >= 1) expect(Math.abs(error), `μ ${mu}, ${angle}°`).toBeLessThan(0.03);
      else expect(error, `μ ${mu}, ${angle}°`).toBeGreaterThan(-0.5);
      // Friction never claimed to hold it: no resting verdict.
      expect(["creep", "jitter"], `μ ${mu}, ${angle}°`).not.toContain(result.verdict);
    }
  });

  it("holds wherever tan θ < μ with a tangential spring of common stiffness (k_t/k ≤ 1)", () => {
    const below = cells.filter(({ values: [mu, angle, ratio] }) => side(mu, angle) === "holds" && ratio <= 1);
    expect(below.length).toBeGreaterThan(50);
    for (const { values, scenario, result } of below) {
      expect(result.verdict, `μ ${values[0]}, ${values[1]}°, k_t/k ${values[2]}: ${result.reason}`).toBe("stable");
      expect(result.metrics.creepM!).toBeLessThan(DEFAULT_TOLERANCES.creepFraction * (scenario.scene as { radiusM: number }).radiusM);
    }
  });

  it("finds creep only where friction should hold, and finds some: the stiff tangential spring walks the crate", () => {
    const creeping = cells.filter(({ result }) => result.verdict === "creep");
    for (const { values } of creeping) expect(side(values[0], values[1]), `μ ${values[0]}, ${values[1]}°`).not.toBe("slides");
    // Clear of the line, only the tangential spring three times as stiff as the normal one creeps.
    const clearOfTheLine = creeping.filter(({ values }) => side(values[0], values[1]) === "holds");
    expect(clearOfTheLine.length).toBeGreaterThan(5);
    for (const { values } of clearOfTheLine) expect(values[2], `μ ${values[0]}, ${values[1]}°`).toBe(3);
  });
});

describe("stack template: where the pile sinks", () => {
  it("calls sinking where the bottom chest's static overlap N·m·g/k passes the resting tolerance, and not well below it", () => {
    // Soft rows only (k ≤ 56 kN/m): the stiff rows are about jitter and blow-up, not the overlap.
    const cells = runTemplate("stack-settle", ([, stiffness]) => (stiffness as number) < 60_000);
    let sinking = 0;
    for (const { values, scenario, result } of cells) {
      const [count, stiffness] = values;
      const scene = scenario.scene as { massKg: number; radiusM: number; gravityMPerS2: number };
      // Force balance k·δ = N·m·g on the bottom contact (staticOverlapM); the channel walls carry a
      // little of a perturbed pile's weight, hence the 10 % band either side of the tolerance.
      const fraction = staticOverlapM(count * scene.massKg, scene.gravityMPerS2, stiffness) / scene.radiusM / DEFAULT_TOLERANCES.restingOverlapFraction;
      if (fraction > 1.1) {
        expect(["sinking", "deep-overlap"], `${count} chests at ${stiffness} N/m`).toContain(result.verdict);
        sinking++;
      }
      if (fraction < 0.9) expect(result.verdict, `${count} chests at ${stiffness} N/m`).not.toBe("sinking");
    }
    expect(sinking).toBeGreaterThan(20);
  });
});
