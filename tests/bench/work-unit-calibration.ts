/**
 * Calibration of the work-unit weights (lib/physics/work-units.ts): times cells of every scene kind
 * in this thread (best of three, so the figures approach a quiet machine), takes the engine's work
 * counts of each, and fits the weights by non-negative least squares on relative errors (each cell
 * weighted 1/time², as a bill is judged by its ratio). Prints the fitted weights beside the
 * published ones and, per scene kind, thread ns per published unit. Copy the fitted figures into
 * WORK_UNIT_WEIGHTS by hand only together with a new WORK_UNITS_VERSION (sweeps store the version
 * they were metered by). Asserts nothing.
 */
import { simulate } from "../../lib/physics/index";
import type { Scenario, WorkCounts } from "../../lib/physics/types";
import { WORK_UNIT_WEIGHTS } from "../../lib/physics/work-units";
import { expandAxes, forEachCellInRange } from "../../lib/sweeps/grid";
import { WORK_UNITS_PER_BILLED_MS } from "../../lib/sweeps/metering";
import { bestOfNs, table, type BenchModule } from "./bench-module";
import { benchSpecs } from "./metering";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 };
const NAMES = Object.keys(WORK_UNIT_WEIGHTS) as (keyof typeof WORK_UNIT_WEIGHTS)[];

/** The coefficient of each weight in a run's units (workUnitsOf is linear in the weights). */
function features(work: WorkCounts): number[] {
  const pairs = (work.bodies * (work.bodies - 1)) / 2;
  const byName: Record<keyof typeof WORK_UNIT_WEIGHTS, number> = {
    CELL: 1,
    CELL_PER_BODY: work.bodies,
    STEP: work.integratedSteps,
    BODY_STEP: work.integratedSteps * work.bodies,
    PAIR_CHECK: work.integratedSteps * (work.grid ? work.bodies : pairs),
    WALL_CHECK: work.integratedSteps * work.bodies * work.walls,
    CONTACT_LINEAR: work.hertz ? 0 : work.chargedContacts,
    CONTACT_HERTZ: work.hertz ? work.chargedContacts : 0,
    FLIGHT_CHECK: work.flightChecks,
    FLIGHT_CHECK_PAIR: work.flightChecks * (pairs + work.bodies * work.walls),
    FLIGHT_BODY_STEP: work.flightSteps * work.bodies,
    FLIGHT_BODY: work.finalFlights * work.bodies,
  };
  return NAMES.map((name) => byName[name]);
}

/** Non-negative least squares by cyclic coordinate descent (small problems; enough to calibrate). */
function nnls(rows: number[][], targets: number[], weights: number[], start: number[]): number[] {
  const x = start.slice();
  const residual = targets.map((t, i) => t - rows[i].reduce((s, a, j) => s + a * x[j], 0));
  for (let sweep = 0; sweep < 4000; sweep++) {
    for (let j = 0; j < x.length; j++) {
      let num = 0;
      let den = 0;
      for (let i = 0; i < rows.length; i++) {
        num += weights[i] * rows[i][j] * residual[i];
        den += weights[i] * rows[i][j] * rows[i][j];
      }
      if (den === 0) continue;
      const next = Math.max(0, x[j] + num / den);
      const delta = next - x[j];
      if (delta === 0) continue;
      for (let i = 0; i < rows.length; i++) residual[i] -= delta * rows[i][j];
      x[j] = next;
    }
  }
  return x;
}

function extraScenarios(): { kind: string; scenario: Scenario }[] {
  const out: { kind: string; scenario: Scenario }[] = [];
  for (const count of [8, 40, 120]) {
    out.push({
      kind: "row",
      scenario: {
        scene: { kind: "row", count, massKg: 0.02, radiusM: 0.01, strikerMassKg: 0.02, strikerSpeedMPerS: 2, spacingM: 0.001, gapM: 0.005 },
        contact: { model: "linear", stiffness: 2e4, damping: { kind: "none" } },
        integrator: "velocity-verlet",
        dtS: 1e-4,
        substeps: 1,
        durationS: 0.05,
        tolerances: TOLERANCES,
        seed: 1,
      },
    });
  }
  for (const [count, gravity] of [[30, 0], [150, 9.81], [400, 0]] as const) {
    const radiusM = 0.01;
    const sideM = Math.sqrt((count * Math.PI * radiusM * radiusM) / 0.3);
    out.push({
      kind: "box",
      scenario: {
        scene: { kind: "box", count, massKg: 0.005, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: 1, gravityMPerS2: gravity },
        contact: { model: "linear", stiffness: 5e3, damping: { kind: "coefficient", value: 0.05 } },
        integrator: "velocity-verlet",
        dtS: 2e-4,
        substeps: 1,
        durationS: 0.1,
        tolerances: TOLERANCES,
        seed: 5,
      },
    });
  }
  return out;
}

export const workUnitCalibration: BenchModule = {
  id: "work-unit-calibration",
  title: "Fit of the work-unit weights to thread time on this machine",
  async run() {
    const samples: { kind: string; ns: number; work: WorkCounts; units: number }[] = [];
    const add = (kind: string, scenario: Scenario) => {
      const run = simulate(scenario);
      samples.push({ kind, ns: bestOfNs(3, () => simulate(scenario)), work: run.work, units: run.workUnits });
    };
    for (const { spec } of benchSpecs()) {
      const axes = expandAxes(spec);
      const total = axes.reduce((n, axis) => n * axis.values.length, 1);
      const step = Math.max(1, Math.floor(total / 40));
      for (let index = 0; index < total; index += step) forEachCellInRange(spec, axes, index, 1, (cell) => add(cell.scenario.scene.kind, cell.scenario));
    }
    for (const { kind, scenario } of extraScenarios()) add(kind, scenario);

    const rows = samples.map((s) => features(s.work));
    const targets = samples.map((s) => s.ns * (WORK_UNITS_PER_BILLED_MS / 1e6));
    const fitted = nnls(
      rows,
      targets,
      targets.map((t) => 1 / (t * t)),
      NAMES.map((name) => WORK_UNIT_WEIGHTS[name]),
    );
    const weightRows: (string | number)[][] = [["weight", "published", "fitted here"]];
    NAMES.forEach((name, j) => weightRows.push([name, WORK_UNIT_WEIGHTS[name], Math.round(fitted[j])]));
    console.log(table(weightRows));

    const kinds = [...new Set(samples.map((s) => s.kind))];
    const kindRows: (string | number)[][] = [["scene", "cells", "thread ns per published unit (median)", "min", "max"]];
    for (const kind of kinds) {
      const ratios = samples.filter((s) => s.kind === kind).map((s) => (s.ns * (WORK_UNITS_PER_BILLED_MS / 1e6)) / s.units).sort((a, b) => a - b);
      kindRows.push([kind, ratios.length, ratios[Math.floor(ratios.length / 2)].toFixed(2), ratios[0].toFixed(2), ratios[ratios.length - 1].toFixed(2)]);
    }
    console.log(`\n${table(kindRows)}`);
  },
};
