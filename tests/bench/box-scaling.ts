/**
 * The box scene's cost per integrator step at N = 250, 1,000 and 4,000 discs,
 * uniform-grid broad phase against all pairs (single thread, in process).
 */
import { simulate } from "../../lib/physics/index";
import type { Scenario } from "../../lib/physics/types";
import { formatSi, table, type BenchModule } from "./bench-module";

/** An invented arcade game's marble tray: discs at 20 % area fraction, no gravity. */
function boxScenario(count: number, steps: number): Scenario {
  const radiusM = 0.01;
  const sideM = Math.sqrt((count * Math.PI * radiusM * radiusM) / 0.2);
  const dtS = 2e-4;
  return {
    scene: { kind: "box", count, massKg: 0.005, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: 1, gravityMPerS2: 0 },
    contact: { model: "linear", stiffness: 5e3, damping: { kind: "none" } },
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 },
    seed: 99,
  };
}

function nsPerStep(count: number, broadPhase: "grid" | "all-pairs", steps: number): number {
  const scenario = boxScenario(count, steps);
  simulate(boxScenario(count, Math.max(2, Math.floor(steps / 10))), { broadPhase }); // warm-up
  const started = process.hrtime.bigint();
  const result = simulate(scenario, { broadPhase });
  const elapsed = Number(process.hrtime.bigint() - started);
  return elapsed / result.metrics.steps;
}

export const boxScaling: BenchModule = {
  id: "box-scaling",
  title: "box scene cost per step vs N, grid broad phase vs all pairs",
  async run() {
    const rows: (string | number)[][] = [["N", "grid ns/step", "all-pairs ns/step", "all-pairs / grid"]];
    const grid: Record<number, number> = {};
    for (const count of [250, 1000, 4000]) {
      const gridNs = nsPerStep(count, "grid", Math.round(2e6 / count));
      const allPairsNs = nsPerStep(count, "all-pairs", Math.max(5, Math.round(2e7 / (count * count))));
      grid[count] = gridNs;
      rows.push([count, formatSi(gridNs), formatSi(allPairsNs), (allPairsNs / gridNs).toFixed(1)]);
    }
    console.log(table(rows));
    console.log(`grid: N=4000 / N=1000 cost per step = ${(grid[4000] / grid[1000]).toFixed(2)} (target ≤ 5; linear scaling is 4)`);
  },
};
