import { describe, expect, it } from "vitest";
import { createBodies, setBody, type Bodies } from "@/lib/physics/bodies";
import { advance, primeForces, type ForceField } from "@/lib/physics/integrators";
import { explicitEulerEnergyGrowthPerStep, maxStableSubstepS } from "@/lib/physics";

/** A single body on a spring to the origin, q'' = −(k/m) q: the integrators' model problem. */
class HarmonicSpring implements ForceField {
  constructor(readonly stiffnessNPerM: number) {}
  evaluate(bodies: Bodies): void {
    bodies.fx[0] = -this.stiffnessNPerM * bodies.x[0];
    bodies.fy[0] = 0;
  }
}

const massKg = 0.4;
const stiffness = 250;
const omega = Math.sqrt(stiffness / massKg);

function oscillator(q0: number, v0: number): { bodies: Bodies; field: HarmonicSpring } {
  const bodies = createBodies(1);
  setBody(bodies, 0, q0, 0, v0, 0, massKg, 0.01);
  const field = new HarmonicSpring(stiffness);
  primeForces(bodies, field);
  return { bodies, field };
}

function energy(bodies: Bodies): number {
  const p = massKg * bodies.vx[0];
  return (p * p) / (2 * massKg) + 0.5 * stiffness * bodies.x[0] ** 2;
}

describe("integrators on the harmonic oscillator", () => {
  it("symplectic Euler (kick then drift) conserves H̃ = p²/2m + kq²/2 − (h·k/2m)·q·p exactly", () => {
    // Derived for this update order (p' = p − hkq, q' = q + hp'/m); cf. Hairer, Lubich & Wanner 2006, Geometric Numerical Integration, modified energy of symplectic Euler.
    const h = 0.9 / omega;
    const { bodies, field } = oscillator(0.02, 0.3);
    const modified = () => {
      const q = bodies.x[0];
      const p = massKg * bodies.vx[0];
      return (p * p) / (2 * massKg) + 0.5 * stiffness * q * q - ((h * stiffness) / (2 * massKg)) * q * p;
    };
    const initial = modified();
    let maxDeviation = 0;
    let maxEnergyDeviation = 0;
    for (let n = 0; n < 5000; n++) {
      advance("symplectic-euler", bodies, field, h, 1);
      maxDeviation = Math.max(maxDeviation, Math.abs(modified() - initial) / initial);
      maxEnergyDeviation = Math.max(maxEnergyDeviation, Math.abs(energy(bodies) - initial) / initial);
    }
    expect(maxDeviation).toBeLessThan(1e-12); // exact invariant up to rounding
    expect(maxEnergyDeviation).toBeGreaterThan(0.1); // the true energy does oscillate at this step, so the test can tell them apart
  });

  it("velocity Verlet conserves H̃ = p²/2m + (kq²/2)(1 − ω²h²/4) exactly", () => {
    // Derived from the Verlet step matrix; cf. Hairer, Lubich & Wanner 2006, the shadow energy of Störmer–Verlet on the oscillator.
    const h = 1.5 / omega;
    const { bodies, field } = oscillator(0.01, -0.2);
    const modified = () => (massKg * bodies.vx[0]) ** 2 / (2 * massKg) + 0.5 * stiffness * bodies.x[0] ** 2 * (1 - (omega * h) ** 2 / 4);
    const initial = modified();
    let maxDeviation = 0;
    for (let n = 0; n < 5000; n++) {
      advance("velocity-verlet", bodies, field, h, 1);
      maxDeviation = Math.max(maxDeviation, Math.abs(modified() - initial) / initial);
    }
    expect(maxDeviation).toBeLessThan(1e-12);
  });

  it.each(["symplectic-euler", "velocity-verlet"] as const)("%s is stable just below ω·dt = 2 and unstable just above", (integrator) => {
    // Hairer, Lubich & Wanner 2006: the oscillator's step matrix has eigenvalues on the unit circle iff ω·dt < 2.
    const bound = maxStableSubstepS(stiffness, massKg);
    const below = oscillator(0.01, 0);
    advance(integrator, below.bodies, below.field, 0.99 * bound, 20000);
    expect(Math.abs(below.bodies.x[0])).toBeLessThan(0.2); // bounded: at most a few times the initial amplitude
    const above = oscillator(0.01, 0);
    advance(integrator, above.bodies, above.field, 1.01 * bound, 2000);
    expect(Math.abs(above.bodies.x[0])).toBeGreaterThan(1e3); // |λ| > 1: grows geometrically
  });

  it("explicit Euler multiplies the energy by exactly 1 + ω²dt² per step", () => {
    // From the step matrix of forward Euler on the oscillator: E_{n+1} = (1 + ω²h²)·E_n.
    const h = 0.05 / omega;
    const { bodies, field } = oscillator(0.01, 0.1);
    let previous = energy(bodies);
    for (let n = 0; n < 100; n++) {
      advance("explicit-euler", bodies, field, h, 1);
      const current = energy(bodies);
      expect(current / previous).toBeCloseTo(explicitEulerEnergyGrowthPerStep(omega, h), 12);
      previous = current;
    }
  });
});
