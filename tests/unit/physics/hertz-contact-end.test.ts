/**
 * The end of a Hertz contact is placed to second order in the step (verdict rules 3): the engine
 * interpolates it on the overlap beyond the force's zero (ContactField end gauge), not linearly on
 * a force that leaves like (t_end − t)^{3/2}. The observed order is fitted over a halving step sequence.
 */
import { describe, expect, it } from "vitest";
import { DEFAULT_TOLERANCES, hertzContactDurationS, hertzDimensionlessDampingForRestitution, simulate, type ContactSpec, type IntegratorName, type Scenario, type Scene } from "@/lib/physics";
import { logLogSlope, solveODE } from "./fixtures";

// Invented props: "Clinkstone" marbles of Hollowpeak Toys, given their k_H directly.
const hertzStiffness = 1e8; // N/m^{3/2}
const massKg = 0.05;
const radiusM = 0.01;
const speedMPerS = 1;
const stepCounts = [20, 40, 80, 160, 320];

function pairScene(stepS: number): Scene {
  // The gap puts the contact's start at the same fraction of a step for every step size.
  return { kind: "pair", massAKg: massKg, massBKg: massKg, radiusAM: radiusM, radiusBM: radiusM, speedAMPerS: speedMPerS, speedBMPerS: 0, offsetFraction: 0, gapM: speedMPerS * stepS * 3.37 };
}

function wallScene(stepS: number): Scene {
  return { kind: "wall", massKg, radiusM, speedMPerS, angleDeg: 0, gapM: speedMPerS * stepS * 3.37 };
}

function measuredDuration(scene: Scene, contact: ContactSpec, integrator: IntegratorName, stepS: number, referenceS: number, verdictRules: number): number {
  const run: Scenario = { scene, contact, integrator, dtS: stepS, substeps: 1, durationS: 2 * referenceS + 5 * stepS, tolerances: { ...DEFAULT_TOLERANCES }, verdictRules, seed: 1 };
  const duration = simulate(run, { stepping: "plain" }).metrics.contactDurationS;
  if (duration === null) throw new Error("the contact did not end");
  return duration;
}

function observedOrder(scene: (stepS: number) => Scene, contact: ContactSpec, integrator: IntegratorName, referenceS: number, verdictRules: number): { order: number; errors: number[] } {
  const steps = stepCounts.map((n) => referenceS / n);
  const errors = steps.map((stepS) => Math.abs(measuredDuration(scene(stepS), contact, integrator, stepS, referenceS, verdictRules) - referenceS) / referenceS);
  return { order: logLogSlope(steps, errors), errors };
}

