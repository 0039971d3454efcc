/**
 * The sweep spec's axis rules: what each axis must be (a known parameter that applies to the
 * scene, a sound list or range, a contact set-up it needs), which axes may not be swept together,
 * and the cell limit; then the corner checks (./spec-corners.ts) on the grid they span. Each rule
 * is a small named check that reports at the field it concerns and says whether the axis is sound.
 */
import type { ContactSpec, Scenario } from "../physics/types";
import { SPEC_LIMITS, findParameter, formatLimit, rangeViolation, scenesOfPath, SWEEPABLE_PATHS, type NumericParameter, type SweepableParameter } from "./parameters";
import { PAIR_AXIS_PATH, axisValues } from "./axes";
import { checkBaseScenario, checkCorners } from "./spec-corners";
import type { AxisSpec } from "./spec";

/** Reports a problem at a path of the spec (the zod refinement's addIssue). */
export type AddIssue = (path: (string | number)[], message: string) => void;

/** The path of a field of one axis: ["axes", index, …rest]. */
type AxisPath = (...rest: (string | number)[]) => (string | number)[];

/** Axis values, or null when the axis is unsound (its problems are reported). */
type AxisValues = (number | string)[] | null;

/** Per-axis checks; returns the axis values when the axis is sound. */
function checkAxis(axis: AxisSpec, index: number, scenario: Scenario, addIssue: AddIssue): AxisValues {
  const at: AxisPath = (...rest) => ["axes", index, ...rest];
  if (axis.parameter === PAIR_AXIS_PATH) return checkPairAxis(axis, scenario, at, addIssue);
  const parameter = checkAxisParameter(axis, scenario, at, addIssue);
  if (!parameter || !checkContactPrerequisite(axis, scenario.contact, at, addIssue)) return null;
  if (parameter.kind === "choice") return checkChoiceAxis(axis, parameter.choices, at, addIssue);
  if (axis.values !== undefined) return checkNumberList(axis, axis.values, parameter, at, addIssue);
  return checkRangeAxis(axis, parameter, at, addIssue);
}

/** The axis names a sweepable parameter of the scenario's scene, without pairs or an overlong list. */
function checkAxisParameter(axis: AxisSpec, scenario: Scenario, at: AxisPath, addIssue: AddIssue): SweepableParameter | null {
  const sceneKind = scenario.scene.kind;
  if (axis.pairs !== undefined) {
    addIssue(at("pairs"), `pairs belong to a ${PAIR_AXIS_PATH} axis only`);
    return null;
  }
  if (axis.values !== undefined && axis.values.length > SPEC_LIMITS.maxListValues) {
    addIssue(at("values"), `values may list at most ${SPEC_LIMITS.maxListValues} entries`);
    return null;
  }
  if (!SWEEPABLE_PATHS.includes(axis.parameter)) {
    addIssue(at("parameter"), `unknown parameter "${axis.parameter}"; sweepable parameters: ${SWEEPABLE_PATHS.join(", ")}`);
    return null;
  }
  const parameter = findParameter(axis.parameter, sceneKind);
  if (!parameter) addIssue(at("parameter"), `${axis.parameter} does not apply to the ${sceneKind} scene (it applies to: ${scenesOfPath(axis.parameter).join(", ")})`);
  return parameter ?? null;
}

/** Parameters that exist only with a matching contact set-up. */
function checkContactPrerequisite(axis: AxisSpec, contact: ContactSpec, at: AxisPath, addIssue: AddIssue): boolean {
  const needs = (condition: boolean, message: string) => {
    if (!condition) addIssue(at("parameter"), message);
    return condition;
  };
  const parameter = axis.parameter;
  if (parameter === "contact.stiffness") return needs(contact.material === undefined, "contact.stiffness cannot be swept while contact.material sets the Hertz stiffness");
  if (parameter.startsWith("contact.material.")) return needs(contact.material !== undefined, `${parameter} needs contact.material in the scenario`);
  if (parameter === "contact.damping.coefficient") return needs(contact.damping.kind === "coefficient", `contact.damping.coefficient needs scenario.contact.damping.kind "coefficient"; it is "${contact.damping.kind}"`);
  if (parameter === "contact.damping.restitution") return needs(contact.damping.kind === "restitution", `contact.damping.restitution needs scenario.contact.damping.kind "restitution"; it is "${contact.damping.kind}"`);
  return true;
}

