import type { ContactSpec, Scenario } from "../../lib/physics/types";

/**
 * The box scene the step-cost benches time: `count` discs of 1 cm radius and 5 g filling
 * `areaFraction` of a square box, run `steps` steps of velocity Verlet at 0.2 ms.
 */
export function benchBox(count: number, areaFraction: number, gravityMPerS2: number, contact: ContactSpec, steps: number): Scenario {
  const radiusM = 0.01;
  const sideM = Math.sqrt((count * Math.PI * radiusM * radiusM) / areaFraction);
  const dtS = 2e-4;
  return {
    scene: { kind: "box", count, massKg: 0.005, radiusM, widthM: sideM, heightM: sideM, maxSpeedMPerS: 1, gravityMPerS2 },
    contact,
    integrator: "velocity-verlet",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: { energyDriftRel: 0.01, maxOverlapFraction: 0.1, blowUpEnergyFactor: 1e3 },
    seed: 99,
  };
}
