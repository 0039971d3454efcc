/**
 * Calibration of lib/sweeps/cost.ts: measures cells of every scene kind in
 * process (single thread, best of a few runs, after warm-up), fits the model's
 * constants by least squares, and prints measured / predicted for the example
 * specs and a few more, from which QUOTE_BAND is set. Copy the fitted figures
 * into CALIBRATION by hand when the engine changes.
 */
import { readFileSync, readdirSync } from "node:fs";
import path from "node:path";
import { simulate } from "../../lib/physics/index";
import type { Scenario } from "../../lib/physics/types";
import { runChunkTask } from "../../lib/sweeps/chunk-task";
import { CALIBRATION, predictSweep } from "../../lib/sweeps/cost";
import { cellCount, expandAxes } from "../../lib/sweeps/grid";
import { parseSweepSpec, stepsPerCell, type SweepSpec } from "../../lib/sweeps/spec";
import { bestOfNs, formatSi, table, type BenchModule } from "./bench-module";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 };

/** Least squares y = a + b·x. */
function fitLine(points: { x: number; y: number }[]): { a: number; b: number } {
  const n = points.length;
  const mx = points.reduce((s, p) => s + p.x, 0) / n;
  const my = points.reduce((s, p) => s + p.y, 0) / n;
  const sxy = points.reduce((s, p) => s + (p.x - mx) * (p.y - my), 0);
  const sxx = points.reduce((s, p) => s + (p.x - mx) ** 2, 0);
  const b = sxy / sxx;
  return { a: my - b * mx, b };
}

function pairScenario(stiffness: number, dtS: number, speed: number): Scenario {
  return {
    scene: { kind: "pair", massAKg: 0.05, massBKg: 0.08, radiusAM: 0.03, radiusBM: 0.03, speedAMPerS: speed, speedBMPerS: 0, offsetFraction: 0.2, gapM: 0.01 },
    contact: { model: "linear", stiffness, damping: { kind: "restitution", value: 0.8 } },
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: 1,
    tolerances: TOLERANCES,
    seed: 1,
  };
}

function wallScenario(speed: number, dtS: number): Scenario {
  return {
    scene: { kind: "wall", massKg: 0.08, radiusM: 0.0135, speedMPerS: speed, angleDeg: 20, gapM: 0.002 },
    contact: { model: "hertz", material: { youngsModulusPa: 2e9, poissonRatio: 0.35 }, damping: { kind: "restitution", value: 0.7 } },
    integrator: "symplectic-euler",
    dtS,
    substeps: 1,
    durationS: 0.5,
    tolerances: TOLERANCES,
    seed: 1,
  };
}

function rowScenario(count: number, steps: number): Scenario {
  const dtS = 1e-4;
  return {
    scene: { kind: "row", count, massKg: 0.02, radiusM: 0.01, strikerMassKg: 0.02, strikerSpeedMPerS: 2, spacingM: 0.001, gapM: 0.005 },
    contact: { model: "linear", stiffness: 2e4, damping: { kind: "none" } },
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: TOLERANCES,
    seed: 1,
  };
}

function boxScenario(count: number, steps: number, gravity: number): Scenario {
  const radiusM = 0.01;
  const sideM = Math.sqrt((count * Math.PI * radiusM * radiusM) / 0.2);
  const dtS = 2e-4;
  return {
    scene: { kind: "box", count, massKg: 0.005, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: 1, gravityMPerS2: gravity },
    contact: { model: "linear", stiffness: 5e3, damping: { kind: "coefficient", value: 0.05 } },
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: TOLERANCES,
    seed: 5,
  };
}

function measureCell(scenario: Scenario, repeats = 5): { ns: number; contactSteps: number; steps: number } {
  const result = simulate(scenario);
  const ns = bestOfNs(repeats, () => simulate(scenario));
  return { ns, contactSteps: result.metrics.contactSteps, steps: stepsPerCell(scenario) };
}

