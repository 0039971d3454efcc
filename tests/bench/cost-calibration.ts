/**
 * Calibration of lib/sweeps/cost.ts: measures cells of every scene kind as a
 * warm worker thread bills them (one-thread pool, best of three), fits the model's
 * constants by least squares, and prints measured / predicted for the example
 * specs and a few more, from which QUOTE_BAND is set. Copy the fitted figures
 * into CALIBRATION by hand when the engine changes.
 */
import { readFileSync, readdirSync } from "node:fs";
import path from "node:path";
import { simulate } from "../../lib/physics/index";
import type { Scenario } from "../../lib/physics/types";
import { predictSweep } from "../../lib/sweeps/chunks";
import { CALIBRATION, QUOTE_BAND } from "../../lib/sweeps/cost";
import { createChunkPool, type ChunkPool } from "../../lib/sweeps/pool";
import { runSweep } from "../../lib/sweeps/run";
import { cellCount, expandAxes } from "../../lib/sweeps/grid";
import { parseSweepSpec, stepsPerCell, type SweepSpec } from "../../lib/sweeps/spec";
import { formatSi, table, type BenchModule } from "./bench-module";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 };

/**
 * Least squares y = a + b·x with weights 1/y², i.e. minimising relative errors: a quote is
 * judged by billed / predicted, so a small cell mispredicted by 2× matters as much as a big one.
 */