/** Whether the axis gives any of spacing, from, to or count (the range fields). */
function hasRangeFields(axis: AxisSpec): boolean {
  return axis.spacing !== undefined || axis.from !== undefined || axis.to !== undefined || axis.count !== undefined;
}

/**
 * The listed values, each checked by `problemOf` (a message, or null when the value is sound) and
 * all distinct; `what` names the values in the distinctness message.
 */
function checkListValues(values: readonly (number | string)[], what: string, problemOf: (value: number | string) => string | null, at: AxisPath, addIssue: AddIssue): AxisValues {
  let sound = true;
  values.forEach((value, j) => {
    const problem = problemOf(value);
    if (problem) {
      addIssue(at("values", j), problem);
      sound = false;
    }
  });
  if (!sound) return null;
  if (new Set(values).size !== values.length) {
    addIssue(at("values"), `${what} must be distinct`);
    return null;
  }
  return [...values];
}

/** A choice axis (integrator, contact model): its choices listed in values. */
function checkChoiceAxis(axis: AxisSpec, choices: readonly string[], at: AxisPath, addIssue: AddIssue): AxisValues {
  if (!axis.values || hasRangeFields(axis)) {
    addIssue(at("values"), `${axis.parameter} is a choice: list the choices in values (${choices.join(", ")}), without spacing, from, to or count`);
    return null;
  }
  const problemOf = (value: number | string) => (typeof value !== "string" || !choices.includes(value) ? `${axis.parameter} must be one of ${choices.join(", ")}; got ${JSON.stringify(value)}` : null);
  return checkListValues(axis.values, `values of ${axis.parameter}`, problemOf, at, addIssue);
}

/** A numeric parameter given as a list of numbers, each in the parameter's range. */
function checkNumberList(axis: AxisSpec, values: readonly (number | string)[], parameter: NumericParameter, at: AxisPath, addIssue: AddIssue): AxisValues {
  if (hasRangeFields(axis)) {
    addIssue(at("values"), "give either values or spacing/from/to/count, not both");
    return null;
  }
  const problemOf = (value: number | string) => (typeof value === "number" ? rangeViolation(parameter, value) : `${parameter.label} must be a number; got ${JSON.stringify(value)}`);
  return checkListValues(values, `values of ${axis.parameter}`, problemOf, at, addIssue);
}

/** A numeric parameter given as a range: every range field present, the ends in range, sound spacing and count. */
function checkRangeAxis(axis: AxisSpec, parameter: NumericParameter, at: AxisPath, addIssue: AddIssue): AxisValues {
  if (!checkRangeFields(axis, parameter, at, addIssue) || !checkRangeCount(axis, at, addIssue)) return null;
  const values = axisValues(axis, parameter.integer);
  if (parameter.integer && !checkWholeNumberRange(axis, parameter, values, at, addIssue)) return null;
  return values;
}

/** spacing, from, to and count are all given, and from and to lie in the parameter's range. */
function checkRangeFields(axis: AxisSpec, parameter: NumericParameter, at: AxisPath, addIssue: AddIssue): boolean {
  let sound = true;
  for (const key of ["spacing", "from", "to", "count"] as const) {
    if (axis[key] === undefined) {
      addIssue(at(key), `${key} is required for a range axis of ${axis.parameter} (or give values)`);
      sound = false;
    }
  }
  if (!sound) return false;
  for (const key of ["from", "to"] as const) {
    // Whole-number parameters are checked for integer ends below, with a clearer message.
    const problem = rangeViolation({ ...parameter, integer: false }, axis[key] as number);
    if (problem) {
      addIssue(at(key), problem);
      sound = false;
    }
  }
  return sound;
}

/** Log spacing has positive ends; count 1 means from = to and from = to means count 1; count within the sweep's cells. */
function checkRangeCount(axis: AxisSpec, at: AxisPath, addIssue: AddIssue): boolean {
  const from = axis.from as number;
  const to = axis.to as number;
  const count = axis.count as number;
  if (axis.spacing === "log" && !(from > 0 && to > 0)) {
    addIssue(at(from > 0 ? "to" : "from"), `log spacing needs from and to > 0; got from ${from}, to ${to}`);
    return false;
  }
  if (count === 1 && from !== to) {
    addIssue(at("count"), `count 1 takes a single value: set from = to (got from ${from}, to ${to}) or use values`);
    return false;
  }
  if (count > 1 && from === to) {
    addIssue(at("count"), `from = to = ${from} gives one value; count must be 1 (got ${count})`);
    return false;
  }
  if (count > SPEC_LIMITS.maxCellsPerSweep) {
    addIssue(at("count"), `count ${formatLimit(count)} exceeds the limit of ${formatLimit(SPEC_LIMITS.maxCellsPerSweep)} cells per sweep`);
    return false;
  }
  return true;
}

