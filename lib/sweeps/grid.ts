/**
 * Expansion of a sweep spec into cells.
 *
 * Cell order is row-major over the axes in the order the spec gives them: the
 * first axis varies slowest, the last fastest. With axis lengths n0, n1, n2 the
 * cell at axis positions (i0, i1, i2) has index (i0 · n1 + i1) · n2 + i2. A
 * sweep without axes has one cell, index 0, the base scenario.
 *
 * Seeds: a cell's seed is hashFlatRecord of the cell's *scene* (its fields in
 * sorted key order, numbers by their IEEE 754 bits), keyed by the spec seed. Cells that differ only in contact, integrator, dt or
 * duration therefore start from the same seeded box layout (so a stability
 * map compares like with like), cells with different scenes get independent
 * layouts, and the seed depends on nothing but the cell's own parameters — any
 * chunking, any thread count and any later cache lookup see the same value.
 *
 * Pure: safe to import in the browser.
 */
import type { Scenario, SceneKind } from "../physics/types";
import { hashFlatRecord } from "./canonical";
import { findParameter } from "./parameters";
import { PAIR_AXIS_PATH, applicationOrder, axisSetter, axisValues, copyScenario, isIntegerParameter } from "./axes";
import type { AxisSpec, SweepSpec } from "./spec";

export interface ExpandedAxis {
  parameter: string;
  label: string;
  /** SI unit, "" for pure numbers and choices. */
  unit: string;
  values: (number | string)[];
}

export interface SweepCell {
  /** Row-major position in the grid (see the file comment). */
  index: number;
  /** One value per axis, in axis order. */
  axisValues: (number | string)[];
  /** The concrete scenario simulated for this cell (seed already derived). */
  scenario: Scenario;
}

/** The axes with their concrete values, in spec order. */
export function expandAxes(spec: SweepSpec): ExpandedAxis[] {
  const sceneKind: SceneKind = spec.scenario.scene.kind;
  return spec.axes.map((axis: AxisSpec) => {
    if (axis.parameter === PAIR_AXIS_PATH) return { parameter: axis.parameter, label: "object pair", unit: "", values: axisValues(axis) };
    const parameter = findParameter(axis.parameter, sceneKind);
    return {
      parameter: axis.parameter,
      label: parameter?.label ?? axis.parameter,
      unit: parameter?.kind === "number" ? parameter.unit : "",
      values: axisValues(axis, isIntegerParameter(axis.parameter, sceneKind)),
    };
  });
}

/** Product of the axis lengths (1 without axes). */
export function cellCount(axes: readonly ExpandedAxis[]): number {
  return axes.reduce((product, axis) => product * axis.values.length, 1);
}

/** Axis positions of a cell index (inverse of the row-major formula). */
export function axisPositions(axes: readonly ExpandedAxis[], index: number): number[] {
  const positions = new Array<number>(axes.length);
  let rest = index;
  for (let i = axes.length - 1; i >= 0; i--) {
    const length = axes[i].values.length;
    positions[i] = rest % length;
    rest = Math.floor(rest / length);
  }
  return positions;
}

/** The axis values of a cell index, without building its scenario. */
export function axisValuesAt(axes: readonly ExpandedAxis[], index: number): (number | string)[] {
  return axisPositions(axes, index).map((position, i) => axes[i].values[position]);
}

/** Row-major index of axis positions. */
export function cellIndex(axes: readonly ExpandedAxis[], positions: readonly number[]): number {
  let index = 0;
  for (let i = 0; i < axes.length; i++) index = index * axes[i].values.length + positions[i];
  return index;
}

/** The seed of a cell: a function of the spec seed and the cell's scene only. */
export function deriveCellSeed(specSeed: number, scenario: Scenario): number {
  const scene = scenario.scene;
  // A snapshot draws nothing at random; its scalar fields key the seed (the bodies are the same in every cell).
  if (scene.kind === "snapshot") return hashFlatRecord({ kind: scene.kind, gravityMPerS2: scene.gravityMPerS2, speedScale: scene.speedScale }, specSeed);
  return hashFlatRecord(scene as unknown as Record<string, number | string>, specSeed);
}

/** What expanding many cells of one spec can share: setters, application order and the seeds of scenes already seen. */
interface Expansion {
  spec: SweepSpec;
  setters: ((scenario: Scenario, value: number | string) => void)[];
  order: number[];
  /** Axes that change the scene (and so the seed). */
  sceneAxes: number[];
  seedByScene: Map<number, number>;
}

const expansions = new WeakMap<readonly ExpandedAxis[], Expansion>();

