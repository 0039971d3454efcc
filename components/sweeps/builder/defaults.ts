/**
 * What the sweep builder starts from: a scene per kind, the words for scenes and integrators, the
 * defaults a spec gets in the form, and a first axis for a parameter.
 */
import type { Scenario, SceneKind } from "@/lib/physics/types";
import type { SweepableParameter } from "@/lib/sweeps/parameters";
import { SPEC_DEFAULT_TOLERANCES, scenarioValue, type SweepSpecInput } from "@/lib/sweeps/spec";
import { FRAME_STEP_PATH } from "@/lib/ui/units";

export type AxisInput = NonNullable<SweepSpecInput["axes"]>[number];

/** A starting scene per kind when the user switches scenes (invented objects, SI units). */
export const SCENE_DEFAULTS: Record<SceneKind, SweepSpecInput["scenario"]["scene"]> = {
  pair: { kind: "pair", massAKg: 0.17, massBKg: 0.17, radiusAM: 0.028, radiusBM: 0.028, speedAMPerS: 3, speedBMPerS: 0, offsetFraction: 0, gapM: 0.02 },
  wall: { kind: "wall", massKg: 0.05, radiusM: 0.02, speedMPerS: 4, angleDeg: 0, gapM: 0.02 },
  row: { kind: "row", count: 5, massKg: 0.17, radiusM: 0.028, strikerMassKg: 0.17, strikerSpeedMPerS: 2, spacingM: 0.001, gapM: 0.02 },
  box: { kind: "box", count: 40, massKg: 0.01, radiusM: 0.01, widthM: 0.5, heightM: 0.5, maxSpeedMPerS: 1, gravityMPerS2: 9.81 },
  // Three crates and a barrel rolling at a loading-bay wall (x = 0); upload a snapshot for a real floor.
  snapshot: {
    kind: "snapshot",
    bodies: [
      { xM: 0.5, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.1, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.7, yM: 0.3, vxMPerS: -2, vyMPerS: 0, massKg: 12, radiusM: 0.25 },
      { xM: 1.1, yM: 1.0, vxMPerS: -3, vyMPerS: -0.5, massKg: 40, radiusM: 0.3 },
    ],
    walls: [
      { normalX: 1, normalY: 0, offsetM: 0 },
      { normalX: 0, normalY: 1, offsetM: 0 },
    ],
    gravityMPerS2: 0,
    speedScale: 1,
  },
  // A 4 kg supply crate released on a 15° loading ramp.
  slope: { kind: "slope", massKg: 4, radiusM: 0.2, angleDeg: 15, speedMPerS: 0, spinRadPerS: 0, gravityMPerS2: 9.81, body: "crate" },
  // Ten stacked loot coins, each nudged sideways by up to 1 % of its radius.
  stack: { kind: "stack", count: 10, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81, perturbationFraction: 0.01 },
};

export const SCENE_LABELS: Record<SceneKind, string> = {
  pair: "Pair — two discs collide",
  wall: "Wall — one disc hits a wall",
  row: "Row — a striker hits a row of resting discs",
  box: "Box — many discs in a walled box",
  snapshot: "Snapshot — discs and walls exported from a game",
  slope: "Slope — one disc or crate released on a ramp (needs friction to hold)",
  stack: "Stack — a tower of discs resting on the floor",
};

export const INTEGRATOR_LABELS: Record<string, string> = {
  "symplectic-euler": "Symplectic Euler",
  "velocity-verlet": "Velocity Verlet",
  "explicit-euler": "Explicit Euler (cautionary baseline)",
};

/** A spec as the form holds it: the tolerances, substeps and axes the schema would default, written out so their fields show them. */
export function withTolerances(spec: SweepSpecInput): SweepSpecInput {
  const copy = structuredClone(spec);
  copy.scenario.tolerances ??= { ...SPEC_DEFAULT_TOLERANCES };
  copy.scenario.substeps ??= 1;
  copy.axes ??= [];
  return copy;
}

/** A sensible first axis for a parameter, centred on the scenario's current value. */
export function defaultAxis(parameter: SweepableParameter, scenario: SweepSpecInput["scenario"]): AxisInput {
  if (parameter.kind === "choice") return { parameter: parameter.path, values: parameter.choices.slice(0, 2) };
  // The frame rates games ship at, rather than a decade around the scenario's step.
  if (parameter.path === FRAME_STEP_PATH) return { parameter: parameter.path, values: [1 / 120, 1 / 60, 1 / 30] };
  let base: number | undefined;
  if (parameter.path === "scene.massRatio" && scenario.scene.kind === "pair") base = scenario.scene.massBKg / scenario.scene.massAKg;
  else {
    const value = scenarioValue(scenario as Scenario, parameter.path);
    base = typeof value === "number" ? value : undefined;
  }
  if (parameter.integer) {
    const start = Math.max(1, Math.round(base ?? 1));
    return { parameter: parameter.path, values: [start, start * 2, start * 4].filter((value) => value <= parameter.max) };
  }
  if (base !== undefined && base > 0) {
    if (parameter.suggestedSpacing === "log") return { parameter: parameter.path, spacing: "log", from: base / 10, to: Math.min(base * 10, parameter.max), count: 9 };
    return { parameter: parameter.path, spacing: "linear", from: base / 2, to: Math.min(base * 1.5, parameter.max), count: 5 };
  }
  return { parameter: parameter.path, spacing: "linear", from: 0, to: Math.min(1, parameter.max), count: 5 };
}