/** A whole-number parameter's range has integer ends and gives `count` distinct values. */
function checkWholeNumberRange(axis: AxisSpec, parameter: NumericParameter, values: readonly (number | string)[], at: AxisPath, addIssue: AddIssue): boolean {
  for (const key of ["from", "to"] as const) {
    if (!Number.isInteger(axis[key])) {
      addIssue(at(key), `${parameter.label} is a whole number: ${key} must be an integer; got ${axis[key]}`);
      return false;
    }
  }
  const distinct = new Set(values).size;
  if (distinct !== values.length) {
    addIssue(at("count"), `${parameter.label} is a whole number: from ${axis.from} to ${axis.to} gives only ${distinct} distinct values with ${axis.spacing} spacing; count ${axis.count} asked`);
    return false;
  }
  return true;
}

/** Scene fields a pair axis sets: no other axis may sweep them. */
const PAIR_AXIS_FIELDS = ["scene.massAKg", "scene.massBKg", "scene.massRatio", "scene.radiusAM", "scene.radiusBM", "scene.speedAMPerS", "scene.speedBMPerS"];

/** A scene.pair axis: a list of pair names in values, each defined once, in the same order, in pairs. */
function checkPairAxis(axis: AxisSpec, scenario: Scenario, at: AxisPath, addIssue: AddIssue): string[] | null {
  if (scenario.scene.kind !== "pair") {
    addIssue(at("parameter"), `${PAIR_AXIS_PATH} applies to the pair scene only (the scenario's scene is ${scenario.scene.kind})`);
    return null;
  }
  if (hasRangeFields(axis)) {
    addIssue(at("values"), `${PAIR_AXIS_PATH} is a list axis: give values (pair names) and pairs, without spacing, from, to or count`);
    return null;
  }
  if (!axis.values || !axis.pairs) {
    addIssue(at(axis.values ? "pairs" : "values"), `${PAIR_AXIS_PATH} needs values (the pair names) and pairs (what each name sets), in the same order`);
    return null;
  }
  if (axis.values.length !== axis.pairs.length) {
    addIssue(at("pairs"), `values list ${axis.values.length} pair names but pairs defines ${axis.pairs.length}`);
    return null;
  }
  let sound = true;
  axis.values.forEach((value, j) => {
    if (value !== axis.pairs?.[j].name) {
      addIssue(at("values", j), `values.${j} must be the name of pairs.${j} (${JSON.stringify(axis.pairs?.[j].name)}); got ${JSON.stringify(value)}`);
      sound = false;
    }
  });
  if (!sound) return null;
  if (new Set(axis.values).size !== axis.values.length) {
    addIssue(at("values"), `pair names on ${PAIR_AXIS_PATH} must be distinct`);
    return null;
  }
  const perPairStiffness = axis.pairs.some((pair) => pair.stiffness !== undefined);
  if (perPairStiffness && !axis.pairs.every((pair) => pair.stiffness !== undefined)) {
    addIssue(at("pairs"), "give a stiffness for every pair or for none");
    return null;
  }
  if (perPairStiffness && scenario.contact.material !== undefined) {
    addIssue(at("pairs"), "pairs with their own stiffness cannot be used while contact.material sets the Hertz stiffness");
    return null;
  }
  const perPairRestitution = axis.pairs.some((pair) => pair.restitution !== undefined);
  if (perPairRestitution && !axis.pairs.every((pair) => pair.restitution !== undefined)) {
    addIssue(at("pairs"), "give a restitution for every pair or for none");
    return null;
  }
  if (perPairRestitution && scenario.contact.damping.kind !== "restitution") {
    addIssue(at("pairs"), `pairs with their own restitution need scenario.contact.damping.kind "restitution"; it is "${scenario.contact.damping.kind}"`);
    return null;
  }
  for (const field of ["friction", "rollingResistance"] as const) {
    const given = axis.pairs.filter((pair) => pair[field] !== undefined).length;
    if (given > 0 && given < axis.pairs.length) {
      addIssue(at("pairs"), `give a ${field === "friction" ? "friction" : "rollingResistance"} for every pair or for none`);
      return null;
    }
  }
  for (const [j, pair] of axis.pairs.entries()) {
    if (!(pair.speedAMPerS + pair.speedBMPerS > 0)) {
      addIssue(at("pairs", j), `pair ${JSON.stringify(pair.name)}: speedAMPerS + speedBMPerS must be > 0 so the discs approach`);
      return null;
    }
  }
  return [...axis.values] as string[];
}

