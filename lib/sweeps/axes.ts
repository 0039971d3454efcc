/**
 * Axis values and how they are written into a scenario. Kept apart from the
 * zod schema so the worker-thread bundle does not carry zod.
 *
 * Pure: safe to import in the browser.
 */
import { totalSubsteps } from "../physics/simulate";
import type { Scenario, SceneKind } from "../physics/types";
import { findParameter } from "./parameters";

/**
 * An axis as these helpers read it. The spec's zod schema (lib/sweeps/spec.ts) is the source of
 * truth; its parsed AxisFields must be assignable to this (checked there at compile time), so this
 * module needs nothing from the schema module and the worker bundle stays free of zod.
 */
export interface AxisFields {
  parameter: string;
  spacing?: "linear" | "log";
  from?: number;
  to?: number;
  count?: number;
  values?: (number | string)[];
  /** scene.pair only: what each value (a pair name) sets. */
  pairs?: {
    name: string;
    massAKg: number;
    radiusAM: number;
    speedAMPerS: number;
    massBKg: number;
    radiusBM: number;
    speedBMPerS: number;
    stiffness?: number;
    restitution?: number;
    friction?: number;
    rollingResistance?: number;
  }[];
}

/**
 * The values of one axis, in order. Range axes: `count` points from `from` to
 * `to`, both ends exact; linear points are from·(1 − t) + to·t, log points
 * 10^(log10(from)·(1 − t) + log10(to)·t), with t = i / (count − 1). Integer parameters (substeps,
 * scene.count) round each point to the nearest integer.
 * List axes: the values as written.
 */
export function axisValues(axis: AxisFields, integer = false): (number | string)[] {
  if (axis.values) return [...axis.values];
  const from = axis.from as number;
  const to = axis.to as number;
  const count = axis.count as number;
  const values: number[] = new Array(count);
  const last = count - 1;
  for (let i = 0; i < count; i++) {
    let value: number;
    if (i === 0) value = from;
    else if (i === last) value = to;
    else {
      const t = i / last;
      // Log points interpolate the decade exponent, so decade ends give round interior points (1e3 → 1e6: 1e4, 1e5).
      value = axis.spacing === "log" ? Math.pow(10, Math.log10(from) * (1 - t) + Math.log10(to) * t) : from * (1 - t) + to * t;
    }
    values[i] = integer ? Math.round(value) : value;
  }
  return values;
}

/** Whether the path sweeps a whole-number parameter (values are rounded). */
export function isIntegerParameter(path: string, sceneKind: SceneKind): boolean {
  const parameter = findParameter(path, sceneKind);
  return parameter?.kind === "number" && parameter.integer;
}

/** A copy of the scenario deep enough that setting any sweepable field leaves the original alone. */
export function copyScenario(scenario: Scenario): Scenario {
  const contact: Scenario["contact"] = { ...scenario.contact, damping: { ...scenario.contact.damping } };
  if (scenario.contact.material) contact.material = { ...scenario.contact.material };
  // Friction axes write into contact.friction: each cell needs its own (else cells share one, and
  // the spec's own scenario ends holding the last cell's values).
  if (scenario.contact.friction) contact.friction = { ...scenario.contact.friction };
  return { ...scenario, scene: { ...scenario.scene }, contact, tolerances: { ...scenario.tolerances } };
}

type FieldSetter = (scenario: Scenario, value: number | string) => void;

/** The pseudo parameter of a list axis over object pairs (catalogue checks): each value names one entry of the axis's `pairs`. */
export const PAIR_AXIS_PATH = "scene.pair";
/** The pseudo parameter that scales both speeds of a pair cell: a fraction of the pair's closing speed. */
export const CLOSING_SPEED_FRACTION_PATH = "scene.closingSpeedFraction";
/** Axes applied after every other axis, in this order (each reads fields the others set). */
const APPLIED_LAST = ["scene.massRatio", CLOSING_SPEED_FRACTION_PATH];

/**
 * A setter that writes one axis value into a scenario copy in place
 * (scene.massRatio sets massBKg from the copy's massAKg, so apply it last).
 */
