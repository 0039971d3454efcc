/**
 * Work units: the engine's deterministic integer count of the work one run did, the basis of
 * billing (lib/sweeps/metering.ts turns them into billed compute milliseconds at a fixed rate).
 *
 * The count depends only on what the run did — integrator steps, bodies, the pairs its broad phase
 * examines, the contacts it evaluates, the steps it advanced by the free-flight shortcut — never on
 * a clock, so the same scenario yields the same count on any machine, thread, chunking or load.
 *
 * Model (version WORK_UNITS_VERSION; every weight an integer, roughly nanoseconds of one thread of
 * the reference machine, fitted by tests/bench/work-unit-calibration.ts):
 *   cell      = CELL + CELL_PER_BODY·n
 *   each integrated step
 *             = STEP + BODY_STEP·n + PAIR_CHECK·p + WALL_CHECK·n·w + CONTACT_(LINEAR|HERTZ)·min(c, cap)
 *     n bodies, w walls, p pairs the broad phase examines (all pairs: n(n−1)/2; the grid: n, its cost
 *     being linear in the bodies), c contacts evaluated in the step (disc pairs and disc–wall
 *     overlaps), cap = the most contacts a step is charged for (contactCap)
 *   each free-flight look-ahead (time to the next contact)
 *             = FLIGHT_CHECK + FLIGHT_CHECK_PAIR·(n(n−1)/2 + n·w)
 *   each free-flight jump over k steps
 *             = FLIGHT_BODY_STEP·n·k before a contact (positions advanced step by step),
 *               FLIGHT_BODY·n after the last one (one product)
 *
 * Why this bounds a cell from its spec alone (workUnitCeiling): every pass of the run loop covers
 * at least one step; a pass costs at most one look-ahead, one jump (over k ≥ 2 steps, each charged
 * FLIGHT_BODY_STEP·n ≤ the plain step) and one integrated step, so no run costs more than
 * CELL + totalSteps·(plain step with cap contacts + look-ahead). A run that ends early (it blew up)
 * or jumps over free flight costs less.
 */
import type { Scenario, WorkCounts } from "./types";

/** Stored with every sweep metered by these weights; a change of weights is a new version. */
export const WORK_UNITS_VERSION = 1;

export const WORK_UNIT_WEIGHTS = Object.freeze({
  CELL: 5_000,
  CELL_PER_BODY: 300,
  STEP: 10,
  BODY_STEP: 60,
  PAIR_CHECK: 25,
  WALL_CHECK: 30,
  CONTACT_LINEAR: 160,
  CONTACT_HERTZ: 1_000,
  FLIGHT_CHECK: 400,
  FLIGHT_CHECK_PAIR: 10,
  FLIGHT_BODY_STEP: 10,
  FLIGHT_BODY: 100,
});

/** Contacts charged per body and step at most (a disc among equal discs touches about six pairs, each shared by two; walls add a few). */
export const CONTACTS_CHARGED_PER_BODY = 4;

/** The most contacts one step is charged for: every pair and wall contact, at most CONTACTS_CHARGED_PER_BODY per body. */
export function contactCap(bodies: number, walls: number): number {
  return Math.min((bodies * (bodies - 1)) / 2 + bodies * walls, CONTACTS_CHARGED_PER_BODY * bodies);
}

/** Pairs the broad phase examines per step. */
export function pairChecksPerStep(bodies: number, grid: boolean): number {
  return grid ? bodies : (bodies * (bodies - 1)) / 2;
}

/** Units of one integrated step before its contacts. */
export function stepBaseUnits(bodies: number, walls: number, grid: boolean): number {
  const w = WORK_UNIT_WEIGHTS;
  return w.STEP + w.BODY_STEP * bodies + w.PAIR_CHECK * pairChecksPerStep(bodies, grid) + w.WALL_CHECK * bodies * walls;
}

/** Units of one free-flight look-ahead. */
export function flightCheckUnits(bodies: number, walls: number): number {
  return WORK_UNIT_WEIGHTS.FLIGHT_CHECK + WORK_UNIT_WEIGHTS.FLIGHT_CHECK_PAIR * ((bodies * (bodies - 1)) / 2 + bodies * walls);
}

/** Units of a cell's set-up, metrics and verdict. */
export function cellBaseUnits(bodies: number): number {
  return WORK_UNIT_WEIGHTS.CELL + WORK_UNIT_WEIGHTS.CELL_PER_BODY * bodies;
}

function contactWeight(hertz: boolean): number {
  return hertz ? WORK_UNIT_WEIGHTS.CONTACT_HERTZ : WORK_UNIT_WEIGHTS.CONTACT_LINEAR;
}

/** The work units of a run's counts: an integer (every weight and count is one). */
export function workUnitsOf(work: WorkCounts): number {
  const w = WORK_UNIT_WEIGHTS;
  return (
    cellBaseUnits(work.bodies) +
    work.integratedSteps * stepBaseUnits(work.bodies, work.walls, work.grid) +
    work.chargedContacts * contactWeight(work.hertz) +
    work.flightChecks * flightCheckUnits(work.bodies, work.walls) +
    work.flightSteps * w.FLIGHT_BODY_STEP * work.bodies +
    work.finalFlights * w.FLIGHT_BODY * work.bodies
  );
}

/** What decides a cell's work-unit bound: its steps, bodies, walls, contact model and whether it may use the shortcuts. */
export interface WorkShape {
  steps: number;
  bodies: number;
  walls: number;
  grid: boolean;
  hertz: boolean;
  /** Free flight may be skipped (small gravity-free scenes). */
  jumps: boolean;
}

/** The most work units a cell of this shape can cost (see the module comment). */
export function workUnitCeiling(shape: WorkShape): number {
  const perStep =
    stepBaseUnits(shape.bodies, shape.walls, shape.grid) + contactWeight(shape.hertz) * contactCap(shape.bodies, shape.walls) + (shape.jumps ? flightCheckUnits(shape.bodies, shape.walls) : 0);
  return cellBaseUnits(shape.bodies) + shape.steps * perStep;
}

/** Walls of a scene (as buildScene makes them), without building it. */
export function wallCount(scenario: Scenario): number {
  switch (scenario.scene.kind) {
    case "pair":
    case "row":
      return 0;
    case "wall":
      return 1;
    case "box":
      return 4;
    case "snapshot":
      return scenario.scene.walls.length;
    case "slope":
      return 1;
    case "stack":
      return 3;
  }
}