/**
 * Axes that may not be swept together: the same parameter twice, a field the pair axis sets (its
 * scene fields, and stiffness, restitution, friction or rolling resistance when its pairs set
 * them), scene.massRatio with scene.massBKg. `seen` maps each parameter to its first axis.
 */
function checkAxisClashes(axes: readonly AxisSpec[], seen: ReadonlyMap<string, number>, addIssue: AddIssue): boolean {
  let sound = true;
  const clash = (axisIndex: number, message: string) => {
    addIssue(["axes", axisIndex, "parameter"], message);
    sound = false;
  };
  const pairAxis = seen.get(PAIR_AXIS_PATH);
  if (pairAxis !== undefined) {
    for (const field of PAIR_AXIS_FIELDS) {
      const other = seen.get(field);
      if (other !== undefined) clash(other, `${field} is set by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
    }
    for (const [field, path] of PER_PAIR_FIELDS) {
      const other = seen.get(path);
      if (other !== undefined && axes[pairAxis].pairs?.some((pair) => pair[field] !== undefined)) {
        clash(other, `${path} is set per pair by the ${PAIR_AXIS_PATH} axis (axes.${pairAxis}): it cannot be swept as well`);
      }
    }
  }
  const massRatioAxis = seen.get("scene.massRatio");
  if (massRatioAxis !== undefined && seen.has("scene.massBKg")) clash(massRatioAxis, "scene.massRatio sets massBKg: it cannot be swept together with scene.massBKg");
  return sound;
}

/** What a pair of a pair axis may set for itself, and the scenario parameter it then owns. */
const PER_PAIR_FIELDS = [
  ["stiffness", "contact.stiffness"],
  ["restitution", "contact.damping.restitution"],
  ["friction", "contact.friction.coefficient"],
  ["rollingResistance", "contact.rollingResistance"],
] as const;

/** The sweep's cells (the product of the axes' lengths) within the limit. */
function checkCellCount(axisValueLists: readonly (readonly (number | string)[])[], addIssue: AddIssue): boolean {
  const cells = axisValueLists.reduce((product, values) => product * values.length, 1);
  if (cells <= SPEC_LIMITS.maxCellsPerSweep) return true;
  addIssue(["axes"], `${formatLimit(cells)} cells (${axisValueLists.map((values) => formatLimit(values.length)).join(" × ")}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxCellsPerSweep)} cells per sweep`);
  return false;
}

/** Every rule of a parsed spec: each axis, the clashes between axes, the cell limit, then the grid's corners. */
export function checkSweep(scenario: Scenario, axes: readonly AxisSpec[], addIssue: AddIssue): void {
  const axisValueLists: (number | string)[][] = [];
  let axesSound = true;
  const seen = new Map<string, number>();
  axes.forEach((axis, i) => {
    const earlier = seen.get(axis.parameter);
    if (earlier !== undefined) {
      addIssue(["axes", i, "parameter"], `${axis.parameter} is already swept by axes.${earlier}`);
      axesSound = false;
      return;
    }
    seen.set(axis.parameter, i);
    const values = checkAxis(axis, i, scenario, addIssue);
    if (values) axisValueLists.push(values);
    else axesSound = false;
  });
  if (!checkAxisClashes(axes, seen, addIssue)) axesSound = false;
  if (!axesSound) {
    // Still check the base scenario on its own.
    checkBaseScenario(scenario, addIssue);
    return;
  }
  if (!checkCellCount(axisValueLists, addIssue)) return;
  checkCorners(scenario, axes, axisValueLists, addIssue);
}
