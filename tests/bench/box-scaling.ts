/**
 * The box scene's cost per integrator step at N = 250, 1,000 and 4,000 discs,
 * uniform-grid broad phase against all pairs (single thread, in process). The grid figures are
 * medians of rounds that alternate the three sizes (a single timed run swung the N = 4,000 / 1,000
 * ratio by a quarter on a loaded machine); the all-pairs reference is one run per size.
 */
import { availableParallelism, loadavg } from "node:os";
import { simulate } from "../../lib/physics/index";
import type { Scenario } from "../../lib/physics/types";
import { formatSi, table, type BenchModule } from "./bench-module";
import { benchBox } from "./box-scene";

const COUNTS = [250, 1000, 4000];
const GRID_ROUNDS = 5;

/** An invented arcade game's marble tray: discs at 20 % area fraction, no gravity. */
function boxScenario(count: number, steps: number): Scenario {
  return benchBox(count, 0.2, 0, { model: "linear", stiffness: 5e3, damping: { kind: "none" } }, steps);
}

function nsPerStep(scenario: Scenario, broadPhase: "grid" | "all-pairs"): number {
  const started = process.hrtime.bigint();
  const result = simulate(scenario, { broadPhase });
  const elapsed = Number(process.hrtime.bigint() - started);
  return elapsed / result.metrics.steps;
}

function median(values: number[]): number {
  const sorted = [...values].sort((a, b) => a - b);
  return sorted[Math.floor(sorted.length / 2)];
}

function loadNote(): string {
  return `load average ${loadavg()
    .map((value) => value.toFixed(1))
    .join(" ")} on ${availableParallelism()} cores`;
}

export const boxScaling: BenchModule = {
  id: "box-scaling",
  title: "box scene cost per step vs N, grid broad phase vs all pairs",
  async run() {
    const gridScenarios = COUNTS.map((count) => boxScenario(count, Math.round(2e6 / count)));
    // Warm-up: a tenth of each run, untimed.
    for (const count of COUNTS) simulate(boxScenario(count, Math.max(2, Math.round(2e5 / count))), { broadPhase: "grid" });
    console.log(`grid rounds start: ${loadNote()}`);
    const gridNs: number[][] = COUNTS.map(() => []);
    for (let round = 0; round < GRID_ROUNDS; round++) gridScenarios.forEach((scenario, index) => gridNs[index].push(nsPerStep(scenario, "grid")));
    console.log(`grid rounds end: ${loadNote()}`);
    const rows: (string | number)[][] = [["N", "grid ns/step (median)", "all-pairs ns/step", "all-pairs / grid"]];
    const grid: Record<number, number> = {};
    COUNTS.forEach((count, index) => {
      const steps = Math.max(5, Math.round(2e7 / (count * count)));
      simulate(boxScenario(count, Math.max(2, Math.floor(steps / 10))), { broadPhase: "all-pairs" }); // warm-up
      const allPairsNs = nsPerStep(boxScenario(count, steps), "all-pairs");
      grid[count] = median(gridNs[index]);
      rows.push([count, formatSi(grid[count]), formatSi(allPairsNs), (allPairsNs / grid[count]).toFixed(1)]);
    });
    console.log(table(rows));
    console.log(`grid: N=4000 / N=1000 cost per step = ${(grid[4000] / grid[1000]).toFixed(2)} (target ≤ 5; linear scaling is 4)`);
  },
};
