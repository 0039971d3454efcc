import { simulate } from "@/lib/physics";
import { describe, expect, it } from "vitest";
import { identicalIntegratorsNote, increasingOrder, layerData, mapAxisFor, mapCellIndices, overlaysFor, specWithValue } from "@/components/sweeps/sweep-map-data";
import type { CellRow, SweepAxisView } from "@/components/sweeps/sweep-api";
import { expandAxes, axisValuesAt } from "@/lib/sweeps/grid";
import { parseSweepSpec, type SweepSpecInput } from "@/lib/sweeps/spec";
import { findTemplate } from "@/lib/sweeps/templates";

function axesOf(input: SweepSpecInput): SweepAxisView[] {
  const parsed = parseSweepSpec(input);
  if (!parsed.ok) throw new Error(JSON.stringify(parsed.issues));
  return expandAxes(parsed.spec).map((axis, i) => ({ path: axis.parameter, label: axis.label, unit: axis.unit, spacing: input.axes![i].spacing ?? "list", values: [...axis.values] }));
}

describe("stability map adapter", () => {
  const template = findTemplate("frame-rate-stiffness")!.spec;
  const axes = axesOf(template);
  const parsed = parseSweepSpec(template);
  if (!parsed.ok) throw new Error("template must parse");
  const expanded = expandAxes(parsed.spec);

  it("maps every map cell to the sweep cell with that x, y and slice (row-major over the spec's axes, docs/sweep-spec.md)", () => {
    for (const slice of [0, 1]) {
      const indices = mapCellIndices(axes, { x: 0, y: 1, slice: [0, 0, slice] });
      expect(indices.length).toBe(25 * 3);
      indices.forEach((cellIndex, mapIndex) => {
        const column = mapIndex % 25;
        const row = Math.floor(mapIndex / 25);
        // dt values are listed 1/120, 1/60, 1/30: already increasing, so row r is the r-th listed dt.
        expect(axisValuesAt(expanded, cellIndex)).toEqual([axes[0].values[column], axes[1].values[row], axes[2].values[slice]]);
      });
    }
  });

  it("swapping the axes transposes the mapping", () => {
    const xy = mapCellIndices(axes, { x: 0, y: 1, slice: [0, 0, 1] });
    const yx = mapCellIndices(axes, { x: 1, y: 0, slice: [0, 0, 1] });
    for (let row = 0; row < 3; row++) for (let column = 0; column < 25; column++) expect(yx[column * 3 + row]).toBe(xy[row * 25 + column]);
  });

  it("draws an axis that runs downwards in increasing order and still finds the right cells", () => {
    const downward = axesOf({ ...template, axes: [{ parameter: "contact.stiffness", spacing: "log", from: 1e6, to: 1e3, count: 4 }, template.axes![1]] });
    expect(mapAxisFor(downward[0]).values).toEqual([1e3, 1e4, 1e5, 1e6]);
    expect(increasingOrder(downward[0].values as number[])).toEqual([3, 2, 1, 0]);
    const indices = mapCellIndices(downward, { x: 0, y: 1, slice: [0, 0] });
    // Column 0 is the smallest stiffness, the last value of the axis (position 3): cell 3·3 + 0.
    expect(indices[0]).toBe(9);
    expect(mapAxisFor(downward[0]).spacing).toBe("log");
  });

  it("leaves cells not done yet as NaN / null so the map hatches them", () => {
    const indices = mapCellIndices(axes, { x: 0, y: 1, slice: [0, 0, 0] });
    const done: CellRow = {
      index: indices[0],
      axisValues: [],
      verdict: "stable",
      reason: null,
      metrics: { momentumDriftRelX: 0, momentumDriftRelY: 0, energyErrorRel: -0.25, maxEnergyErrorRel: 0.001, effectiveRestitution: null, maxOverlapFraction: 0.05, contactDurationS: null, contactSteps: 3, tunneled: false, exploded: false, steps: 120, maxOmegaH: 0.1, amplification: null },
    };
    const data = layerData(indices, new Map([[done.index, done]]), "energyErrorRel");
    expect(data.values[0]).toBe(-0.25);
    expect(Number.isNaN(data.values[1] as number)).toBe(true);
    expect(data.verdicts[0]).toBe("stable");
    expect(data.verdicts[1]).toBeNull();
    expect(layerData(indices, new Map([[done.index, done]]), "effectiveRestitution").values[0]).toBeNull();
  });

  it("puts the ω·dt = 2 bound on the frame step: dt = substeps · 2/ω", () => {
    const overlays = overlaysFor(template, "contact.stiffness", "dtS");
    const bound = overlays.find((overlay) => overlay.label.startsWith("ω·dt = 2"));
    expect(bound && "y" in bound).toBe(true);
    const massKg = (40 * 120) / (40 + 120);
    const stiffness = 1e6;
    // Linear spring ω = √(k/m); symplectic Euler and Störmer–Verlet are stable for h·ω < 2
    // (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2nd ed., 2006; from memory), h = dt / substeps.
    const expected = (4 * 2) / Math.sqrt(stiffness / massKg);
    if (bound && "y" in bound) expect(bound.y(stiffness)).toBeCloseTo(expected, 12);
    expect(overlaysFor(template, "contact.stiffness", "scene.speedAMPerS")).toEqual([]);
  });

  it("draws the tunnelling line for speed × dt against a wall at v·(dt/substeps) = radius", () => {
    const wall = findTemplate("tunnelling-speed")!.spec;
    const [line] = overlaysFor(wall, "scene.speedMPerS", "dtS");
    expect(line.label).toContain("tunnelling");
    // The wall threshold r / dt_sub of wallTunnelingThresholdSpeedMPerS (lib/physics/analytic.ts), head-on, one substep.
    if ("y" in line) expect(line.y(10)).toBeCloseTo(0.02 / 10, 15);
  });

  it("draws the sliding angle tan θ = μ over the ramp template's friction × angle map, either way round", () => {
    const ramp = findTemplate("ramp-creep")!.spec;
    const [line] = overlaysFor(ramp, "contact.friction.coefficient", "scene.angleDeg");
    expect(line.label).toContain("tan θ = μ");
    // atan 0.5 = 26.565° and atan 1 = 45° (Kleppner & Kolenkow, An Introduction to Mechanics, 2nd ed. 2014, ch. 2).
    if ("y" in line) {
      expect(line.y(0.5)).toBeCloseTo(26.565, 3);
      expect(line.y(1)).toBeCloseTo(45, 10);
    }
    const [flipped] = overlaysFor(ramp, "scene.angleDeg", "contact.friction.coefficient");
    if ("y" in flipped) expect(flipped.y(45)).toBeCloseTo(1, 12);
    // A disc that can roll slips only past tan θ = 3μ (Kleppner & Kolenkow 2014, ch. 7): atan 1.5 = 56.31° at μ = 0.5.
    const disc = { ...ramp, scenario: { ...ramp.scenario, scene: { ...ramp.scenario.scene, body: "disc" } } } as SweepSpecInput;
    const [rolling] = overlaysFor(disc, "contact.friction.coefficient", "scene.angleDeg");
    expect(rolling.label).toContain("3μ");
    if ("y" in rolling) expect(rolling.y(0.5)).toBeCloseTo(56.31, 2);
    // No line where the axes are not slope angle and friction.
    expect(overlaysFor(ramp, "contact.friction.coefficient", "contact.friction.stiffnessRatio")).toEqual([]);
  });

  it("draws the tangential bound ω_t·h = 2 over a k_t ratio × frame step map, either way round", () => {
    const ramp = findTemplate("ramp-creep")!.spec;
    // The ramp's crate (20 kg, rotation held: tangential mass m) on k = 1.15 MN/m at 4 substeps. Symplectic Euler on the
    // sticking tangential spring, a harmonic oscillator, is stable while ω_t·h < 2 with ω_t = √(ratio·k/m_t)
    // (Hairer, Lubich & Wanner, Geometric Numerical Integration, 2006): dt = 2·4·√(20/(ratio·1.15e6)).
    const [line] = overlaysFor(ramp, "contact.friction.stiffnessRatio", "dtS");
    expect(line.label).toBe("ω_t·dt = 2 (tangential stability bound)");
    if ("y" in line) {
      expect(line.y(1)).toBeCloseTo(8 * Math.sqrt(20 / 1.15e6), 15);
      expect(line.y(1)).toBeCloseTo(0.033362, 6);
      // Four times the ratio halves the frame step.
      expect(line.y(4) / line.y(1)).toBeCloseTo(0.5, 14);
    }
    // Flipped: at 60 Hz the bound sits at ratio = m_t·(2·4·60)²/k = 20·480²/1.15e6 = 4.007, above the template's 3.
    const [flipped] = overlaysFor(ramp, "dtS", "contact.friction.stiffnessRatio");
    if ("y" in flipped) {
      expect(flipped.y(1 / 60)).toBeCloseTo((20 * 480 ** 2) / 1.15e6, 10);
      expect(flipped.y(1 / 60)).toBeCloseTo(4.007, 3);
    }
    // A disc that rolls: tangential mass m/(1 + m·r²/I) = m/3 for a solid disc (I = ½·m·r²), so the bound's step is
    // √3 times shorter: dt = 8·√((20/3)/(ratio·k)).
    const disc = { ...ramp, scenario: { ...ramp.scenario, scene: { ...ramp.scenario.scene, body: "disc" } } } as SweepSpecInput;
    const [rolling] = overlaysFor(disc, "contact.friction.stiffnessRatio", "dtS");
    if ("y" in rolling) expect(rolling.y(1)).toBeCloseTo(8 * Math.sqrt(20 / 3 / 1.15e6), 15);
    // Two equal discs of a stack: 1/m_t = 2·3/m, m_t = m/6 (2 kg chests: 1/3 kg).
    const stack = findTemplate("stack-settle")!.spec;
    const withFriction = { ...stack, scenario: { ...stack.scenario, contact: { ...stack.scenario.contact, model: "linear", stiffness: 1e5, friction: { coefficient: 0.5 } } } } as SweepSpecInput;
    const [pile] = overlaysFor(withFriction, "contact.friction.stiffnessRatio", "dtS");
    const substeps = withFriction.scenario.substeps ?? 1;
    if ("y" in pile) expect(pile.y(1)).toBeCloseTo(2 * substeps * Math.sqrt(2 / 6 / 1e5), 15);
    expect([line, flipped, rolling, pile].every((overlay) => "y" in overlay)).toBe(true);
    // No tangential line when k_t is given in N/m (the ratio does not apply), nor over other axes.
    const given = { ...ramp, scenario: { ...ramp.scenario, contact: { ...ramp.scenario.contact, friction: { coefficient: 0.5, stiffness: 1e5 } } } } as SweepSpecInput;
    expect(overlaysFor(given, "contact.friction.stiffnessRatio", "dtS")).toEqual([]);
    expect(overlaysFor(ramp, "contact.friction.stiffnessRatio", "contact.friction.coefficient")).toEqual([]);
  });

  it("moves the overlays of each small map with a third axis (the radius of the tunnelling line)", () => {
    const wall = findTemplate("tunnelling-speed")!.spec;
    const [line] = overlaysFor(specWithValue(wall, "scene.radiusM", 0.04), "scene.speedMPerS", "dtS");
    // r / v for r = 0.04 m, v = 10 m/s (wallTunnelingThresholdSpeedMPerS, lib/physics/analytic.ts).
    if ("y" in line) expect(line.y(10)).toBeCloseTo(0.004, 15);
    const pair = specWithValue(findTemplate("mass-ratio-penetration")!.spec, "scene.massRatio", 4);
    expect(pair.scenario.scene.kind === "pair" && pair.scenario.scene.massBKg).toBe(8);
    expect(specWithValue(wall, "substeps", 8).scenario.substeps).toBe(8);
    // The template itself is left as it was.
    expect(wall.scenario.scene.kind === "wall" && wall.scenario.scene.radiusM).toBe(0.02);
  });
});