export function fieldSetter(path: string): FieldSetter {
  switch (path) {
    case "integrator":
      return (scenario, value) => void (scenario.integrator = value as Scenario["integrator"]);
    case "contact.model":
      return (scenario, value) => void (scenario.contact.model = value as Scenario["contact"]["model"]);
    case "contact.damping.coefficient":
    case "contact.damping.restitution":
      return (scenario, value) => void ((scenario.contact.damping as { value: number }).value = value as number);
    case "scene.massRatio":
      return (scenario, value) => {
        if (scenario.scene.kind === "pair") scenario.scene.massBKg = scenario.scene.massAKg * (value as number);
      };
    case CLOSING_SPEED_FRACTION_PATH:
      return (scenario, value) => {
        if (scenario.scene.kind !== "pair") return;
        scenario.scene.speedAMPerS *= value as number;
        scenario.scene.speedBMPerS *= value as number;
      };
  }
  const keys = path.split(".");
  const last = keys[keys.length - 1];
  const parents = keys.slice(0, -1);
  return (scenario, value) => {
    let node = scenario as unknown as Record<string, unknown>;
    for (const key of parents) node = node[key] as Record<string, unknown>;
    node[last] = value;
  };
}

/**
 * A setter for one axis. A pair axis writes both bodies of the named pair (masses, radii, top
 * speeds and, when the pair carries them, the contact stiffness, target restitution, friction
 * coefficient and rolling resistance); every other axis writes its field.
 */
export function axisSetter(axis: AxisFields): FieldSetter {
  if (axis.parameter !== PAIR_AXIS_PATH) return fieldSetter(axis.parameter);
  const byName = new Map((axis.pairs ?? []).map((pair) => [pair.name, pair]));
  return (scenario, value) => {
    const pair = byName.get(value as string);
    if (!pair || scenario.scene.kind !== "pair") return;
    const scene = scenario.scene;
    scene.massAKg = pair.massAKg;
    scene.radiusAM = pair.radiusAM;
    scene.speedAMPerS = pair.speedAMPerS;
    scene.massBKg = pair.massBKg;
    scene.radiusBM = pair.radiusBM;
    scene.speedBMPerS = pair.speedBMPerS;
    if (pair.stiffness !== undefined) scenario.contact.stiffness = pair.stiffness;
    if (pair.restitution !== undefined && scenario.contact.damping.kind === "restitution") scenario.contact.damping.value = pair.restitution;
    // The pair's μ with the scenario's other friction settings (a copy: the cell's own, see copyScenario).
    if (pair.friction !== undefined) scenario.contact.friction = { ...scenario.contact.friction, coefficient: pair.friction };
    if (pair.rollingResistance !== undefined) scenario.contact.rollingResistance = pair.rollingResistance;
  };
}

/**
 * Axes in the order their values must be applied: a pair axis first (it sets both bodies), then
 * the others, then scene.massRatio (so it sees the cell's own massAKg) and
 * scene.closingSpeedFraction (so it scales the cell's own speeds).
 */
export function applicationOrder(axes: readonly AxisFields[]): number[] {
  // Rank 0: the pair axis; 1: ordinary axes; 2, 3, …: APPLIED_LAST in its order. Ties keep the spec order.
  const rank = (path: string) => (path === PAIR_AXIS_PATH ? 0 : APPLIED_LAST.includes(path) ? 2 + APPLIED_LAST.indexOf(path) : 1);
  return axes
    .map((axis, i) => ({ i, rank: rank(axis.parameter) }))
    .sort((a, b) => a.rank - b.rank || a.i - b.i)
    .map((entry) => entry.i);
}

/** A copy of the base scenario with one value per axis applied. */
export function applyAxisValues(base: Scenario, axes: readonly AxisFields[], values: readonly (number | string)[]): Scenario {
  const scenario = copyScenario(base);
  for (const i of applicationOrder(axes)) axisSetter(axes[i])(scenario, values[i]);
  return scenario;
}

/** Integrator steps of one cell, ⌈durationS / (dtS / substeps)⌉: the engine's own count. */
export function stepsPerCell(scenario: Pick<Scenario, "durationS" | "dtS" | "substeps">): number {
  return totalSubsteps(scenario);
}

/** Discs simulated in a scene (the row counts its striker). */
export function bodyCount(scenario: Scenario): number {
  switch (scenario.scene.kind) {
    case "pair":
      return 2;
    case "wall":
      return 1;
    case "row":
      return scenario.scene.count + 1;
    case "box":
      return scenario.scene.count;
    case "snapshot":
      return scenario.scene.bodies.length;
    case "slope":
      return 1;
    case "stack":
      return scenario.scene.count;
  }
}