function expansionFor(spec: SweepSpec, axes: readonly ExpandedAxis[]): Expansion {
  const known = expansions.get(axes);
  if (known && known.spec === spec) return known;
  const expansion: Expansion = {
    spec,
    setters: spec.axes.map((axis: AxisSpec) => axisSetter(axis)),
    order: applicationOrder(spec.axes),
    sceneAxes: spec.axes.flatMap((axis: AxisSpec, i: number) => (axis.parameter.startsWith("scene.") ? [i] : [])),
    seedByScene: new Map(),
  };
  expansions.set(axes, expansion);
  return expansion;
}

function buildCell(spec: SweepSpec, axes: readonly ExpandedAxis[], expansion: Expansion, index: number, positions: readonly number[]): SweepCell {
  const values = new Array<number | string>(positions.length);
  for (let i = 0; i < positions.length; i++) values[i] = axes[i].values[positions[i]];
  const scenario = copyScenario(spec.scenario);
  for (const i of expansion.order) expansion.setters[i](scenario, values[i]);
  // Cells with the same scene share a seed: hash each distinct scene once.
  let sceneKey = 0;
  for (const i of expansion.sceneAxes) sceneKey = sceneKey * axes[i].values.length + positions[i];
  let seed = expansion.seedByScene.get(sceneKey);
  if (seed === undefined) {
    seed = deriveCellSeed(spec.scenario.seed, scenario);
    expansion.seedByScene.set(sceneKey, seed);
  }
  scenario.seed = seed;
  return { index, axisValues: values, scenario };
}

function checkRange(axes: readonly ExpandedAxis[], first: number, count: number): void {
  const total = cellCount(axes);
  if (!Number.isInteger(first) || !Number.isInteger(count) || first < 0 || count < 0 || first + count > total) {
    throw new RangeError(count === 1 ? `cell index ${first} is outside 0..${total - 1}` : `cells ${first}..${first + count - 1} are outside 0..${total - 1}`);
  }
}

/** One cell of the grid, built on demand (no need to hold a 262,144-cell array). */
export function cellAt(spec: SweepSpec, axes: readonly ExpandedAxis[], index: number): SweepCell {
  checkRange(axes, index, 1);
  return buildCell(spec, axes, expansionFor(spec, axes), index, axisPositions(axes, index));
}

/**
 * Visit cells [first, first + count) in index order, building each just before its visit (the
 * axis positions step like an odometer). Callers that keep only results never hold all cells.
 */
export function forEachCellInRange(spec: SweepSpec, axes: readonly ExpandedAxis[], first: number, count: number, visit: (cell: SweepCell) => void): void {
  checkRange(axes, first, count);
  if (count === 0) return;
  const expansion = expansionFor(spec, axes);
  const positions = axisPositions(axes, first);
  for (let n = 0; n < count; n++) {
    visit(buildCell(spec, axes, expansion, first + n, positions));
    for (let i = axes.length - 1; i >= 0; i--) {
      if (++positions[i] < axes[i].values.length) break;
      positions[i] = 0;
    }
  }
}

/**
 * Visit the scenarios of cells [first, first + count) in index order, written one after the other
 * into ONE scratch scenario (no copy per cell; the seed is left at the spec's): for passes that
 * only read each scenario during the visit, such as the cost model over a 262,144-cell grid.
 * Every axis's setter runs for every cell, so each visit sees exactly the fields buildCell sets.
 */
export function forEachScenarioInPlace(spec: SweepSpec, axes: readonly ExpandedAxis[], first: number, count: number, visit: (index: number, scenario: Readonly<Scenario>) => void): void {
  checkRange(axes, first, count);
  if (count === 0) return;
  const expansion = expansionFor(spec, axes);
  const positions = axisPositions(axes, first);
  const scenario = copyScenario(spec.scenario);
  for (let n = 0; n < count; n++) {
    for (const i of expansion.order) expansion.setters[i](scenario, axes[i].values[positions[i]]);
    visit(first + n, scenario);
    for (let i = axes.length - 1; i >= 0; i--) {
      if (++positions[i] < axes[i].values.length) break;
      positions[i] = 0;
    }
  }
}

/** Cells [first, first + count) in index order. */
export function cellRange(spec: SweepSpec, axes: readonly ExpandedAxis[], first: number, count: number): SweepCell[] {
  const cells: SweepCell[] = [];
  forEachCellInRange(spec, axes, first, count, (cell) => cells.push(cell));
  return cells;
}

/** Every cell of the sweep in index order. */
export function* iterateCells(spec: SweepSpec, axes: readonly ExpandedAxis[] = expandAxes(spec)): Generator<SweepCell> {
  const total = cellCount(axes);
  for (let index = 0; index < total; index++) yield cellAt(spec, axes, index);
}

/** Every cell of the sweep as an array (small sweeps, tests). */
export function expandSweep(spec: SweepSpec): SweepCell[] {
  return [...iterateCells(spec)];
}