describe("stability map overlays over a snapshot", () => {
  it("draw the ω·dt = 2 bound for the snapshot's lightest pair of discs", () => {
    const coin = { yM: 0, vxMPerS: 0, vyMPerS: 0, massKg: 3, radiusM: 0.12 };
    const spec: SweepSpecInput = {
      scenario: {
        scene: { kind: "snapshot", bodies: [{ ...coin, xM: 0 }, { ...coin, xM: 1 }, { ...coin, xM: 3, massKg: 25, radiusM: 0.3 }], walls: [], gravityMPerS2: 0, speedScale: 1 },
        contact: { model: "linear", stiffness: 1e5 },
        integrator: "velocity-verlet",
        dtS: 1 / 240,
        durationS: 1,
      },
      axes: [
        { parameter: "contact.stiffness", spacing: "log", from: 1e4, to: 1e6, count: 3 },
        { parameter: "dtS", spacing: "log", from: 1 / 960, to: 1 / 60, count: 3 },
      ],
    };
    const bound = overlaysFor(spec, "contact.stiffness", "dtS").find((overlay) => overlay.label.startsWith("ω·dt = 2")) as { y: (x: number) => number } | undefined;
    // Two 3 kg coins: reduced mass μ = m₁m₂/(m₁ + m₂) = 1.5 kg (Goldstein, Poole & Safko 2002, Classical Mechanics, §3.1);
    // the leapfrog/Verlet step is stable for ω·h < 2 with ω = √(k/μ) (Hairer, Lubich & Wanner 2006, Geometric Numerical Integration, §I.5).
    expect(bound?.y(1e5)).toBeCloseTo(2 / Math.sqrt(1e5 / 1.5), 15);
  });
});