describe("Hertz contact end to second order", () => {
  const undamped: ContactSpec = { model: "hertz", stiffness: hertzStiffness, damping: { kind: "none" } };

  it("undamped pair: the contact duration converges at order 2 with velocity Verlet (order 1 by the rules-2 force interpolation)", () => {
    // Johnson 1985, Contact Mechanics, §11.1: t_c = 2.87·(m*²/(R*E*²v))^{1/5} (closed form with the exact constant).
    const referenceS = hertzContactDurationS(hertzStiffness, massKg / 2, speedMPerS);
    const current = observedOrder(pairScene, undamped, "velocity-verlet", referenceS, 3);
    expect(current.order).toBeGreaterThan(1.8);
    expect(current.order).toBeLessThan(2.2);
    expect(current.errors[current.errors.length - 1]).toBeLessThan(1e-4); // 320 steps per contact
    // The same runs under verdict rules 2 (stored cells): linear interpolation on F ∝ δ^{3/2}, first order.
    const legacy = observedOrder(pairScene, undamped, "velocity-verlet", referenceS, 2);
    expect(legacy.order).toBeGreaterThan(0.8);
    expect(legacy.order).toBeLessThan(1.2);
  });

  it("undamped wall: order 2 against the same closed form with m* = m, k_H of the wall contact", () => {
    // Johnson 1985, §11.1 with the wall as the second body (m* = m).
    const referenceS = hertzContactDurationS(hertzStiffness, massKg, speedMPerS);
    const { order } = observedOrder(wallScene, undamped, "velocity-verlet", referenceS, 3);
    expect(order).toBeGreaterThan(1.8);
    expect(order).toBeLessThan(2.2);
  });

  it("damped (Tsuji-type, e = 0.8) pair: the end is where the force returns to zero, against an independent ODE solution", () => {
    const beta = hertzDimensionlessDampingForRestitution(0.8);
    const mStar = massKg / 2;
    const eta = beta * Math.sqrt(mStar * hertzStiffness);
    const contact: ContactSpec = { model: "hertz", stiffness: hertzStiffness, damping: { kind: "coefficient", value: eta } };
    const force = (overlap: number, rate: number) => hertzStiffness * Math.pow(Math.max(overlap, 0), 1.5) + eta * Math.pow(Math.max(overlap, 0), 0.25) * rate;
    const undampedS = hertzContactDurationS(hertzStiffness, mStar, speedMPerS);
    // Reference: mathjs solveODE (Dormand–Prince RK45, tol 1e-12) on m*·δ'' = −F(δ, δ̇), δ(0) = 0, δ̇(0) = v;
    // the end is the first sign change of F, bracketed on the solver's points and refined by a second
    // solve over the bracket at a thousandth of its length.
    // The solve starts at t0 on the series solution δ ≈ vt − (16/45)(η/m*)v^{5/4}t^{9/4} (the δ^{1/4} term is not smooth at t = 0).
    const t0 = undampedS * 1e-6;
    const start = [speedMPerS * t0 - (16 / 45) * (eta / mStar) * Math.pow(speedMPerS, 1.25) * Math.pow(t0, 2.25), speedMPerS - 0.8 * (eta / mStar) * Math.pow(speedMPerS, 1.25) * Math.pow(t0, 1.25)];
    const coarse = solveODE((_t: number, y: number[]) => [y[1], -force(y[0], y[1]) / mStar], [t0, 1.2 * undampedS], start, { tol: 1e-12, firstStep: t0, maxStep: undampedS / 400, maxIter: 1e6 });
    const crossing = coarse.y.findIndex((y, index) => index > 0 && force(y[0], y[1]) <= 0);
    expect(crossing).toBeGreaterThan(0);
    const fine = solveODE((_t: number, y: number[]) => [y[1], -force(y[0], y[1]) / mStar], [coarse.t[crossing - 1], coarse.t[crossing]], coarse.y[crossing - 1], { tol: 1e-13, maxStep: (coarse.t[crossing] - coarse.t[crossing - 1]) / 200, maxIter: 1e6 });
    const fineCrossing = fine.y.findIndex((y) => force(y[0], y[1]) <= 0);
    const f0 = force(fine.y[fineCrossing - 1][0], fine.y[fineCrossing - 1][1]);
    const f1 = force(fine.y[fineCrossing][0], fine.y[fineCrossing][1]);
    const referenceS = fine.t[fineCrossing - 1] + ((fine.t[fineCrossing] - fine.t[fineCrossing - 1]) * f0) / (f0 - f1);
    expect(referenceS).toBeLessThan(undampedS); // the damped contact ends before the overlap would
    // Not order 2 asymptotically, by either interpolation: the damping force rises like t^{1/4} as the
    // contact starts, which no fixed-step integrator follows to second order (measured: order ≈ 1.3
    // from 640 to 5120 steps per contact, for the force interpolation of rules 2 as for rules 3).
    // What the gauge must keep is the force-zero criterion: errors shrink and reach 1e-5 of the reference.
    const { errors } = observedOrder(pairScene, contact, "velocity-verlet", referenceS, 3);
    for (let i = 1; i < errors.length; i++) expect(errors[i]).toBeLessThan(errors[i - 1]);
    expect(errors[errors.length - 1]).toBeLessThan(1e-5);
  });
});
