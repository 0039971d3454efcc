/**
 * The contact-heavy scenes the step-kernel benchmark (contact-kernel.ts), the C peers
 * (peers/) and their agreement test share: a pair grid stepped plainly, and a settled pile in a
 * box. Invented game objects: curling-style stones of a tabletop game, "Stonewake", and the
 * coin hopper of an arcade pusher, "Penny Tide".
 */
import { simulate } from "../../lib/physics/index";
import { buildScene } from "../../lib/physics/scenes";
import { createContactField } from "../../lib/physics/contact-setup";
import { primeForces, stepFunctionFor } from "../../lib/physics/integrators";
import type { BoxScene, Scenario, SnapshotScene } from "../../lib/physics/types";

const TOLERANCES = { energyDriftRel: 0.01, maxOverlapFraction: 0.5, blowUpEnergyFactor: 1e6 };

/** Stiffness axis of the pair grid (N/m): 10 … 10⁵, log-spaced. */
export const PAIR_GRID_STIFFNESS = [1e1, 3.16e1, 1e2, 3.16e2, 1e3, 3.16e3, 1e4, 3.16e4, 1e5];
/** Step axis of the pair grid (s): 10⁻⁴ … 10⁻², log-spaced. */
export const PAIR_GRID_DT = [1e-4, 3.16e-4, 1e-3, 3.16e-3, 1e-2];
export const PAIR_GRID_DURATION_S = 4;

/** One cell of the pair grid: a 50 g stone sliding at 1 m/s into a resting one, restitution 0.8. */
export function pairGridScenario(stiffness: number, dtS: number): Scenario {
  return {
    scene: { kind: "pair", massAKg: 0.05, massBKg: 0.05, radiusAM: 0.02, radiusBM: 0.02, speedAMPerS: 1, speedBMPerS: 0, offsetFraction: 0, gapM: 0.01 },
    contact: { model: "linear", stiffness, damping: { kind: "restitution", value: 0.8 } },
    integrator: "symplectic-euler",
    dtS,
    substeps: 1,
    durationS: PAIR_GRID_DURATION_S,
    tolerances: TOLERANCES,
    verdictRules: 2,
    seed: 1,
  };
}

export function pairGridScenarios(): Scenario[] {
  const scenarios: Scenario[] = [];
  for (const stiffness of PAIR_GRID_STIFFNESS) for (const dtS of PAIR_GRID_DT) scenarios.push(pairGridScenario(stiffness, dtS));
  return scenarios;
}

/** Disc radius (m) and mass (kg) of the coin hopper. */
export const PILE_RADIUS_M = 0.01;
export const PILE_MASS_KG = 0.01;
/** Linear stiffness (N/m): ω = √(k/m_eff) = 4,000 /s for two coins (m_eff = m/2). */
export const PILE_STIFFNESS_N_PER_M = 8e4;
/** Step of the timed runs: ω·dt = 0.2. */
export const PILE_DT_S = 5e-5;
const PILE_GRAVITY = 9.81;

/**
 * The coin hopper as laid out before settling: `count` coins one per cell of cells 1.1 diameters
 * wide, 100 (N ≥ 2,500) or 50 cells across, at rest, under gravity.
 */
export function hopperBoxScene(count: number): BoxScene {
  const across = count >= 2500 ? 100 : 50;
  const rows = Math.ceil(count / across);
  const cell = 2.2 * PILE_RADIUS_M;
  return { kind: "box", count, massKg: PILE_MASS_KG, radiusM: PILE_RADIUS_M, widthM: across * cell, heightM: rows * cell, maxSpeedMPerS: 0.01, gravityMPerS2: PILE_GRAVITY };
}

/** A box-scene scenario of the hopper (linear spring-dashpot, restitution 0.5, symplectic Euler). */
export function hopperBoxScenario(count: number, steps: number, dtS = PILE_DT_S): Scenario {
  return {
    scene: hopperBoxScene(count),
    contact: { model: "linear", stiffness: PILE_STIFFNESS_N_PER_M, damping: { kind: "restitution", value: 0.5 } },
    integrator: "symplectic-euler",
    dtS,
    substeps: 1,
    durationS: steps * dtS,
    tolerances: TOLERANCES,
    verdictRules: 2,
    seed: 20,
  };
}

