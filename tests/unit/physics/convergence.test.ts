import { describe, expect, it } from "vitest";
import { buildScene } from "@/lib/physics/scenes";
import { createContactField } from "@/lib/physics/contact-setup";
import { advance, primeForces } from "@/lib/physics/integrators";
import type { ContactSpec, IntegratorName, Scenario } from "@/lib/physics";
import { linearContact, logLogSlope, scenario, solveODE } from "./fixtures";

// Invented: a 0.05 kg "Pebbleclash" token pressing into the arena wall, already in contact.
const massKg = 0.05;
const radiusM = 0.015;
const speedMPerS = 0.8;
const initialOverlapM = 2e-4;

interface Case {
  name: string;
  contact: ContactSpec;
  force: (overlap: number, rate: number) => number;
  horizonS: number;
}

const linearK = 4e4;
const linearC = 10;
const hertzK = 3e7;
const hertzEta = 1.5e3;

const cases: Case[] = [
  { name: "linear spring–dashpot", contact: linearContact(linearK, { kind: "coefficient", value: linearC }), force: (d, r) => linearK * d + linearC * r, horizonS: 1.5e-3 },
  {
    name: "Hertz with Tsuji-type damping",
    contact: { model: "hertz", stiffness: hertzK, damping: { kind: "coefficient", value: hertzEta } },
    force: (d, r) => hertzK * Math.pow(Math.max(d, 0), 1.5) + hertzEta * Math.pow(Math.max(d, 0), 0.25) * r,
    horizonS: 4e-4,
  },
];

function engineOverlapAt(integrator: IntegratorName, contact: ContactSpec, horizonS: number, steps: number): number {
  const base: Scenario = scenario({ kind: "wall", massKg, radiusM, speedMPerS, angleDeg: 0, gapM: 0 }, contact, integrator, horizonS / steps, horizonS);
  const setup = buildScene(base.scene, base.seed);
  setup.bodies.x[0] = radiusM - initialOverlapM; // start inside the contact, away from the δ = 0 kink
  const field = createContactField(base, setup.walls, 0, 1);
  primeForces(setup.bodies, field);
  advance(integrator, setup.bodies, field, horizonS / steps, steps);
  return radiusM - setup.bodies.x[0];
}

describe("convergence against an independent ODE solution", () => {
  it.each(cases)("$name: velocity Verlet converges at second order, symplectic Euler at first", ({ contact, force, horizonS }) => {
    // Reference: mathjs solveODE (Dormand–Prince RK45) with tol 1e-11 on m·δ'' = −F(δ, δ') (overlap clamped at 0 only to keep trial stages finite).
    const reference = solveODE((_t: number, y: number[]) => [y[1], -force(y[0], y[1]) / massKg], [0, horizonS], [initialOverlapM, speedMPerS], { tol: 1e-11, firstStep: horizonS / 1e4, maxStep: horizonS / 200, maxIter: 1e5 });
    const [referenceOverlap, referenceRate] = reference.y[reference.y.length - 1];
    expect(referenceOverlap).toBeGreaterThan(0); // still in contact at the horizon …
    expect(force(referenceOverlap, referenceRate)).toBeGreaterThan(0); // … and the no-pull clamp never acted
    const stepCounts = [40, 80, 160, 320];
    const steps = stepCounts.map((n) => horizonS / n);
    for (const [integrator, order] of [
      ["velocity-verlet", 2],
      ["symplectic-euler", 1],
    ] as const) {
      const errors = stepCounts.map((n) => Math.abs(engineOverlapAt(integrator, contact, horizonS, n) - referenceOverlap));
      // Hairer, Lubich & Wanner 2006: Störmer–Verlet is of order 2, symplectic Euler of order 1.
      expect(Math.abs(logLogSlope(steps, errors) - order)).toBeLessThan(0.3);
    }
  });
});