describe("compare view: identical integrator maps", () => {
  // Invented: "Bellhop" luggage carts bumping, undamped; engine runs, not hand-made verdicts.
  const spec = {
    scenario: {
      scene: { kind: "pair" as const, massAKg: 20, massBKg: 30, radiusAM: 0.4, radiusBM: 0.5, speedAMPerS: 1.5, speedBMPerS: 0, offsetFraction: 0.3, gapM: 0.02 },
      contact: { model: "linear" as const, stiffness: 1e5, damping: { kind: "none" as const } },
      integrator: "symplectic-euler" as const,
      dtS: 1 / 60,
      durationS: 1,
    },
    axes: [],
  };
  const verdictsOf = (integrator: "symplectic-euler" | "velocity-verlet", damping: { kind: "none" } | { kind: "restitution"; value: number }) =>
    [1e3, 1e4, 1e5, 1e6, 1e7].map((stiffness) => {
      const parsed = parseSweepSpec({ ...spec, scenario: { ...spec.scenario, integrator, contact: { ...spec.scenario.contact, stiffness, damping } } });
      if (!parsed.ok) throw new Error("spec");
      return simulate(parsed.spec.scenario).verdict;
    });

  it("says why when the contact is undamped (both integrators take the same positions), and not when damped", () => {
    const a = verdictsOf("symplectic-euler", { kind: "none" });
    const b = verdictsOf("velocity-verlet", { kind: "none" });
    expect(a).toEqual(b);
    expect(identicalIntegratorsNote(spec, "integrator", "symplectic-euler", "velocity-verlet", a, b)).toMatch(/identical because the contact is undamped/);
    const damped = { ...spec, scenario: { ...spec.scenario, contact: { ...spec.scenario.contact, damping: { kind: "restitution" as const, value: 0.5 } } } };
    const c = verdictsOf("symplectic-euler", { kind: "restitution", value: 0.5 });
    const d = verdictsOf("velocity-verlet", { kind: "restitution", value: 0.5 });
    expect(identicalIntegratorsNote(damped, "integrator", "symplectic-euler", "velocity-verlet", c, d)).toBeNull();
    expect(identicalIntegratorsNote(spec, "dtS", 1, 2, a, b)).toBeNull();
  });
});
