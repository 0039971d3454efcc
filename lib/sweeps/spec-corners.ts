/**
 * The sweep spec's corner checks: limits that need a whole scenario (contact law, steps per cell,
 * bodies, box layout), run on the base scenario and on every corner of the grid. Each limit is
 * monotone in each parameter, so the corners (each numeric axis at its ends, every choice) bound
 * every cell of the sweep without visiting them all.
 */
import { boxSceneProblem } from "../physics/scenes";
import type { Scenario } from "../physics/types";
import { SPEC_LIMITS, formatLimit, numericRule, rangeViolation } from "./parameters";
import { applyAxisValues, axisValues, bodyCount, isIntegerParameter } from "./axes";
import type { AddIssue } from "./spec-rules";
import type { AxisSpec, SweepSpec } from "./spec";

interface ScenarioProblem {
  /** Stable id of the check, to report each check once. */
  check: string;
  /** Scenario fields the check depends on, first the most telling one. */
  paths: string[];
  message: string;
  /** How far past the limit (value / limit); the worst corner is reported. */
  severity: number;
}

function scenarioProblems(scenario: Scenario): ScenarioProblem[] {
  const problems: ScenarioProblem[] = [];
  const { contact, scene } = scenario;

  if (contact.model === "linear") {
    if (contact.stiffness === undefined) {
      problems.push({ check: "linear-stiffness", paths: ["contact.model", "contact.stiffness"], message: "the linear contact model needs contact.stiffness (N/m)", severity: 1 });
    }
    if (contact.material !== undefined) {
      problems.push({ check: "linear-material", paths: ["contact.model", "contact.material"], message: "contact.material applies to the hertz model only; the linear model takes contact.stiffness", severity: 1 });
    }
  } else if ((contact.stiffness === undefined) === (contact.material === undefined)) {
    problems.push({
      check: "hertz-stiffness",
      paths: ["contact.model", "contact.stiffness"],
      message: "the hertz contact model needs exactly one of contact.stiffness (N/m^1.5) or contact.material",
      severity: 1,
    });
  }
  if (contact.wall !== undefined && (contact.model !== "hertz" || contact.material === undefined)) {
    problems.push({ check: "wall-material", paths: ["contact.wall", "contact.material"], message: "contact.wall applies to the hertz model with contact.material only (a given stiffness is used at walls as it is)", severity: 1 });
  }

  const subStepS = scenario.dtS / scenario.substeps;
  if (scenario.durationS < subStepS) {
    problems.push({
      check: "duration-below-step",
      paths: ["durationS", "dtS", "substeps"],
      message: `durationS ${scenario.durationS} s is shorter than one integrator step (dtS / substeps = ${subStepS} s)`,
      severity: subStepS / scenario.durationS,
    });
  }
  const steps = (scenario.durationS * scenario.substeps) / scenario.dtS;
  if (steps > SPEC_LIMITS.maxStepsPerCell) {
    problems.push({
      check: "steps-per-cell",
      paths: ["dtS", "substeps", "durationS"],
      message: `steps per cell (durationS ${scenario.durationS} s × substeps ${scenario.substeps} / dtS ${scenario.dtS} s = ${formatLimit(Math.ceil(steps))}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxStepsPerCell)}`,
      severity: steps / SPEC_LIMITS.maxStepsPerCell,
    });
  }

  if (scene.kind === "pair") {
    const massBRule = numericRule("scene.massBKg", "pair");
    const massProblem = rangeViolation(massBRule, scene.massBKg);
    if (massProblem) {
      problems.push({ check: "mass-b", paths: ["scene.massRatio", "scene.massBKg", "scene.massAKg"], message: massProblem, severity: 2 });
    }
    if (!(scene.speedAMPerS + scene.speedBMPerS > 0)) {
      problems.push({
        check: "pair-approach",
        paths: ["scene.speedAMPerS", "scene.speedBMPerS"],
        message: "scene.speedAMPerS + scene.speedBMPerS must be > 0 so the discs approach; got 0",
        severity: 1,
      });
    }
  }

  if (scene.kind === "row" || scene.kind === "box" || scene.kind === "snapshot") {
    const bodies = bodyCount(scenario);
    const countPath = scene.kind === "snapshot" ? "scene.bodies" : "scene.count";
    if (bodies > SPEC_LIMITS.maxBodies) {
      problems.push({
        check: "bodies",
        paths: [countPath],
        message: `${formatLimit(bodies)} bodies exceed the limit of ${formatLimit(SPEC_LIMITS.maxBodies)}`,
        severity: bodies / SPEC_LIMITS.maxBodies,
      });
    }
    const bodySteps = bodies * Math.ceil(steps);
    if (bodySteps > SPEC_LIMITS.maxBodyStepsPerCell) {
      problems.push({
        check: "body-steps",
        paths: [countPath, "dtS", "durationS", "substeps"],
        message: `bodies × steps per cell (${formatLimit(bodies)} × ${formatLimit(Math.ceil(steps))}) exceed the limit of ${formatLimit(SPEC_LIMITS.maxBodyStepsPerCell)}`,
        severity: bodySteps / SPEC_LIMITS.maxBodyStepsPerCell,
      });
    }
  }

  if (scene.kind === "box") {
    // The engine's own layout rule (one disc per grid cell wider than a diameter), so a spec
    // accepted here is one the engine can lay out.
    const layoutProblem = boxSceneProblem(scene);
    if (layoutProblem) {
      const areaFraction = (scene.count * Math.PI * scene.radiusM * scene.radiusM) / (scene.widthM * scene.heightM);
      problems.push({
        check: "box-layout",
        paths: ["scene.count", "scene.radiusM", "scene.widthM", "scene.heightM"],
        message: layoutProblem,
        severity: areaFraction,
      });
    }
  }
  return problems;
}