/**
 * The hopper after it has settled: the box scene stepped by the engine's own integrator and
 * force field for `settleS` at a coarser step and heavy damping (restitution 0.1), exported as a
 * snapshot scene (positions, velocities and walls exactly as the engine left them).
 */
export function settledHopper(count: number, settleS = 0.4): SnapshotScene {
  const boxScene = hopperBoxScene(count);
  const settleDt = 1e-4;
  const settle: Scenario = {
    ...hopperBoxScenario(count, Math.round(settleS / settleDt), settleDt),
    contact: { model: "linear", stiffness: PILE_STIFFNESS_N_PER_M, damping: { kind: "restitution", value: 0.1 } },
  };
  const setup = buildScene(boxScene, settle.seed);
  const bodies = setup.bodies;
  const field = createContactField(settle, setup.walls, setup.gravityMPerS2, bodies.count, "grid");
  const step = stepFunctionFor(settle.integrator);
  primeForces(bodies, field);
  const steps = Math.round(settleS / settleDt);
  for (let n = 0; n < steps; n++) step(bodies, field, settleDt);
  const snapshotBodies: SnapshotScene["bodies"] = [];
  for (let i = 0; i < bodies.count; i++) {
    snapshotBodies.push({ xM: bodies.x[i], yM: bodies.y[i], vxMPerS: bodies.vx[i], vyMPerS: bodies.vy[i], massKg: bodies.mass[i], radiusM: bodies.radius[i] });
  }
  return { kind: "snapshot", bodies: snapshotBodies, walls: setup.walls.map((wall) => ({ ...wall })), gravityMPerS2: PILE_GRAVITY, speedScale: 1 };
}

/** The settled hopper run for `steps` steps at ω·dt = 0.2 (linear spring-dashpot, restitution 0.5). */
export function settledHopperScenario(snapshot: SnapshotScene, steps: number): Scenario {
  return { ...hopperBoxScenario(snapshot.bodies.length, steps), scene: snapshot };
}

/** Runs a scenario with plain stepping; returns the steps taken. */
export function runPlain(scenario: Scenario): number {
  return simulate(scenario, { stepping: "plain" }).metrics.steps;
}

/**
 * A tilted bin of mixed marbles (invented: the prize bin of "Penny Tide"): `across`² discs of
 * radius 6–10 mm and densities that differ by up to 2×, one per cell of a jittered grid, with
 * seeded velocities up to `speedMPerS`, in a square bin whose walls are turned by `tiltDeg`, under
 * gravity. Mixed radii and masses keep every per-contact value changing from pair to pair; tilted
 * walls have no zero in their normals.
 */
export function mixedBin(across: number, tiltDeg: number, speedMPerS: number, seed: number): SnapshotScene {
  let state = seed >>> 0;
  const uniform = () => {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    return state / 4294967296;
  };
  const cell = 0.024;
  const side = across * cell;
  const angle = (tiltDeg * Math.PI) / 180;
  const cos = Math.cos(angle);
  const sin = Math.sin(angle);
  const bodies: SnapshotScene["bodies"] = [];
  for (let row = 0; row < across; row++) {
    for (let column = 0; column < across; column++) {
      const radiusM = 0.006 + 0.004 * uniform();
      const slack = cell / 2 - radiusM;
      const u = (column + 0.5) * cell + (2 * uniform() - 1) * slack * 0.9;
      const v = (row + 0.5) * cell + (2 * uniform() - 1) * slack * 0.9;
      const heading = 2 * Math.PI * uniform();
      const speed = speedMPerS * uniform();
      bodies.push({ xM: cos * u - sin * v, yM: sin * u + cos * v, vxMPerS: speed * Math.cos(heading), vyMPerS: speed * Math.sin(heading), massKg: 2500 * Math.PI * radiusM * radiusM * 0.01 * (1 + uniform()), radiusM });
    }
  }
  // The bin's sides in its own frame (u, v): u ≥ 0, u ≤ side, v ≥ 0, v ≤ 2·side (open headroom), turned.
  const wall = (normalU: number, normalV: number, offsetM: number) => ({ normalX: cos * normalU - sin * normalV, normalY: sin * normalU + cos * normalV, offsetM });
  return { kind: "snapshot", bodies, walls: [wall(1, 0, 0), wall(-1, 0, -side), wall(0, 1, 0), wall(0, -1, -2 * side)], gravityMPerS2: PILE_GRAVITY, speedScale: 1 };
}
