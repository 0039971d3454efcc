/**
 * Pair-sweep throughput through the real worker-thread pool, in cell-steps per
 * second (each cell counted as duration / dt steps, whatever the engine skips),
 * for 1 and 2 threads, and the scaling ratio.
 */
import { availableParallelism } from "node:os";
import { simulate } from "../../lib/physics/index";
import { createRunScratch } from "../../lib/physics/simulate";
import { cellCount, expandAxes, forEachCellInRange } from "../../lib/sweeps/grid";
import { planChunks } from "../../lib/sweeps/chunks";
import { createChunkPool } from "../../lib/sweeps/pool";
import { runSweep } from "../../lib/sweeps/run";
import { stepsPerCell, type SweepSpec } from "../../lib/sweeps/spec";
import { parsedSpec } from "../unit/sweeps/fixtures";
import type { Scenario } from "../../lib/physics/types";
import { formatSi, table, type BenchModule } from "./bench-module";

const TARGET_PER_THREAD = 1.5e8;
const TARGET_SCALING = 1.8;

/** An invented table-football game: ball against a player figure, a 40 × 40 × 20 grid. */
function benchSpec(): SweepSpec {
  return parsedSpec({
    name: "bench: table-football ball against a figure",
    scenario: {
      scene: { kind: "pair", massAKg: 0.024, massBKg: 0.3, radiusAM: 0.0175, radiusBM: 0.012, speedAMPerS: 6, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 },
      contact: { model: "linear", stiffness: 1e5, damping: { kind: "restitution", value: 0.75 } },
      integrator: "symplectic-euler",
      dtS: 1e-3,
      substeps: 1,
      durationS: 4,
    },
    axes: [
      { parameter: "contact.stiffness", spacing: "log", from: 1e3, to: 1e6, count: 40 },
      { parameter: "scene.speedAMPerS", spacing: "log", from: 0.5, to: 20, count: 40 },
      { parameter: "scene.offsetFraction", spacing: "linear", from: 0, to: 0.95, count: 20 },
    ],
  });
}

async function measure(spec: SweepSpec, threads: number): Promise<{ wallS: number; computeS: number; chunks: number }> {
  const pool = createChunkPool({ threads, entry: "source" });
  try {
    const axes = expandAxes(spec);
    // Planned once, as the server does when a sweep is submitted; the timed runs only run it.
    const plan = planChunks(spec, { axes, maxCellsPerChunk: Math.ceil(cellCount(axes) / 32) });
    // Warm-up: one full run starts the threads, compiles the engine and grows the heaps; then
    // the best of two timed runs.
    await runSweep(spec, { pool, axes, plan });
    let wallS = Number.POSITIVE_INFINITY;
    let computeS = 0;
    for (let attempt = 0; attempt < 2; attempt++) {
      const started = performance.now();
      const summary = await runSweep(spec, { pool, axes, plan });
      const elapsedS = (performance.now() - started) / 1e3;
      if (elapsedS < wallS) {
        wallS = elapsedS;
        computeS = summary.chunkWallNs.reduce((sum, ns) => sum + ns, 0) / 1e9;
      }
    }
    return { wallS, computeS, chunks: plan.length };
  } finally {
    await pool.close();
  }
}

export const pairThroughput: BenchModule = {
  id: "pair-throughput",
  title: "pair sweep throughput (cell-steps/s, cell = duration/dt steps), worker-thread pool",
  async run() {
    const spec = benchSpec();
    const cells = cellCount(expandAxes(spec));
    const cellSteps = cells * stepsPerCell(spec.scenario);
    console.log(`${cells} cells × ${stepsPerCell(spec.scenario)} steps = ${formatSi(cellSteps)} cell-steps; cores reported: ${availableParallelism()}`);
    const rows: (string | number)[][] = [["threads", "wall s", "worker s", "chunks", "cell-steps/s", "per thread", "target/thread"]];
    const rates: number[] = [];
    for (const threads of [1, 2]) {
      const { wallS, computeS, chunks } = await measure(spec, threads);
      const rate = cellSteps / wallS;
      rates.push(rate);
      rows.push([threads, wallS.toFixed(3), computeS.toFixed(3), chunks, formatSi(rate), formatSi(rate / threads), formatSi(TARGET_PER_THREAD)]);
    }
    // The engine alone on the same cells (main thread, cells built ahead), to separate its speed
    // from expansion, messaging and result handling.
    const scenarios: Scenario[] = [];
    forEachCellInRange(spec, expandAxes(spec), 0, cells, (cell) => scenarios.push(cell.scenario));
    // One scratch for all the cells, as a chunk of a sweep runs them (lib/sweeps/chunk-task.ts).
    const scratch = createRunScratch();
    for (let i = 0; i < scenarios.length; i += 8) simulate(scenarios[i], {}, scratch); // warm-up
    const started = performance.now();
    for (const scenario of scenarios) simulate(scenario, {}, scratch);
    const engineS = (performance.now() - started) / 1e3;
    rows.push(["engine only", engineS.toFixed(3), "", "", formatSi(cellSteps / engineS), formatSi(cellSteps / engineS), formatSi(TARGET_PER_THREAD)]);
    console.log(table(rows));
    console.log(`scaling 2 threads / 1 thread: ${(rates[1] / rates[0]).toFixed(2)} (target ≥ ${TARGET_SCALING}; the 2 cores are shared with other work, so this varies)`);
  },
};