function cartesian<T>(lists: readonly (readonly T[])[]): T[][] {
  let combos: T[][] = [[]];
  for (const list of lists) {
    const next: T[][] = [];
    for (const combo of combos) for (const item of list) next.push([...combo, item]);
    combos = next;
  }
  return combos;
}

/** The values of an axis that bound every monotone limit: the smallest and largest number, or every choice. */
function extremes(values: readonly (number | string)[]): (number | string)[] {
  if (typeof values[0] === "string") return [...values];
  const numbers = values as number[];
  let lo = numbers[0];
  let hi = numbers[0];
  for (const value of numbers) {
    if (value < lo) lo = value;
    if (value > hi) hi = value;
  }
  return lo === hi ? [lo] : [lo, hi];
}

/**
 * The cells at the corners of a parsed spec's grid (each numeric axis at its ends, every choice):
 * every limit that is monotone in each parameter (steps per cell, bodies) is at its worst in one of
 * them, so quotas can be checked without visiting every cell.
 */
export function cornerScenarios(spec: SweepSpec): Scenario[] {
  const sceneKind = spec.scenario.scene.kind;
  const lists = spec.axes.map((axis) => extremes(axisValues(axis, isIntegerParameter(axis.parameter, sceneKind))));
  return cartesian(lists).map((corner) => applyAxisValues(spec.scenario, spec.axes, corner));
}

function describeCorner(axes: readonly AxisSpec[], corner: readonly (number | string)[]): string {
  return axes.map((axis, i) => `${axis.parameter} = ${corner[i]}`).join(", ");
}

/** Reports the base scenario's problems at the scenario fields they concern (used when the axes are unsound). */
export function checkBaseScenario(scenario: Scenario, addIssue: AddIssue): void {
  for (const problem of scenarioProblems(scenario)) addIssue(["scenario", ...problem.paths[0].split(".")], problem.message);
}

/**
 * Runs the scenario checks on every corner of the grid and reports each failing check once, at
 * its worst corner: on the axis that sweeps the field it concerns, else on the scenario field.
 */
export function checkCorners(scenario: Scenario, axes: readonly AxisSpec[], axisValueLists: readonly (readonly (number | string)[])[], addIssue: AddIssue): void {
  const worst = new Map<string, { problem: ScenarioProblem; corner: (number | string)[] }>();
  for (const corner of cartesian(axisValueLists.map(extremes))) {
    const cellScenario = applyAxisValues(scenario, axes, corner);
    for (const problem of scenarioProblems(cellScenario)) {
      const known = worst.get(problem.check);
      if (!known || problem.severity > known.problem.severity) worst.set(problem.check, { problem, corner });
    }
  }
  for (const { problem, corner } of worst.values()) {
    const axisIndex = axes.findIndex((axis) => problem.paths.includes(axis.parameter));
    if (axisIndex >= 0) {
      addIssue(["axes", axisIndex], `at ${describeCorner(axes, corner)}: ${problem.message}`);
    } else {
      addIssue(["scenario", ...problem.paths[0].split(".")], axes.length ? `${problem.message} (at ${describeCorner(axes, corner)})` : problem.message);
    }
  }
}