function fitLine(points: { x: number; y: number }[]): { a: number; b: number } {
  let sw = 0;
  let swx = 0;
  let swy = 0;
  let swxx = 0;
  let swxy = 0;
  for (const { x, y } of points) {
    const w = 1 / (y * y);
    sw += w;
    swx += w * x;
    swy += w * y;
    swxx += w * x * x;
    swxy += w * x * y;
  }
  const b = (sw * swxy - swx * swy) / (sw * swxx - swx * swx);
  return { a: (swy - b * swx) / sw, b };
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

/**
 * Compute of one cell as a warm worker bills it: a chunk of `repeats` copies of the cell through
 * the pool, best of three chunks, divided by the copies.
 */
async function measureCell(pool: ChunkPool, scenario: Scenario, repeats: number): Promise<{ ns: number; contactSteps: number; steps: number }> {
  const result = simulate(scenario);
  const cells = Array.from({ length: repeats }, (_, index) => ({ index, axisValues: [], scenario }));
  let best = Number.POSITIVE_INFINITY;
  for (let attempt = 0; attempt < 3; attempt++) {
    const outcome = await pool.run({ kind: "cells", chunkIndex: attempt, cells });
    best = Math.min(best, outcome.wallNs / repeats);
  }
  return { ns: best, contactSteps: result.metrics.contactSteps, steps: stepsPerCell(scenario) };
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

/** Sweeps other than the examples: larger grids of each scene kind. */
function validationSpecs(): { name: string; spec: SweepSpec }[] {
  const specs: { name: string; input: unknown }[] = [
    {
      name: "pair 20×20×10 (k × speed × offset)",
      input: {
        scenario: { ...pairScenario(1e4, 1e-4, 2), tolerances: undefined, seed: undefined },
        axes: [
          { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 20 },
          { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 20 },
          { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.9, count: 10 },
        ],
      },
    },
    {
      name: "wall 30×10 (speed × dt)",
      input: {
        scenario: { ...wallScenario(2, 1e-5), tolerances: undefined, seed: undefined },
        axes: [
          { parameter: "scene.speedMPerS", spacing: "log", from: 0.1, to: 30, count: 30 },
          { parameter: "dtS", spacing: "log", from: 1e-6, to: 1e-4, count: 10 },
        ],
      },
    },
    {
      name: "row N 100…800 × k",
      input: {
        scenario: { ...rowScenario(100, 2000), tolerances: undefined, seed: undefined },
        axes: [
          { parameter: "scene.count", values: [100, 200, 400, 800] },
          { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e5, count: 3 },
        ],
      },
    },
    {
      name: "box N 50…800 × dt",
      input: {
        scenario: { ...boxScenario(800, 500, 9.81), tolerances: undefined, seed: undefined },
        axes: [
          { parameter: "scene.count", values: [50, 200, 800] },
          { parameter: "dtS", values: [1e-4, 2e-4] },
        ],
      },
    },
  ];
  return specs.map(({ name, input }) => {
    const parsed = parseSweepSpec(JSON.parse(JSON.stringify(input)));
    if (!parsed.ok) throw new Error(`${name}: ${JSON.stringify(parsed.issues)}`);
    return { name, spec: parsed.spec };
  });
}

export const costCalibration: BenchModule = {
  id: "cost-calibration",
  title: "cost model calibration (one warm worker thread) and billed / predicted",
  async run() {
    const pool = createChunkPool({ threads: 1, entry: "source" });
    try {
      await fitAndPrint(pool);
      await validate(pool);
    } finally {
      await pool.close();
    }
  },
};

async function fitAndPrint(pool: ChunkPool): Promise<void> {
  // pair: ns = overhead + b · contactSteps
  const pairPoints: { x: number; y: number }[] = [];
  for (const stiffness of [1e3, 1e4, 1e5])
    for (const dtS of [1e-5, 1e-4, 1e-3])
      for (const speed of [1, 5]) {
        const cell = await measureCell(pool, pairScenario(stiffness, dtS, speed), 200);
        pairPoints.push({ x: cell.contactSteps, y: cell.ns });
      }
  const pair = fitLine(pairPoints);
  const wallPoints: { x: number; y: number }[] = [];
  for (const speed of [0.5, 2, 8])
    for (const dtS of [1e-6, 1e-5, 1e-4]) {
      const cell = await measureCell(pool, wallScenario(speed, dtS), 100);
      wallPoints.push({ x: cell.contactSteps, y: cell.ns });
    }
  const wall = fitLine(wallPoints);

  // row and box: ns per step = fixed + per body · N (row sizes above the free-flight jump
  // limit of 64 bodies; boxes with gravity, which never jump)
  const perStep = async (make: (count: number, steps: number) => Scenario, counts: number[]) => {
    const points: { x: number; y: number }[] = [];
    for (const count of counts) {
      const steps = Math.max(50, Math.round(2e5 / count));
      const scenario = make(count, steps);
      const cell = await measureCell(pool, scenario, 1);
      points.push({ x: count + (scenario.scene.kind === "row" ? 1 : 0), y: cell.ns / cell.steps });
    }
    return fitLine(points);
  };
  const row = await perStep(rowScenario, [100, 400, 1600]);
  const box = await perStep((count, steps) => boxScenario(count, steps, 9.81), [10, 100, 1000]);

  console.log(
    table([
      ["constant", "fitted", "in CALIBRATION"],
      ["pairCellOverheadNs (pair intercept)", formatSi(pair.a), CALIBRATION.pairCellOverheadNs],
      ["cellOverheadNs (wall intercept)", formatSi(wall.a), CALIBRATION.cellOverheadNs],
      ["pairContactStepNs", formatSi(pair.b), CALIBRATION.pairContactStepNs],
      ["wallContactStepNs", formatSi(wall.b), CALIBRATION.wallContactStepNs],
      ["rowStepNs", formatSi(row.a), CALIBRATION.rowStepNs],
      ["rowBodyStepNs", formatSi(row.b), CALIBRATION.rowBodyStepNs],
      ["boxStepNs", formatSi(box.a), CALIBRATION.boxStepNs],
      ["boxBodyStepNs", formatSi(box.b), CALIBRATION.boxBodyStepNs],
    ]),
  );
}

/** The compute a worker measures (what is billed), through the pool, against the quote. */
async function validate(pool: ChunkPool): Promise<void> {
  const rows: (string | number)[][] = [["spec", "cells", "chunks", "predicted ms", "billed ms (1st run)", "billed ms (2nd run)", "billed / predicted"]];
  const ratios: number[] = [];
  for (const { name, spec } of [...exampleSpecs(), ...validationSpecs()]) {
    const axes = expandAxes(spec);
    // The first run of a spec in a thread also pays for heap growth and per-value caches; a
    // long-lived server worker mostly sees the second kind.
    const first = await runSweep(spec, { pool, axes });
    const second = await runSweep(spec, { pool, axes });
    const predictedMs = predictSweep(spec, { axes }).computeMs;
    ratios.push(first.wallMs / predictedMs, second.wallMs / predictedMs);
    rows.push([
      name,
      cellCount(axes),
      first.chunks.length,
      predictedMs,
      first.wallMs,
      second.wallMs,
      `${(first.wallMs / predictedMs).toFixed(2)}, ${(second.wallMs / predictedMs).toFixed(2)}`,
    ]);
  }
  console.log(table(rows));
  console.log(`measured / predicted ranges ${Math.min(...ratios).toFixed(2)} … ${Math.max(...ratios).toFixed(2)} (QUOTE_BAND ${QUOTE_BAND.low} … ${QUOTE_BAND.high})`);
}
