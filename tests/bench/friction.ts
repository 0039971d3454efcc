/**
 * Cost of friction per integrator step: the 1,000-disc box with the Cundall–Strack tangential law
 * (and rotation) against the same box without it, measured in the same run; and the stack scene's
 * cost per step at N = 10, 100 and 1,000 (single thread, in process).
 */
import { simulate } from "../../lib/physics/index";
import type { ContactSpec, Scenario } from "../../lib/physics/types";
import { formatSi, table, type BenchModule } from "./bench-module";
import { benchBox } from "./box-scene";

const FRICTION: ContactSpec["friction"] = { coefficient: 0.5, stiffnessRatio: 2 / 7, dampingRatio: 0.2 };

/** An invented loot-room floor: 1,000 coins at 30 % area fraction under gravity, so most touch. */
function boxScenario(friction: boolean, steps: number): Scenario {
  const contact: ContactSpec = { model: "linear", stiffness: 5e3, damping: { kind: "restitution", value: 0.5 }, ...(friction ? { friction: FRICTION } : {}) };
  return benchBox(1000, 0.3, 9.81, contact, steps);
}

function stackScenario(count: number, steps: number): Scenario {
  const dtS = 1e-4;
  return {
    scene: { kind: "stack", count, massKg: 0.05, radiusM: 0.015, gravityMPerS2: 9.81, perturbationFraction: 0.01 },
    contact: { model: "linear", stiffness: 1e6, damping: { kind: "restitution", value: 0.3 }, friction: FRICTION },
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 },
    verdictRules: 2,
    seed: 99,
  };
}

function nsPerStep(make: (steps: number) => Scenario, steps: number): number {
  simulate(make(Math.max(2, Math.floor(steps / 10)))); // warm-up
  const started = process.hrtime.bigint();
  const result = simulate(make(steps));
  return Number(process.hrtime.bigint() - started) / result.metrics.steps;
}

export const frictionBench: BenchModule = {
  id: "friction",
  title: "friction cost per step (1,000-disc box with vs without) and the stack scene at N = 10, 100, 1,000",
  async run() {
    const steps = 2000;
    // Alternate the two so a busy host slows both alike; keep the faster of two rounds each.
    const without = Math.min(nsPerStep((n) => boxScenario(false, n), steps), nsPerStep((n) => boxScenario(false, n), steps));
    const withFriction = Math.min(nsPerStep((n) => boxScenario(true, n), steps), nsPerStep((n) => boxScenario(true, n), steps));
    const box = simulate(boxScenario(true, steps));
    console.log(
      table([
        ["1,000-disc box", "ns/step", "contacts charged per step"],
        ["without friction", formatSi(without), "—"],
        ["with friction (μ 0.5, k_t 2/7 k)", formatSi(withFriction), (box.work.chargedContacts / box.work.integratedSteps).toFixed(0)],
      ]),
    );
    console.log(`friction / frictionless cost per step = ${(withFriction / without).toFixed(2)} (target ≤ 1.6)`);
    const rows: (string | number)[][] = [["stack N", "ns/step", "ns/step/disc"]];
    for (const count of [10, 100, 1000]) {
      const ns = nsPerStep((n) => stackScenario(count, n), Math.max(200, Math.round(2e6 / count)));
      rows.push([count, formatSi(ns), formatSi(ns / count)]);
    }
    console.log(table(rows));
  },
};