function exampleSpecs(): { name: string; spec: SweepSpec }[] {
  const dir = path.join(process.cwd(), "examples");
  return readdirSync(dir)
    .filter((file) => file.endsWith(".json"))
    .sort()
    .map((file) => {
      const parsed = parseSweepSpec(JSON.parse(readFileSync(path.join(dir, file), "utf8")));
      if (!parsed.ok) throw new Error(`${file}: ${JSON.stringify(parsed.issues)}`);
      return { name: file, spec: parsed.spec };
    });
}

export const costCalibration: BenchModule = {
  id: "cost-calibration",
  title: "cost model calibration (single thread, in process) and measured / predicted",
  async run() {
    // pair: ns = overhead + b · contactSteps
    const pairPoints: { x: number; y: number }[] = [];
    for (const stiffness of [1e3, 1e4, 1e5])
      for (const dtS of [1e-5, 1e-4, 1e-3])
        for (const speed of [1, 5]) {
          const cell = measureCell(pairScenario(stiffness, dtS, speed));
          pairPoints.push({ x: cell.contactSteps, y: cell.ns });
        }
    const pair = fitLine(pairPoints);
    const wallPoints: { x: number; y: number }[] = [];
    for (const speed of [0.5, 2, 8])
      for (const dtS of [1e-7, 1e-6, 1e-5]) {
        const cell = measureCell(wallScenario(speed, dtS));
        wallPoints.push({ x: cell.contactSteps, y: cell.ns });
      }
    const wall = fitLine(wallPoints);

    // row and box: ns per step = fixed + per body · N (sizes above the free-flight jump limit)
    const perStep = (make: (count: number, steps: number) => Scenario, counts: number[]) =>
      fitLine(
        counts.map((count) => {
          const steps = Math.max(50, Math.round(4e5 / count));
          const cell = measureCell(make(count, steps), 3);
          return { x: count + (make(count, steps).scene.kind === "row" ? 1 : 0), y: cell.ns / cell.steps };
        }),
      );
    const row = perStep(rowScenario, [100, 400, 1600]);
    const box = perStep((count, steps) => boxScenario(count, steps, 9.81), [100, 400, 1600]);

    console.log(
      table([
        ["constant", "fitted", "in CALIBRATION"],
        ["cellOverheadNs (pair intercept)", formatSi(pair.a), CALIBRATION.cellOverheadNs],
        ["wall intercept ns", formatSi(wall.a), "(cellOverheadNs)"],
        ["pairContactStepNs", formatSi(pair.b), CALIBRATION.pairContactStepNs],
        ["wallContactStepNs", formatSi(wall.b), CALIBRATION.wallContactStepNs],
        ["rowStepNs", formatSi(row.a), CALIBRATION.rowStepNs],
        ["rowBodyStepNs", formatSi(row.b), CALIBRATION.rowBodyStepNs],
        ["boxStepNs", formatSi(box.a), CALIBRATION.boxStepNs],
        ["boxBodyStepNs", formatSi(box.b), CALIBRATION.boxBodyStepNs],
      ]),
    );

    // Validation: measured compute of whole specs (as a worker measures it) against the quote.
    const specs = exampleSpecs();
    const rows: (string | number)[][] = [["spec", "cells", "predicted ms", "measured ms", "measured / predicted"]];
    const ratios: number[] = [];
    for (const { name, spec } of specs) {
      const axes = expandAxes(spec);
      const cells = cellCount(axes);
      const task = { kind: "range" as const, chunkIndex: 0, spec, firstCell: 0, cellCount: cells };
      runChunkTask(task); // warm-up, as a long-lived worker is
      const measuredNs = bestOfNs(2, () => runChunkTask(task));
      const predictedMs = predictSweep(spec, { axes, chunks: 1 }).computeMs;
      const ratio = measuredNs / 1e6 / predictedMs;
      ratios.push(ratio);
      rows.push([name, cells, predictedMs, (measuredNs / 1e6).toFixed(1), ratio.toFixed(2)]);
    }
    console.log(table(rows));
    console.log(`measured / predicted ranges ${Math.min(...ratios).toFixed(2)} … ${Math.max(...ratios).toFixed(2)} (QUOTE_BAND is stated in lib/sweeps/cost.ts)`);
  },
};
